// Load bench for a build day's peak, with autocannon on loopback against a stack of its own (fresh
// database, fakes, built server): 20 packers scanning their own bags, 60 builders browsing their
// orders and bag and filing missing-part reports, and checkouts opening, all at the same time.
// Three phases, each bounded in time: "solo" (one request at a time per route: service time),
// "peak" at people's pace (every packer and builder one request a second, starts spread over the
// second) and "stress" with no pause between requests (capacity).
// The peak and stress phases open with a warm-up (KW_LOAD_WARMUP, 3 s) and close with a cool-down
// (2 s) that are reported on their own line and not in the percentiles: in them this process starts,
// and then stops, 82 autocannon clients, whose set-up and closing sums hold its event loop for up to
// a few hundred milliseconds and so delay the replies it is timing. Their errors still count against
// the targets.
// Then the invariant checker runs on the database. Targets: p95 under 50 ms for reads and scans in
// the peak phase, no errors, invariants hold.
// Run: npx tsx bench/load.ts   (KW_DB_ADMIN_URL and KW_BUILD_DIR as for the tests;
//      KW_LOAD_SECONDS measured per phase, default 25; KW_LOAD_WARMUP seconds before measuring, default 3;
//      KW_LOAD_PHASES=solo,peak,stress;
//      KW_LOAD_PROFILE=1 profiles the app's CPU during the peak phase through its inspector and prints where the time goes)
import { cpus, loadavg } from 'node:os'
import { monitorEventLoopDelay } from 'node:perf_hooks'
import { and, eq } from 'drizzle-orm'
// @ts-expect-error autocannon ships no types
import autocannon from 'autocannon'
import WebSocket from 'ws'
import * as schema from '../server/db/schema'
import { runCheck } from '../server/db/check'
import { labelUrl, signCode } from '../server/utils/codes'
import { makeBag, makeBuildDay, makePaidBag, openDb, topUpStock, type PackDb } from '../tests/api/packing-data'
import { cpuMeter, yieldToServer, type Cpu } from './cpu'
import { Client, DEMO } from '../tests/support/client'
import { startStack } from '../tests/support/stack'

const SECONDS = Number(process.env.KW_LOAD_SECONDS || 25)
const WARMUP = Number(process.env.KW_LOAD_WARMUP ?? 3)
const COOLDOWN = 2
const PHASES = (process.env.KW_LOAD_PHASES || 'solo,peak,stress').split(',')
const PHASE_TITLES: Record<string, string> = {
  solo: 'solo (one request at a time per route: service time without queueing)',
  peak: 'peak (each packer and builder one request a second, 82 people at once)',
  stress: 'stress (the same people with no pause between requests)',
}
const SOLO_REQUESTS = 120
const PACKERS = 20
const BUILDERS = 60
const PACKER_BAGS = Number(process.env.KW_LOAD_BAGS || 400) // enough for three phases at today's speed (stress packs ~200)
const CHECKOUT_DAYS = 4
const REPORT_EVERY = 20 // one request in 20 from a builder files a report
const KITS = [{ slug: 'wren-40', option: '40 m (7.030 MHz)' }, { slug: 'linnet-20' }, { slug: 'tern-atu' }, { slug: 'wren-40', option: '80 m (3.560 MHz)' }]
const TARGET_MS = 50
const ROUTES = {
  scan: 'POST /api/pack/scan',
  orders: 'GET /api/my/orders',
  bag: 'GET /api/my/bags/:id',
  report: 'POST /api/my/reports',
  checkout: 'POST /api/checkout',
} as const
type Route = keyof typeof ROUTES
const TARGETED: Route[] = ['scan', 'orders', 'bag']

interface RouteStats { times: number[], statuses: Map<number, number>, errors: Map<string, number>, socketErrors: number }
type Stats = Record<Route, RouteStats>
const newStats = (): Stats => Object.fromEntries(Object.keys(ROUTES).map(r => [r, { times: [], statuses: new Map(), errors: new Map(), socketErrors: 0 }])) as Stats

// ---------- the bench's own records ----------

