import { describe, expect, it } from 'vitest'
import solver from 'javascript-lp-solver'

type LpResult = { feasible: boolean; result: number }
import { reconcile, type ReconcileInput, type ReconcileResult } from '../../shared/utils/reconcile'

// Independent oracle: javascript-lp-solver (npm) solving the same kit/stock/stand-in instance
// as an integer program (max kits) and as a transportation LP (least total shortfall).

function allowedFor(input: ReconcileInput, i: number): string[] {
  const line = input.lines[i]!
  const parts = [line.partId]
  if (line.allowSwaps === false) return parts
  for (const s of input.swaps) if (s.from === line.partId && !parts.includes(s.to)) parts.push(s.to)
  return parts
}

function stockOf(input: ReconcileInput): Map<string, number> {
  const m = new Map<string, number>()
  for (const s of input.stock) m.set(s.partId, (m.get(s.partId) ?? 0) + s.available)
  for (const [p, n] of m) if (n < 0) m.set(p, 0)
  return m
}

function partConstraints(input: ReconcileInput) {
  const stock = stockOf(input)
  const constraints: Record<string, { max?: number; equal?: number }> = {}
  input.lines.forEach((_, i) => {
    for (const p of allowedFor(input, i)) constraints[`part_${p}`] = { max: stock.get(p) ?? 0 }
  })
  return constraints
}

/** max k s.t. Σ_p x_lp = k·q_l, Σ_l x_lp ≤ s_p, x, k ≥ 0 integer. */
function oracleMaxKits(input: ReconcileInput): number {
  const constraints = partConstraints(input)
  const variables: Record<string, Record<string, number>> = { k: { kits: 1 } }
  const ints: Record<string, 1> = { k: 1 }
  input.lines.forEach((line, i) => {
    constraints[`line_${i}`] = { equal: 0 }
    variables.k![`line_${i}`] = -line.qtyPerKit
    for (const p of allowedFor(input, i)) {
      variables[`x_${i}_${p}`] = { [`line_${i}`]: 1, [`part_${p}`]: 1 }
      ints[`x_${i}_${p}`] = 1
    }
  })
  const r = solver.Solve({ optimize: 'kits', opType: 'max', constraints, variables, ints }) as LpResult
  if (!r.feasible) throw new Error('oracle: infeasible')
  return Math.round(r.result) + 0 // + 0 turns -0 into 0
}

/** min Σ short_l s.t. Σ_p x_lp + short_l = T·q_l, Σ_l x_lp ≤ s_p (a transportation LP, integral). */
function oracleLeastShortfall(input: ReconcileInput, target: number): number {
  const constraints = partConstraints(input)
  const variables: Record<string, Record<string, number>> = {}
  input.lines.forEach((line, i) => {
    constraints[`line_${i}`] = { equal: target * line.qtyPerKit }
    variables[`short_${i}`] = { [`line_${i}`]: 1, total: 1 }
    for (const p of allowedFor(input, i)) variables[`x_${i}_${p}`] = { [`line_${i}`]: 1, [`part_${p}`]: 1 }
  })
  const r = solver.Solve({ optimize: 'total', opType: 'min', constraints, variables }) as LpResult
  if (!r.feasible) throw new Error('oracle: infeasible')
  return Math.round(r.result) + 0 // + 0 turns -0 into 0
}

/** The returned allocation respects stock and the allowed parts, and line totals = demand − short. */
function expectValid(input: ReconcileInput, out: ReconcileResult, target: number) {
  const stock = stockOf(input)
  const usedOf = new Map<string, number>()
  const gotOf = new Map<string, number>()
  for (const a of out.allocation) {
    const i = input.lines.findIndex(l => l.id === a.lineId)
    expect(i, `allocation to unknown line ${a.lineId}`).toBeGreaterThanOrEqual(0)
    expect(allowedFor(input, i)).toContain(a.partId)
    expect(Number.isInteger(a.qty) && a.qty > 0).toBe(true)
    usedOf.set(a.partId, (usedOf.get(a.partId) ?? 0) + a.qty)
    gotOf.set(a.lineId, (gotOf.get(a.lineId) ?? 0) + a.qty)
  }
  for (const [p, used] of usedOf) expect(used).toBeLessThanOrEqual(stock.get(p) ?? 0)
  // Own part first: a line leans on a stand-in only once its own part is used up.
  for (const row of out.perLine) {
    const line = input.lines.find(l => l.id === row.lineId)!
    if (row.standIns.length > 0) expect(usedOf.get(line.partId) ?? 0).toBe(stock.get(line.partId) ?? 0)
  }
  for (const line of input.lines) {
    const short = out.shortfall.find(s => s.lineId === line.id)
    const demand = target * line.qtyPerKit
    expect((gotOf.get(line.id) ?? 0) + (short?.qty ?? 0)).toBe(demand)
    if (short) {
      expect(short.partId).toBe(line.partId)
      expect(short.qty).toBeGreaterThan(0)
    }
    const row = out.perLine.find(r => r.lineId === line.id)!
    expect(row.demand).toBe(demand)
    expect(row.own + row.standIns.reduce((n, s) => n + s.qty, 0) + row.short).toBe(demand)
  }
}

