// Packing bench: 20 packers scan at once for 30 seconds against a stack of our own (fresh database,
// built server on loopback), then stock is checked against the ledger; and the time to render the
// labels of 60 bags. Run: npx tsx bench/packing.ts  (KW_DB_ADMIN_URL and KW_BUILD_DIR as for the tests)
import { loadavg } from 'node:os'
import { eq, sql } from 'drizzle-orm'
import * as schema from '../server/db/schema'
import { bagLabels } from '../server/utils/bags'
import { labelUrl } from '../server/utils/codes'
import { renderLabels, SHEET_LAYOUTS } from '../server/utils/labels'
import { makeBuildDay, makePaidBag, openDb, stockLedgerMismatches, topUpStock, type PackDb } from '../tests/api/packing-data'
import { Client } from '../tests/support/client'
import { startStack } from '../tests/support/stack'
import { cpuMeter, yieldToServer, type Cpu } from './cpu'

const PACKERS = Number(process.env.KW_BENCH_PACKERS || 20)
const SECONDS = Number(process.env.KW_BENCH_SECONDS || 30)
const BAGS = Number(process.env.KW_BENCH_BAGS || 450) // both rounds at today's speed need ~300
// A quick packer scans about once a second; 250 ms between one packer's scans is already four times that.
const PAUSE_MS = Number(process.env.KW_BENCH_PAUSE_MS || 250)
const KITS = [{ slug: 'wren-40', option: '40 m (7.030 MHz)' }, { slug: 'linnet-20' }, { slug: 'tern-atu' }, { slug: 'wren-40', option: '80 m (3.560 MHz)' }]

function report(stats: Stats, elapsed: number, pauseMs: number, cpu: Cpu) {
  const sorted = [...stats.latencies].sort((a, b) => a - b)
  const errors = [...stats.errors.values()].reduce((a, b) => a + b, 0)
  console.log(`\nscan API, ${PACKERS} concurrent packers ${pauseMs ? `each pausing ~${pauseMs} ms between scans` : 'scanning flat out (no pause)'}, ${elapsed.toFixed(1)} s on loopback:`)
  console.log(`  requests ${stats.requests} (${(stats.requests / elapsed).toFixed(0)}/s), bags sealed ${stats.bagsSealed}`)
  console.log(`  latency median ${percentile(sorted, 50).toFixed(1)} ms, p95 ${percentile(sorted, 95).toFixed(1)} ms, p99 ${percentile(sorted, 99).toFixed(1)} ms, max ${sorted.at(-1)?.toFixed(1)} ms  (target p95 < 30 ms)`)
  for (const [kind, list] of stats.byKind) {
    const s2 = [...list].sort((a, b) => a - b)
    console.log(`    ${kind}: ${list.length} requests, median ${percentile(s2, 50).toFixed(1)} ms, p95 ${percentile(s2, 95).toFixed(1)} ms`)
  }
  console.log(`  errors ${errors}${errors ? `: ${JSON.stringify(Object.fromEntries(stats.errors))}` : ''}`)
  const per = (v: number) => `${(1000 * v / Math.max(1, stats.requests)).toFixed(2)} ms`
  console.log(`  CPU per request: app ${per(cpu.app)}, MariaDB ${per(cpu.db)}, this bench ${per(cpu.bench)}; load average now ${loadavg().map(l => l.toFixed(1)).join(' ')}`)
}

/** The same 20-way load on /api/health (no session, no database): what this machine gives any request right now. */
async function healthFloor(base: string) {
  const lat: number[] = []
  const until = Date.now() + 3000
  await Promise.all(Array.from({ length: PACKERS }, async () => {
    while (Date.now() < until) {
      const t = performance.now()
      await (await fetch(`${base}/api/health`)).arrayBuffer()
      lat.push(performance.now() - t)
    }
  }))
  lat.sort((a, b) => a - b)
  return `/api/health at ${PACKERS} concurrent: ${(lat.length / 3).toFixed(0)}/s, median ${percentile(lat, 50).toFixed(1)} ms, p95 ${percentile(lat, 95).toFixed(1)} ms`
}

