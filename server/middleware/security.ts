// Security headers on every response, and a same-origin check on state-changing API calls.
const UNSAFE = new Set(['POST', 'PUT', 'PATCH', 'DELETE'])
const ORIGIN_EXEMPT = ['/api/stripe/webhook']

export default defineEventHandler((event) => {
  setResponseHeaders(event, {
    'X-Content-Type-Options': 'nosniff',
    'Referrer-Policy': 'same-origin',
    'X-Frame-Options': 'SAMEORIGIN',
    'Permissions-Policy': 'camera=(self), microphone=(), geolocation=(), payment=()',
    'Cross-Origin-Opener-Policy': 'same-origin',
  })
  const path = event.path.split('?')[0]!
  if (path.startsWith('/api/')) {
    setResponseHeader(event, 'Content-Security-Policy', "default-src 'none'; frame-ancestors 'self'")
    setResponseHeader(event, 'Cache-Control', 'no-store')
  }
  if (UNSAFE.has(event.method) && path.startsWith('/api/') && !ORIGIN_EXEMPT.includes(path)) {
    const origin = getRequestHeader(event, 'origin')
    const site = getRequestHeader(event, 'sec-fetch-site')
    const host = getRequestHeader(event, 'x-forwarded-host') && process.env.KW_TRUST_PROXY === 'true'
      ? getRequestHeader(event, 'x-forwarded-host')
      : getRequestHeader(event, 'host')
    let crossOrigin = site === 'cross-site'
    if (origin && origin !== 'null') {
      try {
        crossOrigin ||= new URL(origin).host !== host
      }
      catch {
        crossOrigin = true
      }
    }
    else if (origin === 'null') crossOrigin = true
    if (crossOrigin) throw createError({ statusCode: 403, statusMessage: 'Forbidden', message: 'Cross-site request refused' })
  }
})