const total = (rows: { qty: number }[]) => rows.reduce((n, r) => n + r.qty, 0)

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

function randomInstance(rand: () => number): ReconcileInput {
  const int = (lo: number, hi: number) => lo + Math.floor(rand() * (hi - lo + 1))
  const nParts = int(1, 7)
  const part = () => `p${int(1, nParts)}`
  const lines = Array.from({ length: int(1, 6) }, (_, i) => ({
    id: `L${i}`,
    partId: part(),
    qtyPerKit: int(1, 4),
    ...(rand() < 0.2 ? { allowSwaps: false } : {}),
  }))
  const stock: ReconcileInput['stock'] = []
  for (let p = 1; p <= nParts; p++) {
    if (rand() < 0.15) continue
    stock.push({ partId: `p${p}`, available: int(-2, 14) })
    if (rand() < 0.2) stock.push({ partId: `p${p}`, available: int(-3, 6) })
  }
  const swaps = Array.from({ length: int(0, 9) }, () => ({ from: part(), to: part() }))
  return { lines, stock, swaps }
}

describe('reconcile: hand-made cases (worked by hand, confirmed by javascript-lp-solver as oracle)', () => {
  it('a shared stand-in where a line-by-line greedy pass fails: 1 kit, not 0', () => {
    // Line A (part a, none in stock) may use b or c; line B (part d, none) may use b only.
    // Greedy in line order gives b to A and leaves B short; the exact answer gives A c, B b.
    const input: ReconcileInput = {
      lines: [{ id: 'A', partId: 'a', qtyPerKit: 1 }, { id: 'B', partId: 'd', qtyPerKit: 1 }],
      stock: [{ partId: 'b', available: 1 }, { partId: 'c', available: 1 }],
      swaps: [{ from: 'a', to: 'b' }, { from: 'a', to: 'c' }, { from: 'd', to: 'b' }],
    }
    const out = reconcile(input)
    expect(out.maxKits).toBe(1)
    expect(oracleMaxKits(input)).toBe(1)
    expect(out.allocation).toEqual([{ lineId: 'A', partId: 'c', qty: 1 }, { lineId: 'B', partId: 'b', qty: 1 }])
    expect(out.shortfall).toEqual([])
    expectValid(input, out, 1)
  })

  it('a larger shared-stand-in tangle: 3 kits, greedy would give 2', () => {
    // A: own a(2) + stand-in s; B: own b(0) + stand-in s; qty 1 each. s has 4.
    // At 3 kits: A takes a×2 + s×1, B takes s×3.
    const input: ReconcileInput = {
      lines: [{ id: 'A', partId: 'a', qtyPerKit: 1 }, { id: 'B', partId: 'b', qtyPerKit: 1 }],
      stock: [{ partId: 'a', available: 2 }, { partId: 's', available: 4 }],
      swaps: [{ from: 'a', to: 's' }, { from: 'b', to: 's' }],
    }
    const out = reconcile(input)
    expect(out.maxKits).toBe(3)
    expect(oracleMaxKits(input)).toBe(3)
    expect(out.perLine[0]).toEqual({ lineId: 'A', demand: 3, own: 2, standIns: [{ partId: 's', qty: 1 }], short: 0 })
    expectValid(input, out, 3)
  })

  it('a line with "no stand-ins" uses only its own part', () => {
    const input: ReconcileInput = {
      lines: [{ id: 'Q1', partId: 'bc547', qtyPerKit: 2, allowSwaps: false }],
      stock: [{ partId: 'bc547', available: 3 }, { partId: 'bc548', available: 100 }],
      swaps: [{ from: 'bc547', to: 'bc548' }],
      kits: 4,
    }
    const out = reconcile(input)
    expect(out.maxKits).toBe(1)
    expect(out.shortfall).toEqual([{ lineId: 'Q1', partId: 'bc547', qty: 5 }])
    expect(oracleLeastShortfall(input, 4)).toBe(5)
    expectValid(input, out, 4)
  })

  it('swap rules are not transitive: a→b and b→c do not let c stand in for a', () => {
    const input: ReconcileInput = {
      lines: [{ id: 'R1', partId: 'a', qtyPerKit: 1 }],
      stock: [{ partId: 'c', available: 5 }],
      swaps: [{ from: 'a', to: 'b' }, { from: 'b', to: 'c' }],
    }
    expect(reconcile(input).maxKits).toBe(0)
    expect(oracleMaxKits(input)).toBe(0)
    // The rule is one-way too: a stand-in's own line cannot borrow the original.
    const back = reconcile({ ...input, lines: [{ id: 'R1', partId: 'c', qtyPerKit: 1 }], stock: [{ partId: 'b', available: 5 }] })
    expect(back.maxKits).toBe(0)
  })

  it('over-stock: the scarcest line sets the limit and a lower target has no shortfall', () => {
    const input: ReconcileInput = {
      lines: [
        { id: 'R1', partId: 'r10k', qtyPerKit: 4 },
        { id: 'C1', partId: 'c100n', qtyPerKit: 3 },
      ],
      stock: [{ partId: 'r10k', available: 1000 }, { partId: 'c100n', available: 61 }],
      swaps: [],
    }
    const out = reconcile(input)
    expect(out.maxKits).toBe(20) // floor(61 / 3)
    expect(oracleMaxKits(input)).toBe(20)
    const at12 = reconcile({ ...input, kits: 12 })
    expect(at12.shortfall).toEqual([])
    expect(at12.allocation).toEqual([
      { lineId: 'R1', partId: 'r10k', qty: 48 },
      { lineId: 'C1', partId: 'c100n', qty: 36 },
    ])
  })

  it('zero stock: nothing buildable, the whole demand is short at a target', () => {
    const input: ReconcileInput = {
      lines: [{ id: 'L1', partId: 'x', qtyPerKit: 2 }, { id: 'L2', partId: 'y', qtyPerKit: 1 }],
      stock: [{ partId: 'x', available: 0 }],
      swaps: [{ from: 'x', to: 'y' }],
      kits: 5,
    }
    const out = reconcile(input)
    expect(out.maxKits).toBe(0)
    expect(out.allocation).toEqual([])
    expect(out.shortfall).toEqual([{ lineId: 'L1', partId: 'x', qty: 10 }, { lineId: 'L2', partId: 'y', qty: 5 }])
    expect(oracleLeastShortfall(input, 5)).toBe(15)
  })

  it('lines that share one own part draw on the same stock', () => {
    const input: ReconcileInput = {
      lines: [{ id: 'R1', partId: 'r1k', qtyPerKit: 2 }, { id: 'R7', partId: 'r1k', qtyPerKit: 3 }],
      stock: [{ partId: 'r1k', available: 11 }],
      swaps: [],
    }
    const out = reconcile(input)
    expect(out.maxKits).toBe(2) // floor(11 / 5)
    expect(oracleMaxKits(input)).toBe(2)
    expectValid(input, out, 2)
  })

  it('stock entries of one part add up and a negative sum counts as 0', () => {
    const lines = [{ id: 'L', partId: 'p', qtyPerKit: 1 }]
    expect(reconcile({ lines, stock: [{ partId: 'p', available: 4 }, { partId: 'p', available: 3 }], swaps: [] }).maxKits).toBe(7)
    expect(reconcile({ lines, stock: [{ partId: 'p', available: 4 }, { partId: 'p', available: -1 }], swaps: [] }).maxKits).toBe(3)
    const neg = reconcile({ lines, stock: [{ partId: 'p', available: -4 }], swaps: [], kits: 2 })
    expect(neg.maxKits).toBe(0)
    expect(neg.shortfall).toEqual([{ lineId: 'L', partId: 'p', qty: 2 }])
  })

  it('the allocation prefers the own part and uses stand-ins only for the rest', () => {
    const input: ReconcileInput = {
      lines: [{ id: 'C5', partId: 'c22p', qtyPerKit: 2 }],
      stock: [{ partId: 'c22p', available: 5 }, { partId: 'c27p', available: 9 }],
      swaps: [{ from: 'c22p', to: 'c27p' }],
      kits: 4,
    }
    const out = reconcile(input)
    expect(out.maxKits).toBe(7) // (5 + 9) / 2
    expect(out.allocation).toEqual([{ lineId: 'C5', partId: 'c22p', qty: 5 }, { lineId: 'C5', partId: 'c27p', qty: 3 }])
  })

  it('zero lines: maxKits is 0 and nothing is allocated or short', () => {
    expect(reconcile({ lines: [], stock: [{ partId: 'p', available: 3 }], swaps: [] }))
      .toMatchObject({ maxKits: 0, allocation: [], shortfall: [] })
    expect(reconcile({ lines: [], stock: [], swaps: [], kits: 5 })).toMatchObject({ maxKits: 0, shortfall: [] })
  })

  it('target 0 allocates nothing', () => {
    const out = reconcile({ lines: [{ id: 'L', partId: 'p', qtyPerKit: 1 }], stock: [{ partId: 'p', available: 3 }], swaps: [], kits: 0 })
    expect(out).toMatchObject({ maxKits: 3, allocation: [], shortfall: [] })
  })

  it('bad input throws a clear message', () => {
    const stock = [{ partId: 'p', available: 1 }]
    const line = (qtyPerKit: number, id = 'L1') => ({ id, partId: 'p', qtyPerKit })
    expect(() => reconcile({ lines: [line(0)], stock, swaps: [] })).toThrow(/quantity per kit/)
    expect(() => reconcile({ lines: [line(1.5)], stock, swaps: [] })).toThrow(/quantity per kit/)
    expect(() => reconcile({ lines: [line(-2)], stock, swaps: [] })).toThrow(/quantity per kit/)
    expect(() => reconcile({ lines: [line(1), line(2)], stock, swaps: [] })).toThrow(/"L1" is used twice/)
    expect(() => reconcile({ lines: [line(1)], stock, swaps: [], kits: -1 })).toThrow(/Target kits/)
    expect(() => reconcile({ lines: [line(1)], stock, swaps: [], kits: 2.5 })).toThrow(/Target kits/)
    expect(() => reconcile({ lines: [line(1)], stock, swaps: [], kits: Number.NaN })).toThrow(/Target kits/)
    expect(() => reconcile({ lines: [line(1)], stock: [{ partId: 'p', available: 0.5 }], swaps: [] })).toThrow(/whole number/)
    expect(() => reconcile({ lines: [line(1)], stock, swaps: [{ from: 'p', to: '' }] })).toThrow(/Swap rule 1/)
    expect(() => reconcile({ lines: [line(3)], stock, swaps: [], kits: 2 ** 52 })).toThrow(/too large/)
  })
})