/** A build day on sale now, with room for every bench checkout. */
function salesDay(db: PackDb, name: string) {
  const now = Date.now()
  return makeBuildDay(db, name, { date: '2027-05-15', venue: 'Bench hall', seats: 100_000, salesOpenAt: new Date(now - 86_400_000), salesCloseAt: new Date(now + 30 * 86_400_000) })
}

async function makeUser(db: PackDb, email: string, name: string, role: 'packer' | 'builder', hash: string) {
  const [u] = await db.insert(schema.users).values({ email, name, passwordHash: hash, member: true }).$returningId()
  await db.insert(schema.userRoles).values({ userId: u!.id, role })
  return u!.id
}

async function inBatches<T, R>(items: T[], width: number, fn: (item: T, i: number) => Promise<R>) {
  const out: R[] = new Array(items.length)
  for (let i = 0; i < items.length; i += width) {
    const part = await Promise.all(items.slice(i, i + width).map((it, j) => fn(it, i + j)))
    part.forEach((r, j) => { out[i + j] = r })
  }
  return out
}

interface Builder { cookie: string, bagId: number, lineId: number, reportBody: string }

/** Builders with a paid Tern order at the day and a sealed bag (packed through the API by the packers). */
async function makeBuilders(db: PackDb, base: string, dayId: number, hash: string, packers: Client[], secret: string) {
  const [offering] = await db.select({ id: schema.offerings.id }).from(schema.offerings)
    .innerJoin(schema.revisions, eq(schema.revisions.id, schema.offerings.revisionId)).innerJoin(schema.kits, eq(schema.kits.id, schema.revisions.kitId))
    .where(and(eq(schema.offerings.buildDayId, dayId), eq(schema.kits.slug, 'tern-atu')))
  const rows: { userId: number, bagId: number, code: string, email: string }[] = []
  for (let i = 0; i < BUILDERS; i++) {
    const email = `load.builder${i + 1}@club.invalid`
    const userId = await makeUser(db, email, `Load Builder ${i + 1}`, 'builder', hash)
    const [order] = await db.insert(schema.orders).values({
      buildDayId: dayId, offeringId: offering!.id, userId, optionIds: [], state: 'paid', amountMinor: 2000, currency: 'GBP', seat: i + 1, stripeSessionId: `cs_load_${i}`, paidAt: new Date(),
    }).$returningId()
    const bag = await makeBag(db, order!.id)
    rows.push({ userId, bagId: bag.id, code: bag.code, email })
  }
  await inBatches(rows, packers.length, (r, i) => packWhole(packers[i % packers.length]!, base, secret, dayId, r))
  const clients = await inBatches(rows, 8, r => new Client(base).login(r.email))
  const builders: Builder[] = []
  for (const [i, r] of rows.entries()) {
    const [item] = await db.select({ lineId: schema.bagItems.lineId }).from(schema.bagItems).where(eq(schema.bagItems.bagId, r.bagId)).limit(1)
    builders.push({ cookie: clients[i]!.cookie, bagId: r.bagId, lineId: item!.lineId, reportBody: reportForm({ bagId: r.bagId, lineIds: item!.lineId, qty: 1, reason: 'missing', comment: 'Load bench report' }) })
  }
  return builders
}

const BOUNDARY = 'kwloadbenchboundary'
function reportForm(fields: Record<string, string | number>) {
  return `${Object.entries(fields).map(([k, v]) => `--${BOUNDARY}\r\nContent-Disposition: form-data; name="${k}"\r\n\r\n${v}\r\n`).join('')}--${BOUNDARY}--\r\n`
}

type View = { pouches: { items: { itemId: number, qtyNeeded: number, qtyPacked: number, bins: string[], countSingly: boolean }[] }[] }

/** The next scan for a packer's bag: the first open line from its suggested bin (one at a time for parts counted singly). */
function nextScan(view: View, bagId: number, dayId: number, secret: string) {
  const open = view.pouches.flatMap(p => p.items).find(i => i.qtyPacked < i.qtyNeeded)
  if (!open) return null
  const left = open.qtyNeeded - open.qtyPacked
  return { text: signCode('bin', open.bins[0]!, secret), buildDayId: dayId, bagId, itemId: open.itemId, qty: open.countSingly ? 1 : left, confirmStandIn: true }
}

