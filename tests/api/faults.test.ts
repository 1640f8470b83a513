// Faults against the real server and MariaDB: an app process killed (SIGKILL) in the middle of a bag
// seal and of a payment event, a database that goes away for one app process, and payment events
// delivered twice and out of order. Each fault uses app processes of this file's own (startApp with
// the shared stack's environment), so the shared app that other test files use is never touched.
// The fake Stripe going down during checkout is covered in checkout.test.ts ("payment service trouble").
// Consistency is judged by the invariant checker (runCheck) plus direct SQL on this file's own records.
import { createServer, connect as tcpConnect, type Server, type Socket } from 'node:net'
import Stripe from 'stripe'
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import { runCheck } from '../../server/db/check'
import { labelUrl, signCode } from '../../server/utils/codes'
import { Client, DEMO } from '../support/client'
import { appDbUrl, startApp, type AppProcess } from '../support/stack'
import { makeBag, openDb, type PackDb } from './packing-data'
import { makeBuilders, makeKitDay, sessionIdOf, uid, waitUntil, type Conn } from './selling-fixtures'

const base = inject('baseUrl')
const stripeUrl = inject('stripeUrl')
const dbUrl = inject('dbUrl')
const appEnv = inject('appEnv')
const labelSecret = inject('labelSecret')
const webhookSecret = inject('webhookSecret')
// The official SDK signs the events we deliver ourselves (the same oracle webhook.test.ts uses).
const sdk = new Stripe('sk_test_oracle', { telemetry: false })

let conn: Conn
let db: PackDb
const started: AppProcess[] = []

beforeAll(async () => {
  // The app's own account and way in (the socket when KW_DB_SOCKET is set): the processlist shows a
  // connection the statements of its own account only, and blockedOn() watches the app's.
  const opened = await openDb(appDbUrl(dbUrl))
  conn = opened.conn
  db = opened.db
})
afterAll(async () => {
  await setWebhook(`${base}/api/stripe/webhook`)
  await Promise.all(started.map(a => a.stop()))
  await conn?.end()
})

async function ownApp(env: Record<string, string> = appEnv, port?: number) {
  const app = await startApp(env, port)
  started.push(app)
  return app
}

/** SIGKILL, as a crash or an OOM kill would: no shutdown hooks, no graceful close of the pool. */
async function kill(app: AppProcess) {
  const gone = new Promise(r => app.child.once('exit', r))
  app.child.kill('SIGKILL')
  await gone
}

async function setWebhook(url: string | null) {
  await fetch(`${stripeUrl}/_test/webhook`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ url }) })
}

/** Holds row locks from a transaction of the test's own, so that the app blocks at a known statement. */
async function holdLocks(query: string, params: unknown[]) {
  const { conn: c } = await openDb(dbUrl)
  await c.query('start transaction')
  await c.query(query, params)
  return async () => {
    await c.query('rollback').catch(() => {})
    await c.end()
  }
}

/** Waits until an app connection runs a statement matching `pattern` for 300 ms or more, i.e. waits for our lock (same DB user, so the processlist shows it). */
async function blockedOn(pattern: RegExp) {
  return waitUntil(`a statement like ${pattern} waiting for a lock`, async () => {
    const [rows] = await conn.query<any[]>('select id, info, time_ms from information_schema.processlist where db = database() and id <> connection_id() and info is not null')
    return rows.some(r => pattern.test(r.info) && Number(r.time_ms) >= 300) || null
  }, 20_000)
}

async function problems() {
  const { problems } = await runCheck(dbUrl)
  return problems
}

async function one<T = any>(query: string, params: unknown[] = []): Promise<T> {
  const [rows] = await conn.query<any[]>(query, params)
  return rows[0] as T
}

async function rows<T = any>(query: string, params: unknown[] = []): Promise<T[]> {
  const [r] = await conn.query<any[]>(query, params)
  return r as T[]
}

/** A paid order of a builder of our own for the kit day, with its bag and confirmed reservations (as the webhook leaves them). */
async function paidBag(dayId: number, offeringId: number) {
  const t = uid()
  const [u] = await conn.query<any>('insert into users (email, name, password_hash) values (?, ?, ?)', [`faults.${t}@club.invalid`, `Faults Builder ${t}`, 'not-a-login'])
  await conn.query('insert into user_roles (user_id, role) values (?, ?)', [u.insertId, 'builder'])
  const [o] = await conn.query<any>(`insert into orders (build_day_id, offering_id, user_id, option_ids, state, amount_minor, currency, stripe_session_id, paid_at)
    values (?, ?, ?, '[]', 'paid', 2500, 'GBP', ?, now())`, [dayId, offeringId, u.insertId, `cs_faults_${t}`])
  const bag = await makeBag(db, o.insertId)
  return { orderId: o.insertId as number, id: bag.id, code: bag.code }
}

