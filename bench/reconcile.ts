// Bench: reconcile on a seeded 300-line kit with 2,000 parts and 3,000 swap rules, against
// one javascript-lp-solver solve of the same max-kits program (bounded to 60 s in a worker).
// Run: npx tsx bench/reconcile.ts
import { Worker } from 'node:worker_threads'
import { createRequire } from 'node:module'
import { performance } from 'node:perf_hooks'
import { reconcile, type ReconcileInput } from '../shared/utils/reconcile'

const LP_LIMIT_MS = 60_000
const RUNS = 21

function mulberry32(seed: number) {
  let a = seed >>> 0
  return () => {
    a = (a + 0x6D2B79F5) >>> 0
    let t = a
    t = Math.imul(t ^ (t >>> 15), t | 1)
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61)
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296
  }
}

/** Invented but shaped like a club kit: common passives on several lines, a few scarce actives. */
function makeInstance(seed: number, tight = false): ReconcileInput {
  const rand = mulberry32(seed)
  const int = (lo: number, hi: number) => lo + Math.floor(rand() * (hi - lo + 1))
  const PARTS = 2000
  const partId = (i: number) => `P${String(i).padStart(4, '0')}`
  // Lines draw on the first 400 parts, favouring the lower numbers, so some parts recur.
  const lines = Array.from({ length: 300 }, (_, i) => ({
    id: `L${i}`,
    partId: partId(Math.floor(400 * rand() ** 1.5)),
    qtyPerKit: rand() < 0.7 ? int(1, 2) : int(3, 10),
    ...(rand() < 0.1 ? { allowSwaps: false } : {}),
  }))
  // Stock for 16 to 80 kits of each kit part (4 to 40 when tight); other parts random, some out.
  const perKit = new Map<string, number>()
  for (const l of lines) perKit.set(l.partId, (perKit.get(l.partId) ?? 0) + l.qtyPerKit)
  const stock = Array.from({ length: PARTS }, (_, i) => {
    const r = rand()
    const q = perKit.get(partId(i))
    const spread = tight ? 0.1 + 0.9 * rand() : 0.4 + 1.6 * rand()
    const available = q ? Math.round(q * 40 * spread) : r < 0.05 ? 0 : int(0, tight ? 300 : 1500)
    return { partId: partId(i), available }
  })
  // Reservations held during checkout arrive as extra (negative) entries for some parts.
  for (let i = 0; i < 100; i++) stock.push({ partId: partId(int(0, PARTS - 1)), available: -int(1, 20) })
  // Half of the swap rules start at a kit's part (interchangeable groups), half elsewhere.
  const swaps = Array.from({ length: 3000 }, () => ({
    from: rand() < 0.5 ? lines[int(0, lines.length - 1)]!.partId : partId(int(0, PARTS - 1)),
    // A tight kit leans on a few shared stand-ins, where greedy passes go wrong.
    to: partId(tight ? int(400, 499) : int(0, PARTS - 1)),
  }))
  return { lines, stock, swaps }
}

function median(xs: number[]) {
  const s = [...xs].sort((a, b) => a - b)
  return s[Math.floor(s.length / 2)]!
}

function timeOurs(input: ReconcileInput) {
  for (let i = 0; i < 3; i++) reconcile(input)
  const times: number[] = []
  let out = reconcile(input)
  for (let i = 0; i < RUNS; i++) {
    const t0 = performance.now()
    out = reconcile(input)
    times.push(performance.now() - t0)
  }
  return { ms: median(times), out }
}

/** max k s.t. Σ_p x_lp = k·q_l, Σ_l x_lp ≤ s_p; k integer (flows are then integral: a transportation problem). */
function lpModel(input: ReconcileInput) {
  const stock = new Map<string, number>()
  for (const s of input.stock) stock.set(s.partId, (stock.get(s.partId) ?? 0) + s.available)
  const standIns = new Map<string, string[]>()
  for (const s of input.swaps) {
    if (s.from === s.to) continue
    const list = standIns.get(s.from) ?? []
    if (!list.includes(s.to)) list.push(s.to)
    standIns.set(s.from, list)
  }
  const constraints: Record<string, { max?: number; equal?: number }> = {}
  const variables: Record<string, Record<string, number>> = { k: { kits: 1 } }
  input.lines.forEach((line, i) => {
    constraints[`line_${i}`] = { equal: 0 }
    variables.k![`line_${i}`] = -line.qtyPerKit
    const parts = line.allowSwaps === false ? [line.partId] : [line.partId, ...(standIns.get(line.partId) ?? [])]
    for (const p of parts) {
      constraints[`part_${p}`] = { max: Math.max(0, stock.get(p) ?? 0) }
      variables[`x_${i}_${p}`] = { [`line_${i}`]: 1, [`part_${p}`]: 1 }
    }
  })
  return { optimize: 'kits', opType: 'max', constraints, variables, ints: { k: 1 }, timeout: LP_LIMIT_MS }
}

const WORKER = `
const { parentPort, workerData } = require('node:worker_threads')
const solver = require(workerData.solverPath)
const t0 = performance.now()
const r = (solver.default ?? solver).Solve(workerData.model)
parentPort.postMessage({ ms: performance.now() - t0, feasible: r.feasible, result: r.result })
`

function timeLp(model: object): Promise<{ ms: number; feasible: boolean; result: number } | null> {
  const solverPath = createRequire(import.meta.url).resolve('javascript-lp-solver')
  const worker = new Worker(WORKER, { eval: true, workerData: { model, solverPath } })
  return new Promise((resolve, reject) => {
    const timer = setTimeout(() => { void worker.terminate(); resolve(null) }, LP_LIMIT_MS + 5_000)
    worker.once('message', (m) => { clearTimeout(timer); void worker.terminate(); resolve(m) })
    worker.once('error', (e) => { clearTimeout(timer); reject(e) })
  })
}

async function benchOne(name: string, input: ReconcileInput) {
  const ours = timeOurs(input)
  const target = ours.out.maxKits + 10
  const oursTarget = timeOurs({ ...input, kits: target })
  const shortTotal = oursTarget.out.shortfall.reduce((n, s) => n + s.qty, 0)
  const partsUsed = new Set(ours.out.allocation.map(a => a.partId)).size
  console.log(`${name}: ${input.lines.length} lines, ${input.stock.length} stock entries, ${input.swaps.length} swap rules; ${partsUsed} parts allocated`)
  console.log(`  reconcile (max kits):   median ${ours.ms.toFixed(2)} ms of ${RUNS}; maxKits = ${ours.out.maxKits}`)
  console.log(`  reconcile (target ${target}): median ${oursTarget.ms.toFixed(2)} ms of ${RUNS}; least shortfall = ${shortTotal} over ${oursTarget.out.shortfall.length} lines`)
  const lp = await timeLp(lpModel(input))
  if (!lp) {
    console.log(`  javascript-lp-solver: gave up after ${LP_LIMIT_MS / 1000} s`)
    return
  }
  const lpKits = Math.round(lp.result)
  console.log(`  javascript-lp-solver (one solve, k integer): ${lp.ms.toFixed(1)} ms; feasible=${lp.feasible}, maxKits = ${lpKits} (${lpKits === ours.out.maxKits ? 'agrees' : 'DISAGREES'})`)
  console.log(`  ours ${ours.ms.toFixed(2)} ms, LP ${lp.ms.toFixed(1)} ms, ratio ${(lp.ms / ours.ms).toFixed(0)}x  (target: ours < 20 ms and at least 20x faster)`)
}

await benchOne('typical kit', makeInstance(7))
await benchOne('tight kit (shared stand-ins)', makeInstance(11, true))
