/**
 * Reconciliation: how many whole kits the stock builds now, and what is short at a target.
 *
 * Lines demand k × qtyPerKit; parts supply their available stock; a line may draw from its
 * own part and, unless it has "no stand-ins", from each stand-in named by a swap rule whose
 * `from` is the line's own part (swap rules are not transitive). This is a transportation
 * problem, solved exactly as a max flow (Dinic): source → line (k·qty) → part (unbounded) →
 * sink (stock). Greedy passes fail when stand-ins are shared between lines.
 *
 * Decisions:
 * - Zero lines: maxKits is 0 (not Infinity), allocation and shortfall are empty.
 * - Stock entries of one part are summed first; a negative sum counts as 0, so an
 *   over-reserved entry reduces the part's availability rather than being ignored.
 * - `shortfall` lists only lines with something missing; `perLine` lists every line.
 * - The allocation prefers each line's own part: stand-ins carry only what own stock cannot.
 *   (Minimal total stand-in use is not guaranteed in every tangle of shared parts.)
 */

export interface ReconcileLine { id: string; partId: string; qtyPerKit: number; allowSwaps?: boolean }
export interface ReconcileStock { partId: string; available: number }
export interface ReconcileSwap { from: string; to: string }
export interface ReconcileInput {
  lines: ReconcileLine[]
  stock: ReconcileStock[]
  swaps: ReconcileSwap[]
  kits?: number
}
export interface ReconcileLinePart { lineId: string; partId: string; qty: number }
export interface ReconcileLineReport {
  lineId: string
  demand: number
  own: number
  standIns: { partId: string; qty: number }[]
  short: number
}
export interface ReconcileResult {
  maxKits: number
  kits: number
  allocation: ReconcileLinePart[]
  shortfall: ReconcileLinePart[]
  perLine: ReconcileLineReport[]
}

const SOURCE = 0
const SINK = 1

export function reconcile(input: ReconcileInput): ReconcileResult {
  const { lines, stock, swaps } = input
  if (!Array.isArray(lines) || !Array.isArray(stock) || !Array.isArray(swaps))
    throw new Error('reconcile needs arrays for lines, stock and swaps')
  checkLines(lines)
  if (input.kits !== undefined && !(Number.isSafeInteger(input.kits) && input.kits >= 0))
    throw new Error(`Target kits must be a whole number of 0 or more, got ${String(input.kits)}`)

  const available = sumStock(stock)
  const allowed = allowedParts(lines, swaps)
  const net = buildNetwork(lines, allowed, available)
  const maxKits = findMaxKits(net)
  const kits = input.kits ?? maxKits
  checkDemand(lines, kits)

  // findMaxKits leaves the network holding the own-first flow for maxKits kits.
  if (kits !== maxKits || maxKits === 0) net.run(kits, true)
  return report(net, kits, maxKits)
}

function checkLines(lines: ReconcileLine[]) {
  const seen = new Set<string>()
  for (let i = 0; i < lines.length; i++) {
    const l = lines[i]!
    if (!l || typeof l.id !== 'string' || l.id === '')
      throw new Error(`Line ${i + 1} has no id`)
    if (seen.has(l.id)) throw new Error(`Line id "${l.id}" is used twice`)
    seen.add(l.id)
    if (typeof l.partId !== 'string' || l.partId === '')
      throw new Error(`Line "${l.id}" has no part`)
    if (!Number.isSafeInteger(l.qtyPerKit) || l.qtyPerKit <= 0)
      throw new Error(`Line "${l.id}" needs a whole quantity per kit of 1 or more, got ${String(l.qtyPerKit)}`)
  }
}

function checkDemand(lines: ReconcileLine[], kits: number) {
  let total = 0
  for (const l of lines) total += l.qtyPerKit * kits
  if (!Number.isSafeInteger(total))
    throw new Error(`Target of ${kits} kits is too large to count exactly`)
}

function sumStock(stock: ReconcileStock[]): Map<string, number> {
  const sums = new Map<string, number>()
  for (let i = 0; i < stock.length; i++) {
    const s = stock[i]!
    if (!s || typeof s.partId !== 'string' || s.partId === '')
      throw new Error(`Stock entry ${i + 1} has no part`)
    if (!Number.isSafeInteger(s.available))
      throw new Error(`Stock of part "${s.partId}" must be a whole number, got ${String(s.available)}`)
    sums.set(s.partId, (sums.get(s.partId) ?? 0) + s.available)
  }
  for (const [p, n] of sums) {
    if (!Number.isSafeInteger(n)) throw new Error(`Stock of part "${p}" is too large to count exactly`)
    if (n < 0) sums.set(p, 0)
  }
  return sums
}