/** Packers of our own (demo password), signed in to `url`. */
async function makePackers(url: string, n: number) {
  const t = uid()
  const { password_hash: hash } = await one('select password_hash from users where email = ?', [DEMO.packer])
  return Promise.all(Array.from({ length: n }, async (_, i) => {
    const email = `faults.packer.${t}.${i}@club.invalid`
    const [u] = await conn.query<any>('insert into users (email, name, password_hash) values (?, ?, ?)', [email, `Faults Packer ${i}`, hash])
    await conn.query('insert into user_roles (user_id, role) values (?, ?)', [u.insertId, 'packer'])
    return new Client(url).login(email)
  }))
}

describe('the app process is killed in the middle of a bag seal', () => {
  it('the seal is whole or absent, never half; a retry after the restart leaves the bag sealed exactly once', async () => {
    const day = await makeKitDay(conn, { seats: 5, lines: [{ qty: 2, stock: 6 }, { qty: 1, stock: 6 }, { qty: 3, stock: 6 }] })
    const bag = await paidBag(day.dayId, day.offeringId)
    const { code: binCode } = await one('select b.code from bins b join lots l on l.bin_id = b.id where l.id = ?', [day.lotIds[0]])
    const before = { ledger: await rows('select * from ledger where lot_id in (?)', [day.lotIds]), lots: await rows('select id, on_hand from lots where id in (?) order by id', [day.lotIds]) }

    let app = await ownApp()
    const packer = await new Client(app.url).login(DEMO.packer)
    const scan = (body: Record<string, unknown>) => packer.post('/api/pack/scan', { buildDayId: day.dayId, ...body })
    expect((await scan({ text: labelUrl(app.url, 'bag', bag.code, labelSecret) })).status).toBe(200)
    const items = await rows('select id, qty_needed from bag_items where bag_id = ? order by id', [bag.id])
    for (const item of items.slice(0, -1)) {
      const res = await scan({ text: signCode('bin', binCode, labelSecret), bagId: bag.id, itemId: item.id, qty: item.qty_needed })
      expect(res.status, JSON.stringify(res.body)).toBe(200)
      expect(res.body.sealed).toBe(false)
    }

    // The seal goes to MariaDB as one batch ending in its commit: holding the second lot stops it
    // inside the batch, after the bag's row is locked and while it locks the lots to check them, before
    // any write; the app is killed there, with the seal's transaction open.
    const release = await holdLocks('select id from lots where id = ? for update', [day.lotIds[1]])
    try {
      const last = items.at(-1)!
      const pending = scan({ text: signCode('bin', binCode, labelSecret), bagId: bag.id, itemId: last.id, qty: last.qty_needed }).catch(err => err)
      await blockedOn(/into @kw_ok from lots/)
      await kill(app)
      expect(await pending).toBeInstanceOf(Error) // the packer's request dies with the process
    }
    finally {
      await release()
    }

    // The whole seal went to MariaDB as one batch ending in its commit, so the database either ran it
    // to the end once the lot was free (the app's death does not stop a batch already sent) or dropped
    // it: never half. Wait until the database is done with it, then tell which.
    await waitUntil('the seal batch to end', async () => {
      const [left] = await conn.query<any[]>('select id from information_schema.processlist where db = database() and id <> connection_id() and info like ?', ['%@kw_%'])
      return left.length === 0 || null
    }, 20_000)
    const sealed = { picks: [{ lot_id: day.lotIds[0], qty: -2 }, { lot_id: day.lotIds[1], qty: -1 }, { lot_id: day.lotIds[2], qty: -3 }], lots: day.lotIds.map((id, i) => ({ id, on_hand: 6 - [2, 1, 3][i]! })) }
    const picksNow = () => rows('select lot_id, cast(qty as signed) as qty from ledger where bag_id = ? and kind = \'pick\' order by lot_id', [bag.id])
    const lotsNow = () => rows('select id, on_hand from lots where id in (?) order by id', [day.lotIds])
    const reservationsNow = () => rows('select state, count(*) as n from reservations where order_id = ? group by state', [bag.orderId])
    const sealEvents = () => rows('select kind from bag_events where bag_id = ? and kind = \'seal\'', [bag.id])
    const afterKill = await one('select state from bags where id = ?', [bag.id])
    expect((await one('select cast(sum(qty_packed) as signed) as packed, cast(sum(qty_needed) as signed) as needed from bag_items where bag_id = ?', [bag.id]))).toEqual({ packed: 6, needed: 6 })
    if (afterKill.state === 'sealed') {
      expect(await picksNow()).toEqual(sealed.picks)
      expect(await lotsNow()).toEqual(sealed.lots)
      expect(await reservationsNow()).toEqual([{ state: 'consumed', n: 3 }])
      expect(await sealEvents()).toHaveLength(1)
    }
    else {
      expect(afterKill.state).toBe('packing')
      expect(await rows('select * from ledger where lot_id in (?)', [day.lotIds])).toEqual(before.ledger)
      expect(await lotsNow()).toEqual(before.lots)
      expect(await reservationsNow()).toEqual([{ state: 'confirmed', n: 3 }])
      expect(await sealEvents()).toEqual([])
    }
    expect(await problems()).toEqual([])

    // The station's retry after the restart (same port, same secrets: the packer's cookie still works):
    // it seals the bag, or says it is sealed already; either way the bag ends sealed exactly once.
    app = await ownApp(appEnv, app.port)
    const retried = await packer.post(`/api/bags/${bag.code}/seal`)
    if (afterKill.state === 'sealed') {
      expect(retried.status, JSON.stringify(retried.body)).toBe(409)
      expect(retried.body.data.reason).toBe('sealed')
    }
    else {
      expect(retried.status, JSON.stringify(retried.body)).toBe(200)
      expect(retried.body.bag.state).toBe('sealed')
    }
    expect(await picksNow()).toEqual(sealed.picks)
    expect(await lotsNow()).toEqual(sealed.lots)
    expect(await reservationsNow()).toEqual([{ state: 'consumed', n: 3 }])
    expect(await sealEvents()).toHaveLength(1)
    // A further retry is refused and changes nothing.
    expect((await packer.post(`/api/bags/${bag.code}/seal`)).status).toBe(409)
    expect(await rows('select * from ledger where bag_id = ?', [bag.id])).toHaveLength(3)
    expect(await problems()).toEqual([])
  }, 120_000)
})