/** The station's view after a scan: a claim and a seal answer the whole bag, a pack only the changed line. */
function applyScan(view: View | undefined, res: { bag?: View | null, item?: { itemId: number, qtyPacked: number } }) {
  if (res.bag) return res.bag
  if (!view || !res.item) return view
  for (const p of view.pouches) for (const i of p.items) if (i.itemId === res.item.itemId) i.qtyPacked = res.item.qtyPacked
  return view
}

async function packWhole(c: Client, base: string, secret: string, dayId: number, bag: { bagId: number, code: string }) {
  let res = await c.post('/api/pack/scan', { text: labelUrl(base, 'bag', bag.code, secret), buildDayId: dayId })
  let view = applyScan(undefined, res.body)
  for (let guard = 0; guard < 200 && res.status === 200 && !res.body.sealed; guard++) {
    const body = nextScan(view!, bag.bagId, dayId, secret)
    if (!body) break
    res = await c.post('/api/pack/scan', body)
    view = applyScan(view, res.body)
  }
  if (res.status !== 200 || !res.body.sealed) throw new Error(`setting up: bag ${bag.code} did not seal (${res.status} ${res.body.sealError ?? JSON.stringify(res.body).slice(0, 200)})`)
}

// ---------- virtual users ----------

interface Workload { route: Route | 'builder', opts: Record<string, unknown>, delayMs: number }

function packerUser(i: number, cookie: string, base: string, secret: string, dayId: number, queue: { id: number, code: string }[], stats: Stats, sealed: { n: number }): Workload['opts'] {
  const headers = { cookie, 'content-type': 'application/json', accept: 'application/json' }
  // The packer's bag lives here, not in autocannon's context, which is reset after every round of `requests`.
  const at: { bag?: { id: number, code: string }, view?: View } = {}
  return {
    requests: [{
      method: 'POST',
      path: '/api/pack/scan',
      setupRequest: (req: Record<string, unknown>) => {
        let body: Record<string, unknown> | null = at.bag && at.view ? nextScan(at.view, at.bag.id, dayId, secret) : null
        if (!body) {
          at.bag = queue.shift()
          at.view = undefined
          if (!at.bag) throw new Error('the packers ran out of bags: raise KW_LOAD_BAGS')
          body = { text: labelUrl(base, 'bag', at.bag.code, secret), buildDayId: dayId }
        }
        return { ...req, headers, body: JSON.stringify(body) }
      },
      onResponse: (status: number, body: string) => {
        record(stats, 'scan', status, body)
        if (status !== 200) {
          at.bag = undefined
          return
        }
        const res = JSON.parse(body)
        at.view = applyScan(at.view, res)
        if (res.sealed) {
          sealed.n++
          at.bag = undefined
        }
      },
    }],
    title: `packer ${i + 1}`,
  }
}

function builderUser(i: number, b: Builder, stats: Stats): Workload['opts'] {
  const headers = { cookie: b.cookie, accept: 'application/json' }
  const get = (route: Route, path: string) => ({ method: 'GET', path, headers, onResponse: (s: number, body: string) => record(stats, route, s, body) })
  const requests: unknown[] = []
  for (let k = 0; k < REPORT_EVERY - 1; k++) requests.push(k % 2 ? get('bag', `/api/my/bags/${b.bagId}`) : get('orders', '/api/my/orders'))
  requests.push({
    method: 'POST', path: '/api/my/reports', headers: { ...headers, 'content-type': `multipart/form-data; boundary=${BOUNDARY}` }, body: b.reportBody,
    onResponse: (s: number, body: string) => record(stats, 'report', s, body),
  })
  // Builders start at different points of their round, so reports are spread over time.
  const shift = (i * 7) % requests.length
  return { requests: [...requests.slice(shift), ...requests.slice(0, shift)], title: `builder ${i + 1}` }
}

function checkoutUser(i: number, pairs: { cookie: string, dayId: number, offeringId: number }[], stats: Stats): Workload['opts'] {
  return {
    requests: [{
      method: 'POST',
      path: '/api/checkout',
      setupRequest: (req: Record<string, unknown>) => {
        const p = pairs.shift()
        if (!p) throw new Error('no checkout left')
        return { ...req, headers: { cookie: p.cookie, 'content-type': 'application/json', accept: 'application/json' }, body: JSON.stringify({ buildDayId: p.dayId, offeringId: p.offeringId }) }
      },
      onResponse: (s: number, body: string) => record(stats, 'checkout', s, body),
    }],
    title: `checkout ${i + 1}`,
  }
}