describe('reconcile: 300 seeded random instances against javascript-lp-solver as oracle', () => {
  const rand = mulberry32(20261201)
  const cases = Array.from({ length: 300 }, () => {
    const input = randomInstance(rand)
    return { input, extra: Math.floor(rand() * 4) }
  })

  it('maxKits equals the integer program optimum of javascript-lp-solver (max k, flows integral)', () => {
    for (const { input } of cases) {
      const out = reconcile(input)
      expect(out.maxKits, JSON.stringify(input)).toBe(oracleMaxKits(input))
      expect(total(out.shortfall), JSON.stringify(input)).toBe(0)
      expectValid(input, out, out.maxKits)
    }
  })

  it('least total shortfall at a target equals the transportation LP minimum of javascript-lp-solver', () => {
    for (const { input, extra } of cases) {
      const target = reconcile(input).maxKits + extra
      const out = reconcile({ ...input, kits: target })
      expect(total(out.shortfall), JSON.stringify({ ...input, target })).toBe(oracleLeastShortfall(input, target))
      expectValid(input, out, target)
    }
  })

  it('one kit more than maxKits is always short (algebra: maxKits is the largest feasible target)', () => {
    for (const { input } of cases) {
      const out = reconcile(input)
      expect(total(reconcile({ ...input, kits: out.maxKits + 1 }).shortfall)).toBeGreaterThan(0)
    }
  })
})