describe('the app process is killed in the middle of a payment event', () => {
  it('the event is not recorded and the order stays pending; the redelivered event pays it exactly once', async () => {
    const day = await makeKitDay(conn, { seats: 3, lines: [{ qty: 2, stock: 4 }, { qty: 1, stock: 2 }] })
    const [buyer] = await makeBuilders(conn, base, 1)
    const checkout = await buyer!.client.post('/api/checkout', { buildDayId: day.dayId, offeringId: day.offeringId })
    expect(checkout.status).toBe(200)
    const orderId = checkout.body.orderId as number
    const sessionId = sessionIdOf(checkout.body.url)

    let app = await ownApp()
    await setWebhook(`${app.url}/api/stripe/webhook`)
    let eventId = ''
    // The event's transaction records the event id, then waits for the build day's row lock.
    const release = await holdLocks('select id from build_days where id = ? for update', [day.dayId])
    try {
      const paid = await fetch(`${stripeUrl}/_test/sessions/${sessionId}/pay`, { method: 'POST' })
      expect(paid.ok).toBe(true)
      await blockedOn(new RegExp(`^select .* from \`build_days\` where \`build_days\`.\`id\` = ${day.dayId} for update`))
      await kill(app)
      const event = await waitUntil('the fake to give up delivering', async () => {
        const list = await (await fetch(`${stripeUrl}/_test/events?type=checkout.session.completed`)).json()
        const e = list.data.find((x: any) => x.object_id === sessionId)
        return e?.delivery === 'failed' ? e : null
      })
      eventId = event.id
    }
    finally {
      await release()
    }

    const order = await one('select state, seat, paid_at from orders where id = ?', [orderId])
    expect(order).toMatchObject({ state: 'pending', seat: null, paid_at: null })
    expect(await rows('select * from stripe_events where id = ?', [eventId])).toEqual([])
    expect(await rows('select state, cast(sum(qty) as signed) as qty from reservations where order_id = ? group by state', [orderId])).toEqual([{ state: 'held', qty: 3 }])
    expect(await rows('select id from bags where order_id = ?', [orderId])).toEqual([])
    expect(await problems()).toEqual([])

    // Restart, then the payment service's redelivery (a manual resend here) completes the order.
    app = await ownApp(appEnv, app.port)
    await fetch(`${stripeUrl}/_test/events/${eventId}/resend`, { method: 'POST' })
    const done = await waitUntil(`order ${orderId} paid`, async () => {
      const o = await one('select state, seat from orders where id = ?', [orderId])
      return o.state === 'paid' ? o : null
    })
    expect(done.seat).toBe(1)
    expect(await rows('select state, cast(sum(qty) as signed) as qty from reservations where order_id = ? group by state', [orderId])).toEqual([{ state: 'confirmed', qty: 3 }])
    expect(await rows('select id from bags where order_id = ?', [orderId])).toHaveLength(1)
    const [recorded] = await rows('select outcome from stripe_events where id = ?', [eventId])
    expect(recorded!.outcome).toMatch(/^paid, seat 1/)
    expect(await problems()).toEqual([])
  }, 120_000)
})