// autocannon calls onResponse and then emits 'response' for the same reply, synchronously: the
// route noted here is the one the next 'response' event times, and the stats it goes to.
let lastRoute: Route = 'scan'
let lastStats: Stats | undefined
// Replies that arrive outside the measured window [from, until) (performance.now()) go to the
// warm-up and cool-down stats instead of the phase's.
const measured = { from: 0, until: Infinity, outside: newStats() }
function record(stats: Stats, route: Route, status: number, body: string) {
  lastRoute = route
  const now = performance.now()
  lastStats = now < measured.from || now >= measured.until ? measured.outside : stats
  const s = lastStats[route]
  s.statuses.set(status, (s.statuses.get(status) ?? 0) + 1)
  if (status < 200 || status > 299) {
    let message = ''
    try { message = JSON.parse(body).message ?? '' } catch { message = body.slice(0, 80) }
    const key = `${status} ${message}`.slice(0, 140)
    s.errors.set(key, (s.errors.get(key) ?? 0) + 1)
  }
}

function run(base: string, opts: Record<string, unknown>, stats: Stats, fallback: Route, seconds: number, rate: number | null, maxRequests?: number) {
  return new Promise<{ errors: number, timeouts: number }>((ok, fail) => {
    const instance = autocannon({
      url: base, connections: 1, pipelining: 1, duration: seconds, timeout: 10,
      ...(rate ? { connectionRate: rate } : {}), ...(maxRequests ? { maxConnectionRequests: maxRequests } : {}), ...opts,
    }, (err: Error | null, result: { errors: number, timeouts: number }) => (err ? fail(err) : ok(result)))
    instance.on('response', (_c: unknown, _status: number, _bytes: number, ms: number) => { (lastStats ?? stats)[lastRoute].times.push(ms) })
    instance.on('reqError', () => { stats[fallback].socketErrors++ })
  })
}

// ---------- figures ----------

function percentile(sorted: number[], p: number) {
  if (!sorted.length) return NaN
  return sorted[Math.min(sorted.length - 1, Math.ceil((p / 100) * sorted.length) - 1)]!
}

/** Replies that were not 2xx, and requests that got no reply. */
function failures(s: RouteStats) {
  return [...s.statuses].filter(([code]) => code < 200 || code > 299).reduce((n, [, c]) => n + c, 0) + s.socketErrors
}

function report(phase: string, stats: Stats, seconds: number, cpu: Cpu) {
  const share = (v: number) => `${v.toFixed(1)} s (${(100 * v / seconds).toFixed(0)} % of a core)`
  console.log(`\n== ${phase}: ${seconds.toFixed(1)} s; CPU: app ${share(cpu.app)}, MariaDB ${share(cpu.db)} (all developers' databases), this bench ${share(cpu.bench)}; load average now ${loadavg().map(l => l.toFixed(1)).join(' ')}`)
  console.log(`${'route'.padEnd(24)}${'requests'.padStart(9)}${'req/s'.padStart(8)}${'median'.padStart(9)}${'p95'.padStart(9)}${'p99'.padStart(9)}${'max'.padStart(9)}${'errors'.padStart(8)}`)
  let total = 0
  let errors = 0
  const misses: string[] = []
  for (const route of Object.keys(ROUTES) as Route[]) {
    const s = stats[route]
    const sorted = [...s.times].sort((a, b) => a - b)
    const bad = failures(s)
    total += sorted.length
    errors += bad
    const ms = (v: number) => (Number.isNaN(v) ? '–' : `${v.toFixed(1)}`).padStart(9)
    console.log(`${ROUTES[route].padEnd(24)}${String(sorted.length).padStart(9)}${(sorted.length / seconds).toFixed(1).padStart(8)}${ms(percentile(sorted, 50))}${ms(percentile(sorted, 95))}${ms(percentile(sorted, 99))}${ms(sorted.at(-1) ?? NaN)}${String(bad).padStart(8)}`)
    for (const [what, n] of s.errors) console.log(`${''.padEnd(26)}${n} × ${what}`)
    if (s.socketErrors) console.log(`${''.padEnd(26)}${s.socketErrors} × connection error or timeout`)
    if (TARGETED.includes(route) && percentile(sorted, 95) >= TARGET_MS) misses.push(`${ROUTES[route]} p95 ${percentile(sorted, 95).toFixed(1)} ms`)
  }
  console.log(`${'all'.padEnd(24)}${String(total).padStart(9)}${(total / seconds).toFixed(1).padStart(8)}${''.padStart(36)}${String(errors).padStart(8)}`)
  console.log(`CPU per request: app ${(1000 * cpu.app / Math.max(1, total)).toFixed(2)} ms, MariaDB ${(1000 * cpu.db / Math.max(1, total)).toFixed(2)} ms`)
  return { misses, errors }
}

