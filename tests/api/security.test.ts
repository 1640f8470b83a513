import { describe, expect, inject, it } from 'vitest'
import { Client, DEMO } from '../support/client'

const base = inject('baseUrl')

describe('security headers', () => {
  it('pages carry a CSP that allows only the app\'s own origin, and the camera for this origin only', async () => {
    const res = await fetch(`${base}/login`)
    const csp = res.headers.get('content-security-policy')!
    expect(csp).toContain("default-src 'self'")
    expect(csp).toMatch(/script-src 'self'( 'sha256-[A-Za-z0-9+/=]+')*(;|$)/)
    expect(csp).not.toMatch(/https?:\/\//)
    expect(csp).not.toContain("'unsafe-eval'")
    expect(res.headers.get('permissions-policy')).toContain('camera=(self)')
    expect(res.headers.get('x-content-type-options')).toBe('nosniff')
  })

  it('API answers are not cached and cannot be framed elsewhere', async () => {
    const res = await fetch(`${base}/api/health`)
    expect(res.headers.get('cache-control')).toBe('no-store')
    expect(res.headers.get('content-security-policy')).toContain("frame-ancestors 'self'")
  })
})

describe('same-origin check on state-changing requests', () => {
  it('refuses a cross-site POST even with a valid session', async () => {
    const c = await new Client(base).login(DEMO.organiser)
    const res = await c.post('/api/invitations', { email: 'x@club.invalid', roles: ['packer'] }, { origin: 'http://evil.invalid' })
    expect(res.status).toBe(403)
    expect(res.body.message).toBe('Cross-site request refused')
  })

  it('refuses a request the browser marks cross-site', async () => {
    const res = await new Client(base).post('/api/auth/login', { email: DEMO.builder, password: 'buildday-demo' }, { 'sec-fetch-site': 'cross-site' })
    expect(res.status).toBe(403)
  })

  it('accepts a same-origin POST', async () => {
    const res = await new Client(base).post('/api/auth/login', { email: DEMO.builder, password: 'buildday-demo' }, { origin: base })
    expect(res.status).toBe(200)
  })
})

describe('error bodies', () => {
  it('a malformed JSON body is a 400 with no stack trace', async () => {
    const res = await fetch(`${base}/api/auth/login`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: '{"email": ' })
    const text = await res.text()
    expect(res.status).toBe(400)
    expect(text).not.toMatch(/at .*\.m?js:\d+/)
    expect(text).not.toMatch(/stack/i)
  })

  it('a wrong type in a route parameter is a 400 that names the field, never SQL', async () => {
    const c = await new Client(base).login(DEMO.organiser)
    const res = await c.put('/api/users/not-a-number/roles', { roles: ['builder'] })
    expect(res.status).toBe(400)
    expect(res.body.data.fields.id).toEqual(expect.stringMatching(/\w/))
    expect(JSON.stringify(res.body)).not.toMatch(/select|insert|sql/i)
  })
})