/** A loopback TCP proxy in front of MariaDB that can be cut (every connection dropped, new ones refused) and restored. */
class CuttableProxy {
  private server?: Server
  private readonly open = new Set<Socket>()
  private cut = false
  port = 0
  constructor(private readonly target: { host: string, port: number }) {}

  async start() {
    this.server = createServer((client) => {
      if (this.cut) return client.destroy()
      const upstream = tcpConnect(this.target.port, this.target.host)
      for (const s of [client, upstream]) {
        this.open.add(s)
        s.on('close', () => this.open.delete(s))
        s.on('error', () => { client.destroy(); upstream.destroy() })
      }
      client.pipe(upstream)
      upstream.pipe(client)
    })
    await new Promise<void>(ok => this.server!.listen(0, '127.0.0.1', ok))
    this.port = (this.server.address() as { port: number }).port
  }

  cutOff() {
    this.cut = true
    for (const s of this.open) s.destroy()
  }

  restore() { this.cut = false }

  async close() {
    this.cutOff()
    await new Promise(ok => this.server?.close(ok))
  }
}

/** A 5xx answer a person can read: JSON with a plain message and nothing of the server's insides. */
function expectCleanFailure(res: { status: number, body: any, headers: Headers }) {
  expect(res.status).toBeGreaterThanOrEqual(500)
  expect(res.status).toBeLessThan(600)
  expect(res.headers.get('content-type')).toMatch(/application\/json/)
  expect(typeof res.body.message).toBe('string')
  expect(res.body.message.length).toBeGreaterThan(0)
  const text = JSON.stringify(res.body)
  expect(text).not.toMatch(/\bat .+\.m?js:\d+|stack|ECONN|PROTOCOL_|mysql|select |insert |update |kitwright_test_/i)
}

