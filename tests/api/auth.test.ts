import { describe, expect, inject, it } from 'vitest'
import { Client, DEMO, latestMail } from '../support/client'

const base = inject('baseUrl')
const mailUrl = inject('mailUrl')

describe('sign-in', () => {
  it('refuses a wrong password with 401 and a plain message', async () => {
    const res = await new Client(base).post('/api/auth/login', { email: DEMO.builder2, password: 'wrong-password' })
    expect(res.status).toBe(401)
    expect(res.body.message).toBe('Wrong e-mail or password')
  })

  it('says which field is wrong (400 with fields)', async () => {
    const res = await new Client(base).post('/api/auth/login', { email: 'not-an-address', password: 5 })
    expect(res.status).toBe(400)
    expect(Object.keys(res.body.data.fields).sort()).toEqual(['email', 'password'])
  })

  it('slows down repeated failures for one address with 429', async () => {
    const c = new Client(base)
    const email = 'hamish.pryce@club.invalid'
    const statuses: number[] = []
    for (let i = 0; i < 7; i++) statuses.push((await c.post('/api/auth/login', { email, password: `guess-${i}` })).status)
    expect(statuses.slice(0, 5)).toEqual([401, 401, 401, 401, 401])
    expect(statuses.slice(5)).toEqual([429, 429])
    // Even the right password waits now.
    expect((await c.post('/api/auth/login', { email, password: 'buildday-demo' })).status).toBe(429)
  })

  it('sets an HttpOnly, SameSite=Lax session cookie', async () => {
    const res = await new Client(base).post('/api/auth/login', { email: DEMO.builder, password: 'buildday-demo' })
    const cookie = res.headers.getSetCookie().find(c => c.startsWith('kw-session='))!
    expect(cookie).toMatch(/HttpOnly/i)
    expect(cookie).toMatch(/SameSite=Lax/i)
  })

  it('registers a builder and refuses a second account for the same address', async () => {
    const email = `reg.${Date.now()}@club.invalid`
    const c = new Client(base)
    const res = await c.post('/api/auth/register', { name: 'Reg Tester', email, password: 'long-enough-pw' })
    expect(res.status).toBe(201)
    expect(res.body.user.roles).toEqual(['builder'])
    const again = await new Client(base).post('/api/auth/register', { name: 'Reg Tester', email, password: 'long-enough-pw' })
    expect(again.status).toBe(409)
  })

  it('answers an unknown API path with a JSON 404', async () => {
    const res = await new Client(base).get('/api/definitely/not/here')
    expect(res.status).toBe(404)
    expect(res.body.statusCode).toBe(404)
  })
})

describe('invitations and resets', () => {
  it('an invitation link works once and gives the invited roles', async () => {
    const org = await new Client(base).login(DEMO.organiser)
    const email = `inv.${Date.now()}@club.invalid`
    expect((await org.post('/api/invitations', { email, roles: ['packer'] })).status).toBe(201)
    const mail = await latestMail(mailUrl, email)
    const token = mail.text.match(/\/invite\/(\S+)/)![1]!
    const peek = await new Client(base).get(`/api/invitations/${token}`)
    expect(peek.body).toMatchObject({ email, roles: ['packer'], hasAccount: false })
    const c = new Client(base)
    const ok = await c.post(`/api/invitations/${token}/accept`, { name: 'Ivy Invited', password: 'long-enough-pw' })
    expect(ok.status).toBe(200)
    expect(ok.body.user.roles.sort()).toEqual(['builder', 'packer'])
    const reused = await new Client(base).post(`/api/invitations/${token}/accept`, { name: 'Ivy Again', password: 'long-enough-pw' })
    expect(reused.status).toBe(400)
    expect(reused.body.message).toMatch(/already been used/)
  })

  it('a reset request answers the same whether or not the address exists', async () => {
    const a = await new Client(base).post('/api/auth/reset-request', { email: 'nobody.here@club.invalid' })
    const b = await new Client(base).post('/api/auth/reset-request', { email: 'nadia.sorrell@club.invalid' })
    expect(a.status).toBe(200)
    expect(b.status).toBe(200)
    expect(a.body).toEqual(b.body)
  })

  it('a reset token changes the password once; a forged token is refused', async () => {
    const email = 'kwame.ashdown@club.invalid'
    await new Client(base).post('/api/auth/reset-request', { email })
    const mail = await latestMail(mailUrl, email)
    const token = mail.text.match(/\/reset\/(\S+)/)![1]!
    expect((await new Client(base).post('/api/auth/reset', { token, password: 'brand-new-password' })).status).toBe(200)
    expect((await new Client(base).post('/api/auth/reset', { token, password: 'another-new-password' })).status).toBe(400)
    expect((await new Client(base).post('/api/auth/reset', { token: 'x'.repeat(32), password: 'another-new-password' })).status).toBe(400)
    await new Client(base).login(email, 'brand-new-password')
  })
})