// ---------- where the app's time goes (KW_LOAD_PROFILE=1) ----------

/** Opens the app's inspector (SIGUSR1) and starts the CPU profiler; the returned function stops it and prints the top functions by own time. */
async function startProfile(pid: number) {
  process.kill(pid, 'SIGUSR1')
  let list: { webSocketDebuggerUrl: string }[] = []
  for (let i = 0; i < 50 && !list.length; i++) {
    await new Promise(r => setTimeout(r, 100))
    list = await fetch('http://127.0.0.1:9229/json/list').then(r => r.json(), () => [])
  }
  if (!list.length) throw new Error('the app\'s inspector did not open on 127.0.0.1:9229')
  const ws = new WebSocket(list[0]!.webSocketDebuggerUrl)
  await new Promise((ok, fail) => { ws.once('open', ok); ws.once('error', fail) })
  let id = 0
  const call = (method: string) => new Promise<any>((ok) => {
    const n = ++id
    const onMessage = (data: Buffer) => {
      const msg = JSON.parse(String(data))
      if (msg.id === n) { ws.off('message', onMessage); ok(msg.result) }
    }
    ws.on('message', onMessage)
    ws.send(JSON.stringify({ id: n, method }))
  })
  await call('Profiler.enable')
  await call('Profiler.start')
  return async () => {
    const { profile } = await call('Profiler.stop')
    ws.close()
    printProfile(profile)
  }
}