describe('the database goes away for one app process', () => {
  let proxy: CuttableProxy
  let app: AppProcess
  beforeAll(async () => {
    const target = new URL(dbUrl)
    proxy = new CuttableProxy({ host: target.hostname, port: Number(target.port || 3306) })
    await proxy.start()
    const viaProxy = new URL(dbUrl)
    viaProxy.host = `127.0.0.1:${proxy.port}`
    app = await ownApp({ ...appEnv, NUXT_DATABASE_URL: viaProxy.href })
  })
  afterAll(async () => { await proxy?.close() })

  it('requests during the cut fail cleanly (health 503), nothing is half written, and all succeed again after', async () => {
    const day = await makeKitDay(conn, { seats: 5, lines: [{ qty: 1, stock: 3 }] })
    const bag = await paidBag(day.dayId, day.offeringId)
    const packer = await new Client(app.url).login(DEMO.packer)
    const builder = await new Client(app.url).login(DEMO.builder)
    const anon = new Client(app.url)
    const claim = () => packer.post('/api/pack/scan', { text: labelUrl(app.url, 'bag', bag.code, labelSecret), buildDayId: day.dayId })
    expect((await anon.get('/api/health')).status).toBe(200)
    expect((await builder.get('/api/my/orders')).status).toBe(200)

    proxy.cutOff()
    const health = await anon.get('/api/health')
    expect(health.status).toBe(503)
    expect(health.body).toMatchObject({ ok: false, message: expect.stringMatching(/database/i) })
    for (const res of [await builder.get('/api/my/orders'), await packer.get('/api/pack/progress'), await claim(), await anon.post('/api/auth/login', { email: DEMO.builder2, password: 'buildday-demo' })]) {
      expectCleanFailure(res)
      // Said plainly, as "try again shortly" rather than a bare server error.
      expect(res.status, JSON.stringify(res.body)).toBe(503)
      expect(res.body.message).toMatch(/cannot reach its database.*try again/i)
      expect(res.body.data).toEqual({ reason: 'database-unavailable' })
      expect(res.headers.get('retry-after')).toBe('5')
    }
    // The refused claim wrote nothing (read through the test's own connection, which is not cut).
    expect(await one('select state, claimed_by from bags where id = ?', [bag.id])).toEqual({ state: 'open', claimed_by: null })
    expect(await rows('select id from bag_events where bag_id = ?', [bag.id])).toEqual([])

    proxy.restore()
    await waitUntil('health to come back', async () => (await anon.get('/api/health')).status === 200, 15_000)
    const orders = await builder.get('/api/my/orders')
    expect(orders.status).toBe(200)
    const claimed = await claim()
    expect(claimed.status, JSON.stringify(claimed.body)).toBe(200)
    expect(claimed.body.bag.bag.claim.name).toBe('Pip Achterberg')
    expect((await anon.post('/api/auth/login', { email: DEMO.builder2, password: 'buildday-demo' })).status).toBe(200)
    expect(await problems()).toEqual([])
  })

  it('a cut while requests are in flight: each fails cleanly or completes, never half, and the next ones succeed', async () => {
    const day = await makeKitDay(conn, { seats: 6, lines: [{ qty: 1, stock: 6 }] })
    const bags = await Promise.all(Array.from({ length: 6 }, () => paidBag(day.dayId, day.offeringId)))
    const packers = await makePackers(app.url, bags.length)
    const claims = bags.map((b, i) => packers[i]!.post('/api/pack/scan', { text: labelUrl(app.url, 'bag', b.code, labelSecret), buildDayId: day.dayId }))
    await new Promise(r => setTimeout(r, 5))
    proxy.cutOff()
    const results = await Promise.all(claims)
    proxy.restore()
    for (const res of results) {
      if (res.status >= 500) expectCleanFailure(res)
      else expect(res.status, JSON.stringify(res.body)).toBe(200)
    }
    // Every bag is either untouched or claimed with its claim event: a claim is one transaction.
    for (const [i, b] of bags.entries()) {
      const row = await one('select state, claimed_by from bags where id = ?', [b.id])
      const events = await rows('select kind from bag_events where bag_id = ? and kind = \'claim\'', [b.id])
      const whole = (events.length === 1 && row.state === 'packing' && row.claimed_by !== null) || (events.length === 0 && row.state === 'open' && row.claimed_by === null)
      expect(whole, `bag ${b.code}: ${JSON.stringify({ row, events, status: results[i]!.status })}`).toBe(true)
    }
    await waitUntil('health to come back', async () => (await new Client(app.url).get('/api/health')).status === 200, 15_000)
    const again = await packers[0]!.post('/api/pack/scan', { text: labelUrl(app.url, 'bag', bags[0]!.code, labelSecret), buildDayId: day.dayId })
    expect(again.status, JSON.stringify(again.body)).toBe(200)
    expect(await problems()).toEqual([])
  })
})