/** Own part first, then each distinct stand-in in swap-rule order. */
function allowedParts(lines: ReconcileLine[], swaps: ReconcileSwap[]): string[][] {
  const standIns = new Map<string, string[]>()
  for (let i = 0; i < swaps.length; i++) {
    const s = swaps[i]!
    if (!s || typeof s.from !== 'string' || typeof s.to !== 'string' || s.from === '' || s.to === '')
      throw new Error(`Swap rule ${i + 1} needs both a from and a to part`)
    if (s.from === s.to) continue
    const list = standIns.get(s.from)
    if (!list) standIns.set(s.from, [s.to])
    else if (!list.includes(s.to)) list.push(s.to)
  }
  return lines.map(l => l.allowSwaps === false ? [l.partId] : [l.partId, ...(standIns.get(l.partId) ?? [])])
}

interface Network {
  lines: ReconcileLine[]
  partIds: string[]
  partStock: Float64Array
  /** per line: edge ids of line → part, own part's edge first (or -1 when it has no stock) */
  lineEdges: Int32Array[]
  lineOwnEdge: Int32Array
  sourceEdge: Int32Array
  sinkEdge: Int32Array
  to: Int32Array
  res: Float64Array
  level: Int32Array
  /** Max flow for k kits; with ownFirst, own parts are filled before stand-ins are opened. */
  run(k: number, ownFirst?: boolean): number
}

function buildNetwork(lines: ReconcileLine[], allowed: string[][], available: Map<string, number>): Network {
  const partIndex = new Map<string, number>()
  const partIds: string[] = []
  for (const list of allowed) {
    for (const p of list) {
      if ((available.get(p) ?? 0) > 0 && !partIndex.has(p)) {
        partIndex.set(p, partIds.length)
        partIds.push(p)
      }
    }
  }
  const L = lines.length
  const P = partIds.length
  const nodes = 2 + L + P
  let edgeCount = L + P
  for (const list of allowed) for (const p of list) if (partIndex.has(p)) edgeCount++

  const to = new Int32Array(edgeCount * 2)
  const cap = new Float64Array(edgeCount * 2)
  const next = new Int32Array(edgeCount * 2)
  const head = new Int32Array(nodes).fill(-1)
  let e = 0
  const add = (u: number, v: number, c: number) => {
    to[e] = v; cap[e] = c; next[e] = head[u]!; head[u] = e; e++
    to[e] = u; cap[e] = 0; next[e] = head[v]!; head[v] = e; e++
    return e - 2
  }

  const sourceEdge = new Int32Array(L)
  const lineEdges: Int32Array[] = []
  const lineOwnEdge = new Int32Array(L).fill(-1)
  const standInEdges: number[] = []
  for (let i = 0; i < L; i++) {
    sourceEdge[i] = add(SOURCE, 2 + i, 0)
    const ids: number[] = []
    allowed[i]!.forEach((p, j) => {
      const pi = partIndex.get(p)
      if (pi === undefined) return
      const id = add(2 + i, 2 + L + pi, Infinity)
      ids.push(id)
      if (j === 0) lineOwnEdge[i] = id
      else standInEdges.push(id)
    })
    lineEdges.push(Int32Array.from(ids))
  }
  const partStock = new Float64Array(P)
  const sinkEdge = new Int32Array(P)
  for (let j = 0; j < P; j++) {
    partStock[j] = available.get(partIds[j]!)!
    sinkEdge[j] = add(2 + L + j, SINK, partStock[j]!)
  }

  const res = new Float64Array(cap.length)
  const level = new Int32Array(nodes)
  const iter = new Int32Array(nodes)
  const queue = new Int32Array(nodes)

  // Sends d units along edge a (negative d takes flow back).
  const push = (a: number, d: number) => {
    res[a] = res[a]! - d
    res[a ^ 1] = res[a ^ 1]! + d
  }

  const bfs = (): boolean => {
    level.fill(-1)
    level[SOURCE] = 0
    let qh = 0
    let qt = 0
    queue[qt++] = SOURCE
    while (qh < qt) {
      const u = queue[qh++]!
      for (let a = head[u]!; a !== -1; a = next[a]!) {
        const v = to[a]!
        if (res[a]! > 0 && level[v] === -1) {
          level[v] = level[u]! + 1
          queue[qt++] = v
        }
      }
    }
    return level[SINK] !== -1
  }

  const dfs = (u: number, f: number): number => {
    if (u === SINK) return f
    let pushed = 0
    for (let a = iter[u]!; a !== -1; a = next[a]!) {
      iter[u] = a
      const v = to[a]!
      if (res[a]! > 0 && level[v] === level[u]! + 1) {
        const d = dfs(v, Math.min(f - pushed, res[a]!))
        if (d > 0) {
          push(a, d)
          pushed += d
          if (pushed === f) return pushed
        }
      }
    }
    iter[u] = -1
    return pushed
  }

  const dinic = (): number => {
    let flow = 0
    while (bfs()) {
      iter.set(head)
      flow += dfs(SOURCE, Infinity)
    }
    return flow
  }

  const run = (k: number, ownFirst = false): number => {
    res.set(cap)
    for (let i = 0; i < L; i++) res[sourceEdge[i]!] = k * lines[i]!.qtyPerKit
    if (!ownFirst) return dinic()
    for (const id of standInEdges) res[id] = 0
    let flow = dinic()
    for (const id of standInEdges) res[id] = Infinity
    flow += dinic()
    preferOwn()
    return flow
  }

  // Moves stand-in flow back to a line's own part wherever the own part still has stock.
  // A move frees the stand-in's stock, which may be another line's own part: repeat until
  // stable (each move raises the total own-part flow, so this ends).
  const preferOwn = () => {
    let moved = true
    while (moved) {
      moved = false
      for (let i = 0; i < L; i++) {
        const own = lineOwnEdge[i]!
        if (own === -1) continue
        const ownSink = sinkEdge[to[own]! - 2 - L]!
        for (const a of lineEdges[i]!) {
          if (a === own || res[ownSink]! <= 0) continue
          const d = Math.min(res[a ^ 1]!, res[ownSink]!)
          if (d <= 0) continue
          const standInSink = sinkEdge[to[a]! - 2 - L]!
          push(a, -d)
          push(standInSink, -d)
          push(own, d)
          push(ownSink, d)
          moved = true
        }
      }
    }
  }

  return { lines, partIds, partStock, lineEdges, lineOwnEdge, sourceEdge, sinkEdge, to, res, level, run }
}

