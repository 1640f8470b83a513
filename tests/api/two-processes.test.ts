import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import { Client, DEMO } from '../support/client'
import { startApp, type AppProcess } from '../support/stack'

// The app keeps no state in its process: a second process on another port, same database and
// secrets, serves the same people and data (what a load balancer in front of several needs).
describe('two app processes on one database', () => {
  const base = inject('baseUrl')
  let second: AppProcess
  beforeAll(async () => {
    second = await startApp(inject('appEnv'))
  })
  afterAll(async () => {
    await second.stop()
  })

  it('a session made on one process works on the other', async () => {
    const a = await new Client(base).login(DEMO.organiser)
    const b = new Client(second.url)
    b.cookie = a.cookie
    const res = await b.get('/api/users')
    expect(res.status).toBe(200)
    expect(second.port).not.toBe(new URL(base).port)
  })

  it('a write through one process is read through the other', async () => {
    const a = await new Client(base).login(DEMO.organiser)
    const b = await new Client(second.url).login(DEMO.organiser)
    const email = `two.proc.${Date.now()}@club.invalid`
    const reg = await new Client(second.url).post('/api/auth/register', { name: 'Two Proc', email, password: 'long-enough-pw' })
    expect(reg.status).toBe(201)
    const list = await a.get('/api/users')
    expect(list.body.map((u: { email: string }) => u.email)).toContain(email)
    expect((await b.get('/api/users')).body.length).toBe(list.body.length)
  })

  it('sign-in throttling is shared: failures on one process count on the other', async () => {
    const email = 'lottie.fairbairn@club.invalid'
    for (let i = 0; i < 3; i++) expect((await new Client(base).post('/api/auth/login', { email, password: `x${i}` })).status).toBe(401)
    for (let i = 0; i < 2; i++) expect((await new Client(second.url).post('/api/auth/login', { email, password: `y${i}` })).status).toBe(401)
    expect((await new Client(base).post('/api/auth/login', { email, password: 'buildday-demo' })).status).toBe(429)
  })
})
