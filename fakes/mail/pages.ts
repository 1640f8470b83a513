import type { MailMessage } from './store'

export function escapeHtml(text: string): string {
  return text.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!)
}

const STYLE = `
  body { font: 15px/1.45 system-ui, sans-serif; margin: 0; color: #1b1b1b; background: #f6f7f9; }
  header { background: #23415e; color: #fff; padding: .6rem 1rem; display: flex; gap: 1rem; align-items: center; }
  header h1 { font-size: 1.1rem; margin: 0; flex: 1; } header a { color: #fff; }
  main { max-width: 60rem; margin: 1rem auto; padding: 0 1rem; }
  table { width: 100%; border-collapse: collapse; background: #fff; }
  th, td { text-align: left; padding: .4rem .6rem; border-bottom: 1px solid #dde1e6; vertical-align: top; }
  th { background: #eef1f4; } td.time { white-space: nowrap; color: #555; }
  .empty { padding: 2rem; text-align: center; color: #555; background: #fff; }
  dl { display: grid; grid-template-columns: max-content 1fr; gap: .2rem 1rem; background: #fff; padding: .8rem; margin: 0 0 1rem; }
  dt { font-weight: 600; } dd { margin: 0; }
  pre { white-space: pre-wrap; background: #fff; padding: .8rem; border: 1px solid #dde1e6; }
  iframe { width: 100%; height: 32rem; border: 1px solid #dde1e6; background: #fff; }
  button { font: inherit; } .att { color: #555; font-size: .85em; }
  form.inline { display: inline; }
`

function page(title: string, body: string): string {
  return `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1">
<title>${escapeHtml(title)}</title><style>${STYLE}</style></head>
<body><header><h1>Local test mailbox</h1><a href="/">Inbox</a>
<form class="inline" method="post" action="/clear"><button type="submit">Delete all</button></form></header>
<main>${body}</main></body></html>`
}

/** The inbox: newest first, one row per message. */
export function inboxPage(messages: MailMessage[], to: string | null): string {
  if (messages.length === 0) {
    return page('Inbox', `<p class="empty">No messages${to ? ` for ${escapeHtml(to)}` : ''} yet. Mail sent to the SMTP port shows up here.</p>`)
  }
  const rows = messages
    .map((m) => `<tr><td><a href="/messages/${encodeURIComponent(m.id)}">${escapeHtml(m.subject || '(no subject)')}</a>${
      m.attachments.length ? ` <span class="att">(${m.attachments.length} attachment${m.attachments.length > 1 ? 's' : ''})</span>` : ''}</td>
<td>${escapeHtml(m.to.join(', ') || m.envelopeTo.join(', '))}</td><td>${escapeHtml(m.from)}</td>
<td class="time"><time datetime="${m.date}">${escapeHtml(m.date.replace('T', ' ').slice(0, 19))}</time></td></tr>`)
    .join('\n')
  return page('Inbox', `<table><thead><tr><th>Subject</th><th>To</th><th>From</th><th>Received (UTC)</th></tr></thead>
<tbody>${rows}</tbody></table>`)
}

/** One message; its HTML body sits in a sandboxed iframe (no scripts, no same-origin access). */
export function messagePage(m: MailMessage): string {
  const attachments = m.attachments
    .map((a, i) => `<li><a href="/api/messages/${encodeURIComponent(m.id)}/attachments/${i}">${escapeHtml(a.filename)}</a> (${escapeHtml(a.contentType)}, ${a.size} bytes)</li>`)
    .join('')
  return page(m.subject || '(no subject)', `
<dl>
  <dt>Subject</dt><dd>${escapeHtml(m.subject || '(no subject)')}</dd>
  <dt>From</dt><dd>${escapeHtml(m.fromName ? `${m.fromName} <${m.from}>` : m.from)}</dd>
  <dt>To</dt><dd>${escapeHtml(m.to.join(', '))}</dd>
  ${m.cc.length ? `<dt>Cc</dt><dd>${escapeHtml(m.cc.join(', '))}</dd>` : ''}
  <dt>Delivered to</dt><dd>${escapeHtml(m.envelopeTo.join(', '))}</dd>
  <dt>Received</dt><dd>${escapeHtml(m.date)}</dd>
</dl>
${attachments ? `<h2>Attachments</h2><ul>${attachments}</ul>` : ''}
${m.html !== null ? `<h2>HTML</h2><iframe title="HTML body" sandbox srcdoc="${escapeHtml(m.html)}"></iframe>` : ''}
<h2>Text</h2><pre>${escapeHtml(m.text || '(no text part)')}</pre>`)
}

export function notFoundPage(): string {
  return page('Not found', '<p class="empty">No such message. It may have been deleted.</p>')
}