/**
 * Largest k whose max flow meets the whole demand. Starts at an upper bound and, while
 * infeasible, jumps to the bound given by the min cut (Newton's method on the parametric
 * cut): lines reachable in the residual graph demand k·q(S) but can reach only stock s(N(S)),
 * so every feasible k ≤ floor(s(N(S)) / q(S)), which is strictly below the failed k.
 */
function findMaxKits(net: Network): number {
  const { lines, lineEdges, partStock, to } = net
  const L = lines.length
  if (L === 0) return 0
  let totalQty = 0
  let totalStock = 0
  for (const s of net.partStock) totalStock += s
  let k = Infinity
  for (let i = 0; i < L; i++) {
    const q = lines[i]!.qtyPerKit
    totalQty += q
    let reach = 0
    for (const a of lineEdges[i]!) reach += partStock[to[a]! - 2 - L]!
    k = Math.min(k, Math.floor(reach / q))
  }
  k = Math.min(k, Math.floor(totalStock / totalQty))

  for (;;) {
    if (k === 0) return 0
    const demand = k * totalQty
    if (net.run(k, true) === demand) return k
    // net.level holds the last BFS, which could not reach the sink: the min cut's source side.
    let q = 0
    let s = 0
    for (let i = 0; i < L; i++) if (net.level[2 + i] !== -1) q += lines[i]!.qtyPerKit
    for (let j = 0; j < partStock.length; j++) if (net.level[2 + L + j] !== -1) s += partStock[j]!
    const bound = Math.floor(s / q)
    if (!(bound < k)) throw new Error('reconcile: internal error, max-kits search did not progress')
    k = bound
  }
}

function report(net: Network, kits: number, maxKits: number): ReconcileResult {
  const { lines, lineEdges, lineOwnEdge, partIds, res, to } = net
  const L = lines.length
  const allocation: ReconcileLinePart[] = []
  const shortfall: ReconcileLinePart[] = []
  const perLine: ReconcileLineReport[] = []
  for (let i = 0; i < L; i++) {
    const line = lines[i]!
    const demand = kits * line.qtyPerKit
    let own = 0
    let got = 0
    const standIns: { partId: string; qty: number }[] = []
    for (const a of lineEdges[i]!) {
      const qty = res[a ^ 1]!
      if (qty <= 0) continue
      const partId = partIds[to[a]! - 2 - L]!
      got += qty
      allocation.push({ lineId: line.id, partId, qty })
      if (a === lineOwnEdge[i]) own = qty
      else standIns.push({ partId, qty })
    }
    const short = demand - got
    if (short > 0) shortfall.push({ lineId: line.id, partId: line.partId, qty: short })
    perLine.push({ lineId: line.id, demand, own, standIns, short })
  }
  return { maxKits, kits, allocation, shortfall, perLine }
}