function percentile(sorted: number[], p: number) {
  if (!sorted.length) return NaN
  return sorted[Math.min(sorted.length - 1, Math.ceil((p / 100) * sorted.length) - 1)]!
}

/** Packer accounts for the bench (they share the demo password hash). */
async function makePackers(db: PackDb, base: string) {
  const [pip] = await db.select().from(schema.users).where(eq(schema.users.email, 'pip.achterberg@club.invalid'))
  const clients: Client[] = []
  for (let i = 0; i < PACKERS; i++) {
    const email = `bench.packer${i + 1}@club.invalid`
    const [u] = await db.insert(schema.users).values({ email, name: `Bench Packer ${i + 1}`, passwordHash: pip!.passwordHash }).$returningId()
    await db.insert(schema.userRoles).values({ userId: u!.id, role: 'packer' })
    clients.push(await new Client(base).login(email))
  }
  return clients
}

interface Stats { latencies: number[], errors: Map<string, number>, bagsSealed: number, requests: number, byKind: Map<string, number[]> }

async function packer(c: Client, base: string, secret: string, dayId: number, queue: { id: number, code: string }[], until: number, stats: Stats, pauseMs: number) {
  async function timed(body: Record<string, unknown>) {
    if (pauseMs) await new Promise(r => setTimeout(r, pauseMs * (0.5 + Math.random())))
    const t = performance.now()
    const res = await c.post('/api/pack/scan', { buildDayId: dayId, ...body })
    const ms = performance.now() - t
    stats.latencies.push(ms)
    const kind = res.body?.sealed ? 'pack+seal' : String(res.body?.outcome ?? res.status)
    stats.byKind.set(kind, [...(stats.byKind.get(kind) ?? []), ms])
    stats.requests++
    if (res.status !== 200) {
      const key = `${res.status} ${res.body?.data?.reason ?? res.body?.message ?? ''}`
      stats.errors.set(key, (stats.errors.get(key) ?? 0) + 1)
    }
    return res
  }
  while (Date.now() < until) {
    const bag = queue.shift()
    if (!bag) return
    let res = await timed({ text: labelUrl(base, 'bag', bag.code, secret) })
    if (res.status !== 200) continue
    let view = res.body.bag
    while (Date.now() < until) {
      const open = view.pouches.flatMap((p: any) => p.items).find((i: any) => i.qtyPacked < i.qtyNeeded)
      if (!open) break
      const text = labelUrl(base, 'bin', open.bins[0], secret)
      res = await timed({ text, bagId: bag.id, itemId: open.itemId })
      if (res.status === 200 && res.body.outcome === 'count') res = await timed({ text, bagId: bag.id, itemId: open.itemId, qty: res.body.qty })
      if (res.status !== 200 || res.body.outcome !== 'packed') break
      if (res.body.sealed) stats.bagsSealed++
      if (res.body.bag) view = res.body.bag
      else for (const p of view.pouches) for (const it of p.items) if (it.itemId === res.body.item.itemId) Object.assign(it, res.body.item)
    }
  }
}

async function labelTiming(db: PackDb, base: string, secret: string, dayId: number, c: Client) {
  const bags = (await db.select({ id: schema.bags.id, code: schema.bags.code }).from(schema.bags).where(eq(schema.bags.buildDayId, dayId)).limit(60))
  const layout = SHEET_LAYOUTS.find(l => l.id === 'a4-3x8')!
  await renderLabels(await bagLabels(db, bags.slice(0, 2).map(b => b.id), 'both', base, secret), layout) // warm the fonts
  const out: Record<string, number> = {}
  for (const kind of ['bags', 'both'] as const) {
    const t = performance.now()
    const labels = await bagLabels(db, bags.map(b => b.id), kind, base, secret)
    const t1 = performance.now()
    const pdf = await renderLabels(labels, layout)
    out[`${kind} in-process (${labels.length} labels, ${(pdf.length / 1024).toFixed(0)} KiB; data ${(t1 - t).toFixed(0)} ms + PDF ${(performance.now() - t1).toFixed(0)} ms)`] = performance.now() - t
  }
  const t = performance.now()
  const res = await fetch(`${base}/api/labels/bags?codes=${bags.map(b => b.code).join(',')}&kind=both&layout=a4-3x8`, { headers: { cookie: c.cookie } })
  await res.arrayBuffer()
  out[`both over HTTP (status ${res.status})`] = performance.now() - t
  return { count: bags.length, out }
}