function printProfile(profile: { nodes: { id: number, callFrame: { functionName: string, url: string, lineNumber: number } }[], samples: number[], timeDeltas: number[] }) {
  const byNode = new Map(profile.nodes.map(n => [n.id, n]))
  const self = new Map<string, number>()
  const byPackage = new Map<string, number>()
  let total = 0
  profile.samples.forEach((nodeId, i) => {
    const dt = profile.timeDeltas[i] ?? 0
    const f = byNode.get(nodeId)!.callFrame
    const where = f.url.replace(/^file:\/\/.*?\.output\/server\//, '').replace(/^file:\/\//, '')
    const key = `${f.functionName || '(anonymous)'}  ${where}:${f.lineNumber + 1}`
    self.set(key, (self.get(key) ?? 0) + dt)
    const pkg = /node_modules\/((?:@[^/]+\/)?[^/]+)/.exec(where)?.[1] ?? (where.startsWith('chunks') ? 'app (server chunks)' : where ? 'node internals' : f.functionName || '(other)')
    byPackage.set(pkg, (byPackage.get(pkg) ?? 0) + dt)
    total += dt
  })
  const top = (m: Map<string, number>, n: number) => [...m].sort((a, b) => b[1] - a[1]).slice(0, n)
  console.log(`\n== app CPU profile of the peak phase (${(total / 1e6).toFixed(1)} s sampled): own time by package`)
  for (const [k, v] of top(byPackage, 12)) console.log(`${(100 * v / total).toFixed(1).padStart(6)} %  ${k}`)
  console.log('top functions by own time')
  for (const [k, v] of top(self, 15)) console.log(`${(100 * v / total).toFixed(1).padStart(6)} %  ${k}`)
}

// ---------- main ----------

async function main() {
  console.log(`Load bench: ${PACKERS} packers, ${BUILDERS} builders, checkouts; ${SECONDS} s per phase (${PHASES.join(', ')}); ${cpus().length} cores, load average ${loadavg().map(l => l.toFixed(1)).join(' ')}`)
  const t0 = performance.now()
  const stack = await startStack('load')
  console.log(yieldToServer())
  const { conn, db } = await openDb(stack.dbUrl)
  const base = stack.baseUrl
  const secret = stack.labelSecret
  try {
    const [organiser] = await db.select().from(schema.users).where(eq(schema.users.email, DEMO.organiser))
    const hash = organiser!.passwordHash
    const dayId = await salesDay(db, 'Load bench build day')
    await topUpStock(db, { qty: 50_000, receivedOn: '2020-01-01', note: 'load bench stock' })
    const packerIds = await inBatches(Array.from({ length: PACKERS }, (_, i) => i), 1, i => makeUser(db, `load.packer${i + 1}@club.invalid`, `Load Packer ${i + 1}`, 'packer', hash))
    const packers = await inBatches(packerIds, 8, (_, i) => new Client(base).login(`load.packer${i + 1}@club.invalid`))
    const queue: { id: number, code: string }[] = []
    for (let i = 0; i < PACKER_BAGS; i++) {
      const bag = await makePaidBag(db, { buildDayId: dayId, ...KITS[i % KITS.length]!, seat: 100 + i })
      queue.push({ id: bag.id, code: bag.code })
    }
    const builders = await makeBuilders(db, base, dayId, hash, packers, secret)
    const checkoutDays = await inBatches(Array.from({ length: CHECKOUT_DAYS }, (_, i) => i), 1, i => salesDay(db, `Load bench checkout day ${i + 1}`))
    const offerings = new Map<number, number>()
    for (const d of checkoutDays) {
      const [o] = await db.select({ id: schema.offerings.id }).from(schema.offerings)
        .innerJoin(schema.revisions, eq(schema.revisions.id, schema.offerings.revisionId)).innerJoin(schema.kits, eq(schema.kits.id, schema.revisions.kitId))
        .where(and(eq(schema.offerings.buildDayId, d), eq(schema.kits.slug, 'tern-atu')))
      offerings.set(d, o!.id)
    }
    const pairs = checkoutDays.flatMap(d => builders.map(b => ({ cookie: b.cookie, dayId: d, offeringId: offerings.get(d)! })))
    console.log(`set up in ${((performance.now() - t0) / 1000).toFixed(0)} s: ${PACKER_BAGS} bags to pack, ${BUILDERS} builders with sealed bags, ${pairs.length} checkouts available`)

    const results: { phase: string, misses: string[], errors: number }[] = []
    let stopProfile: (() => Promise<void>) | undefined
    for (const phase of PHASES) {
      const stats = newStats()
      const sealed = { n: 0 }
      // The peak and stress phases measure between their warm-up and cool-down; the CPU meter and
      // this process's event-loop monitor cover the same window.
      const warm = phase === 'solo' ? 0 : WARMUP
      const cool = phase === 'solo' ? 0 : COOLDOWN
      measured.outside = newStats()
      measured.from = performance.now() + warm * 1000
      measured.until = phase === 'solo' ? Infinity : measured.from + SECONDS * 1000
      let meter = cpuMeter(stack.app.child.pid!)
      // The bench measures each latency on its own event loop: when that loop is held up (autocannon,
      // and the fake card and mail servers living in this process), every route's latency grows at once.
      const benchLoop = monitorEventLoopDelay({ resolution: 10 })
      const warmLoop = monitorEventLoopDelay({ resolution: 10 })
      if (warm) warmLoop.enable()
      let started = performance.now()
      let elapsed = 0
      let cpu: Cpu | undefined
      const startMeasuring = () => {
        warmLoop.disable()
        meter = cpuMeter(stack.app.child.pid!)
        benchLoop.enable()
        started = performance.now()
      }
      const stopMeasuring = () => {
        if (cpu) return
        elapsed = (performance.now() - started) / 1000
        cpu = meter()
        benchLoop.disable()
      }
      const measuring = warm ? setTimeout(startMeasuring, warm * 1000) : undefined
      if (!warm) startMeasuring()
      const stopping = warm ? setTimeout(stopMeasuring, (warm + SECONDS) * 1000) : undefined
      if (phase === 'solo') {
        // One request at a time per route: the service time without queueing, and its CPU cost.
        await run(base, packerUser(0, packers[0]!.cookie, base, secret, dayId, queue, stats, sealed), stats, 'scan', 8, null, SOLO_REQUESTS)
        await run(base, builderUser(0, builders[0]!, stats), stats, 'orders', 8, null, SOLO_REQUESTS)
        await run(base, checkoutUser(0, pairs, stats), stats, 'checkout', 8, null, 20)
      }
      else {
        const paced = phase === 'peak'
        if (paced && process.env.KW_LOAD_PROFILE) stopProfile = await startProfile(stack.app.child.pid!)
        const users: Workload[] = [
          ...packers.map((p, i) => ({ route: 'scan' as const, opts: packerUser(i, p.cookie, base, secret, dayId, queue, stats, sealed), delayMs: paced ? (i * 1000) / PACKERS : 0 })),
          ...builders.map((b, i) => ({ route: 'builder' as const, opts: builderUser(i, b, stats), delayMs: paced ? (i * 1000) / BUILDERS + 7 : 0 })),
          ...[0, 1].map(i => ({ route: 'checkout' as const, opts: checkoutUser(i, pairs, stats), delayMs: paced ? 250 + i * 500 : 0 })),
        ]
        const perCheckoutConn = Math.floor(pairs.length / 2)
        await Promise.all(users.map(async (u) => {
          await new Promise(r => setTimeout(r, u.delayMs))
          const fallback: Route = u.route === 'builder' ? 'orders' : u.route
          return run(base, u.opts, stats, fallback, warm + SECONDS + cool, paced ? 1 : null, u.route === 'checkout' ? perCheckoutConn : undefined)
        }))
      }
      clearTimeout(measuring)
      clearTimeout(stopping)
      stopMeasuring()
      if (stopProfile) {
        await stopProfile()
        stopProfile = undefined
      }
      const r = report(PHASE_TITLES[phase] ?? phase, stats, elapsed, cpu!)
      if (warm) {
        const all = Object.values(measured.outside)
        const times = all.flatMap(x => x.times).sort((a, b) => a - b)
        const bad = all.reduce((n, x) => n + failures(x), 0)
        console.log(`warm-up and cool-down (first ${warm} s and last ${cool} s, not in the figures above; their errors count): ${times.length} requests, median ${percentile(times, 50).toFixed(1)} ms, p95 ${percentile(times, 95).toFixed(1)} ms, max ${(times.at(-1) ?? 0).toFixed(1)} ms, ${bad} errors; this bench's own event loop in the warm-up: max ${(warmLoop.max / 1e6).toFixed(0)} ms`)
        r.errors += bad
      }
      console.log(`bags sealed during the phase: ${sealed.n}; checkouts left: ${pairs.length}`)
      console.log(`this bench's own event loop (its delays are in every latency above): p99 ${(benchLoop.percentile(99) / 1e6).toFixed(0)} ms, max ${(benchLoop.max / 1e6).toFixed(0)} ms`)
      results.push({ phase, ...r })
    }

    const { checks, problems } = await runCheck(stack.dbUrl)
    console.log('\n== invariant checker')
    for (const c of checks) {
      const mine = problems.filter(p => p.check === c)
      console.log(`${mine.length ? 'BROKEN' : 'ok    '}  ${c}`)
      for (const p of mine.slice(0, 10)) console.log(`          ${p.detail}`)
    }
    console.log(problems.length ? `${problems.length} problem(s) found` : 'all rules hold')

    console.log('')
    for (const r of results.filter(x => x.phase !== 'stress')) {
      const ok = !r.misses.length && !r.errors && !problems.length
      console.log(`targets (${r.phase}): ${ok ? 'met' : 'NOT met'} — p95 < ${TARGET_MS} ms for reads and scans${r.misses.length ? ` (missed: ${r.misses.join('; ')})` : ''}, ${r.errors} errors, ${problems.length} invariant problems`)
    }
  }
  finally {
    await conn.end()
    await stack.stop()
  }
}

main().then(() => process.exit(0), (err) => {
  console.error(err)
  process.exit(1)
})
