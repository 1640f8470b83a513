import type { SessionRecord } from './checkout'
import { formatAmount } from './money'
import { DECLINED_CARD, SUCCESS_CARD } from './state'

export function escapeHtml(text: string): string {
  return text.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!)
}

const STYLE = `
  body { font: 16px/1.5 system-ui, sans-serif; background: #f4f1ea; color: #222; margin: 0; }
  .banner { background: #8a4b00; color: #fff; padding: .5rem 1rem; font-weight: 600; text-align: center; }
  main { max-width: 28rem; margin: 2rem auto; background: #fff; border: 2px dashed #8a4b00; padding: 1.5rem; }
  h1 { font-size: 1.25rem; margin: 0 0 1rem; }
  table { width: 100%; border-collapse: collapse; margin-bottom: 1rem; }
  td { padding: .25rem 0; } td.n { text-align: right; white-space: nowrap; }
  tr.total td { border-top: 1px solid #999; font-weight: 700; }
  label { display: block; font-weight: 600; margin-top: .75rem; }
  input { font: inherit; width: 100%; box-sizing: border-box; padding: .4rem; border: 1px solid #888; }
  .row { display: flex; gap: .5rem; } .row > div { flex: 1; }
  button { font: inherit; padding: .5rem 1rem; margin-top: 1rem; cursor: pointer; }
  button.pay { background: #1d5e2f; color: #fff; border: 0; width: 100%; font-weight: 700; }
  .actions { display: flex; justify-content: space-between; gap: .5rem; }
  .actions button { background: #fff; border: 1px solid #888; }
  .error { background: #fde2e1; border: 1px solid #b3261e; color: #7a1912; padding: .5rem; margin-bottom: 1rem; }
  .note { color: #555; font-size: .875rem; }
`

function page(title: string, body: string): string {
  return `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1">
<title>${escapeHtml(title)}</title><style>${STYLE}</style></head>
<body><div class="banner" role="note">Local test payment page: no real card is charged and no money moves.</div>
<main>${body}</main></body></html>`
}

/** The fake's own hosted payment page for an open session, optionally with an error from a failed try. */
export function payPage(record: SessionRecord, error?: string, cardNumber = SUCCESS_CARD): string {
  const { session, lineItems } = record
  const base = `/pay/${encodeURIComponent(session.id)}`
  if (session.status !== 'open') return closedPage(record)
  const rows = lineItems
    .map((li) => `<tr><td>${escapeHtml(li.description)} × ${li.quantity}</td><td class="n">${formatAmount(li.amount_total, li.currency)}</td></tr>`)
    .join('')
  return page(`Pay ${formatAmount(session.amount_total, session.currency)} (test)`, `
<h1>Test payment</h1>
${error ? `<div class="error" role="alert">${escapeHtml(error)}</div>` : ''}
<table aria-label="Order">${rows}
<tr class="total"><td>Total</td><td class="n">${formatAmount(session.amount_total, session.currency)}</td></tr></table>
${session.customer_email ? `<p class="note">Receipt to ${escapeHtml(session.customer_email)}</p>` : ''}
<form method="post" action="${base}">
  <label for="card">Card number</label>
  <input id="card" name="card" inputmode="numeric" autocomplete="off" value="${escapeHtml(groupDigits(cardNumber))}">
  <div class="row">
    <div><label for="exp">Expiry</label><input id="exp" name="exp" value="12 / 34"></div>
    <div><label for="cvc">CVC</label><input id="cvc" name="cvc" value="123"></div>
  </div>
  <button class="pay" type="submit">Pay ${formatAmount(session.amount_total, session.currency)}</button>
</form>
<div class="actions">
  <form method="post" action="${base}"><input type="hidden" name="card" value="${DECLINED_CARD}">
    <button type="submit">Use a declined card</button></form>
  <form method="post" action="${base}/cancel"><button type="submit">Cancel</button></form>
</div>
<p class="note">Test cards: ${groupDigits(SUCCESS_CARD)} pays; ${groupDigits(DECLINED_CARD)} is declined.</p>`)
}

function closedPage(record: SessionRecord): string {
  const { session } = record
  const text = session.status === 'complete'
    ? 'This payment is complete.'
    : 'This checkout session has expired. Go back to the shop and start again.'
  const link = session.status === 'complete'
    ? session.success_url.replaceAll('{CHECKOUT_SESSION_ID}', session.id)
    : session.cancel_url
  return page('Test payment', `<h1>Test payment</h1><p>${text}</p>${link ? `<p><a href="${escapeHtml(link)}">Back to the shop</a></p>` : ''}`)
}

export function messagePage(title: string, text: string): string {
  return page(title, `<h1>${escapeHtml(title)}</h1><p>${escapeHtml(text)}</p>`)
}

function groupDigits(card: string): string {
  return card.replace(/\s/g, '').replace(/(\d{4})(?=\d)/g, '$1 ')
}
