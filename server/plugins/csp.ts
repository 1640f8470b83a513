import { createHash } from 'node:crypto'

// Pages get a Content-Security-Policy that allows only the app's own origin. Nuxt writes a few inline
// scripts (its payload and config); each is allowed by its own hash, computed from the page as sent.
const INLINE_SCRIPT = /<script(?![^>]*\bsrc=)[^>]*>([\s\S]*?)<\/script>/gi

export default defineNitroPlugin((nitroApp) => {
  nitroApp.hooks.hook('render:response', (response) => {
    if (typeof response.body !== 'string') return
    const hashes = new Set<string>()
    for (const m of response.body.matchAll(INLINE_SCRIPT)) {
      const tag = m[0].slice(0, m[0].indexOf('>'))
      if (/type=["']application\/json["']/i.test(tag)) continue // data, not script
      hashes.add(`'sha256-${createHash('sha256').update(m[1]!).digest('base64')}'`)
    }
    response.headers ||= {}
    response.headers['content-security-policy'] = [
      "default-src 'self'",
      `script-src 'self' ${[...hashes].join(' ')}`.trim(),
      "style-src 'self' 'unsafe-inline'",
      "img-src 'self' data: blob:",
      "media-src 'self' blob:",
      "font-src 'self'",
      "connect-src 'self'",
      "frame-src 'self'",
      "object-src 'self'",
      "worker-src 'self' blob:",
      "frame-ancestors 'self'",
      "base-uri 'self'",
      "form-action 'self'",
    ].join('; ')
  })
})