async function main() {
  console.log(`Packing bench: ${PACKERS} packers for ${SECONDS} s; starting a stack of its own…`)
  const stack = await startStack('bench')
  console.log(yieldToServer())
  const { conn, db } = await openDb(stack.dbUrl)
  try {
    const dayId = await makeBuildDay(db, 'Bench build day')
    await topUpStock(db, { qty: 20_000, receivedOn: '2026-12-01', note: 'bench stock' })
    const t0 = performance.now()
    const queue: { id: number, code: string }[] = []
    for (let i = 0; i < BAGS; i++) {
      const bag = await makePaidBag(db, { buildDayId: dayId, ...KITS[i % KITS.length]!, seat: i + 1 })
      queue.push({ id: bag.id, code: bag.code })
    }
    console.log(`${BAGS} paid orders with bags made in ${((performance.now() - t0) / 1000).toFixed(1)} s`)
    const clients = await makePackers(db, stack.baseUrl)

    console.log(`floor of this machine now: ${await healthFloor(stack.baseUrl)}`)
    for (const pauseMs of [PAUSE_MS, 0]) {
      const stats: Stats = { latencies: [], errors: new Map(), bagsSealed: 0, requests: 0, byKind: new Map() }
      const until = Date.now() + SECONDS * 1000
      const started = performance.now()
      const meter = cpuMeter(stack.app.child.pid!)
      await Promise.all(clients.map(c => packer(c, stack.baseUrl, stack.labelSecret, dayId, queue, until, stats, pauseMs)))
      report(stats, (performance.now() - started) / 1000, pauseMs, meter())
      // Finish the claimed bags' claims so the next round starts clean.
      await db.update(schema.bags).set({ claimedBy: null, claimedAt: null }).where(eq(schema.bags.buildDayId, dayId))
    }

    // Let the last requests' transactions settle, then compare every lot with its ledger.
    const mismatches = await stockLedgerMismatches(db)
    const [negative] = await db.select({ n: sql<number>`count(*)` }).from(schema.lots).where(sql`${schema.lots.onHand} < 0`)
    const [picked] = await db.execute(sql`select coalesce(-sum(g.qty), 0) as picked, (select coalesce(sum(i.qty_packed), 0) from bag_items i join bags b on b.id = i.bag_id where b.state = 'sealed' and b.build_day_id = ${dayId}) as packed
      from ledger g join bags b on b.id = g.bag_id where g.kind = 'pick' and b.build_day_id = ${dayId}`) as unknown as [{ picked: number, packed: number }[]]
    console.log(`\nafter both rounds: stock == ledger: ${mismatches.length === 0 ? 'yes' : `NO, ${mismatches.length} lots differ`}; lots below zero: ${Number(negative!.n)}; picked ${Number(picked[0]!.picked)} = packed into sealed bags ${Number(picked[0]!.packed)}: ${Number(picked[0]!.picked) === Number(picked[0]!.packed) ? 'yes' : 'NO'}`)

    const labels = await labelTiming(db, stack.baseUrl, stack.labelSecret, dayId, clients[0]!)
    console.log(`\nlabels for ${labels.count} bags (target < 1500 ms):`)
    for (const [k, ms] of Object.entries(labels.out)) console.log(`  ${k}: ${ms.toFixed(0)} ms`)
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