describe('every payment event delivered twice and out of order', () => {
  let seq = 0
  function eventFor(type: string, session: Record<string, unknown>) {
    return { id: `evt_faults_${Date.now()}_${++seq}`, object: 'event', api_version: '2025-01-27', created: Math.floor(Date.now() / 1000), data: { object: session }, livemode: false, pending_webhooks: 1, request: { id: null, idempotency_key: null }, type }
  }
  async function deliver(event: unknown) {
    const payload = JSON.stringify(event)
    const signature = sdk.webhooks.generateTestHeaderString({ payload, secret: webhookSecret })
    const res = await fetch(`${base}/api/stripe/webhook`, { method: 'POST', headers: { 'content-type': 'application/json', 'stripe-signature': signature }, body: payload })
    return { status: res.status, body: await res.json() }
  }
  async function session(id: string) {
    const list = await (await fetch(`${stripeUrl}/_test/sessions`)).json()
    return list.data.find((s: any) => s.id === id)
  }
  async function fakeEvent(type: string, sessionId: string) {
    const list = await (await fetch(`${stripeUrl}/_test/events?type=${type}`)).json()
    return list.data.find((e: any) => e.object_id === sessionId)!.event
  }
  /** A deterministic shuffle (mulberry32), so a failure can be replayed. */
  function shuffle<T>(list: T[], seed: number) {
    let a = seed
    const rnd = () => { a = (a + 0x6D2B79F5) | 0; let t = Math.imul(a ^ (a >>> 15), 1 | a); t = (t + Math.imul(t ^ (t >>> 7), 61 | t)) ^ t; return ((t ^ (t >>> 14)) >>> 0) / 4294967296 }
    const out = [...list]
    for (let i = out.length - 1; i > 0; i--) {
      const j = Math.floor(rnd() * (i + 1));
      [out[i], out[j]] = [out[j]!, out[i]!]
    }
    return out
  }

  it('paid, expired, and paid-with-a-stray-expiry orders end in one consistent state whatever the order of arrival', async () => {
    const day = await makeKitDay(conn, { seats: 12, lines: [{ qty: 2, stock: 40 }, { qty: 1, stock: 20 }] })
    const buyers = await makeBuilders(conn, base, 9)
    await setWebhook(null) // the fake records the events; this test delivers them itself
    const orders: { orderId: number, sessionId: string, kind: 'paid' | 'expired' | 'both' }[] = []
    const events: unknown[] = []
    try {
      for (const [i, b] of buyers.entries()) {
        const res = await b.client.post('/api/checkout', { buildDayId: day.dayId, offeringId: day.offeringId })
        expect(res.status).toBe(200)
        const sessionId = sessionIdOf(res.body.url)
        const kind = (['paid', 'expired', 'both'] as const)[i % 3]!
        orders.push({ orderId: res.body.orderId, sessionId, kind })
        if (kind === 'expired') {
          await fetch(`${stripeUrl}/_test/sessions/${sessionId}/expire`, { method: 'POST' })
          events.push(await fakeEvent('checkout.session.expired', sessionId))
          continue
        }
        await fetch(`${stripeUrl}/_test/sessions/${sessionId}/pay`, { method: 'POST' })
        events.push(await fakeEvent('checkout.session.completed', sessionId))
        // A stray expiry for a session that was paid (a delayed or misrouted event).
        if (kind === 'both') events.push(eventFor('checkout.session.expired', { ...await session(sessionId), status: 'expired', payment_status: 'unpaid' }))
      }
    }
    finally {
      await setWebhook(`${base}/api/stripe/webhook`)
    }
    // Every event twice; the whole lot shuffled, then delivered three at a time.
    const deliveries = shuffle([...events, ...events], 20261201)
    const outcomes: { status: number, body: any }[] = []
    for (let i = 0; i < deliveries.length; i += 3) outcomes.push(...await Promise.all(deliveries.slice(i, i + 3).map(deliver)))
    expect(outcomes.map(o => o.status)).toEqual(deliveries.map(() => 200))
    expect(outcomes.filter(o => /duplicate/.test(o.body.outcome))).toHaveLength(events.length)

    for (const o of orders) {
      const row = await one('select state, seat from orders where id = ?', [o.orderId])
      const res = await rows('select state, cast(sum(qty) as signed) as qty from reservations where order_id = ? and state <> \'released\' group by state', [o.orderId])
      const bags = await rows('select id from bags where order_id = ?', [o.orderId])
      if (o.kind === 'expired') {
        expect(row, `order ${o.orderId}`).toMatchObject({ state: 'expired', seat: null })
        expect(res).toEqual([])
        expect(bags).toEqual([])
      }
      else {
        expect(row.state, `order ${o.orderId} (${o.kind})`).toBe('paid')
        expect(res).toEqual([{ state: 'confirmed', qty: 3 }])
        expect(bags).toHaveLength(1)
      }
    }
    const seats = (await rows('select seat from orders where build_day_id = ? and state = \'paid\' order by seat', [day.dayId])).map(r => r.seat)
    expect(seats).toEqual([...new Set(seats)])
    expect(seats.every(s => s >= 1 && s <= 12)).toBe(true)
    const ids = events.map(e => (e as { id: string }).id)
    expect(await rows('select id from stripe_events where id in (?)', [ids])).toHaveLength(ids.length)
    // Nothing refunded: stock and seats were there for every payment.
    expect(await rows('select id from orders where build_day_id = ? and state = \'refunded\'', [day.dayId])).toEqual([])
    expect(await problems()).toEqual([])
  })
})
