import { describe, expect, it } from 'vitest'
import solver from 'javascript-lp-solver'
import { buildableInMix, mixLines, splitByMix, type MixChoice } from '../../server/utils/reconcile-data'
import type { ReconcileStock, ReconcileSwap } from '../../shared/utils/reconcile'

// A small seeded generator, so a failure can be replayed.
function rng(seed: number) {
  let s = seed >>> 0
  return () => {
    s = (s * 1664525 + 1013904223) >>> 0
    return s / 2 ** 32
  }
}

/**
 * Oracle: javascript-lp-solver (npm) decides whether a mix with these per-choice kit counts fits the
 * stock, as a transportation LP over (choice, line, part) with no merging of lines. Its constraint
 * matrix is totally unimodular, so the LP is feasible exactly when whole parts can be allocated.
 */
function lpFits(choices: MixChoice[], counts: number[], stock: ReconcileStock[], swaps: ReconcileSwap[]) {
  const constraints: Record<string, { equal?: number, max?: number }> = {}
  const variables: Record<string, Record<string, number>> = {}
  const have = new Map(stock.map(s => [s.partId, Math.max(0, s.available)]))
  choices.forEach((c, ci) => c.lines.forEach((l) => {
    const row = `d:${ci}:${l.id}`
    constraints[row] = { equal: l.qty * (counts[ci] ?? 0) }
    const parts = [l.partId, ...(l.noStandIns ? [] : swaps.filter(s => s.from === l.partId).map(s => s.to))]
    for (const p of new Set(parts)) {
      constraints[`s:${p}`] = { max: have.get(p) ?? 0 }
      variables[`x:${ci}:${l.id}:${p}`] = { [row]: 1, [`s:${p}`]: 1, cost: 0 }
    }
  }))
  return (solver.Solve({ optimize: 'cost', opType: 'min', constraints, variables }) as { feasible: boolean }).feasible
}

describe('splitByMix (the D\'Hondt rule)', () => {
  it('matches the usual worked example: 100 000, 80 000, 30 000, 20 000 votes, 8 seats → 4, 3, 1, 0 (D\'Hondt method, from memory)', () => {
    expect(splitByMix([100_000, 80_000, 30_000, 20_000], 8)).toEqual([4, 3, 1, 0])
  })

  it('splits 20 kits of an 18 : 12 mix as 12 and 8 (worked by hand: the 20th quotient is 18/12 = 12/8 = 1.5)', () => {
    expect(splitByMix([18, 12], 19)).toEqual([12, 7])
    expect(splitByMix([18, 12], 20)).toEqual([12, 8])
    expect(splitByMix([18, 12], 21)).toEqual([13, 8])
  })

  it('gives back the mix counts at their sum, only grows, and never gives kits to a zero count', () => {
    const r = rng(7)
    for (let t = 0; t < 200; t++) {
      const weights = Array.from({ length: 1 + Math.floor(r() * 4) }, () => Math.floor(r() * 30))
      if (!weights.some(w => w > 0)) weights[0] = 1
      const sum = weights.reduce((a, b) => a + b, 0)
      expect(splitByMix(weights, sum)).toEqual(weights)
      let prev = weights.map(() => 0)
      for (let n = 0; n <= sum + 5; n++) {
        const s = splitByMix(weights, n)
        expect(s.reduce((a, b) => a + b, 0)).toBe(n)
        s.forEach((x, i) => {
          expect(x).toBeGreaterThanOrEqual(prev[i]!)
          if (weights[i] === 0) expect(x).toBe(0)
        })
        prev = s
      }
    }
  })

  it('refuses fractional or negative numbers', () => {
    expect(() => splitByMix([1, 2], 2.5)).toThrow(/whole number/)
    expect(() => splitByMix([1, -2], 2)).toThrow(/whole numbers/)
    expect(() => splitByMix([0, 0], 2)).toThrow(/at least one kit/)
  })
})

describe('mixLines', () => {
  it('asks for a base line once, for the kits of every choice, and an option line for its own kits', () => {
    const choices: MixChoice[] = [
      { lines: [{ id: 'base', partId: 'R', qty: 2 }, { id: 'x1', partId: 'X', qty: 1 }] },
      { lines: [{ id: 'base', partId: 'R', qty: 2 }, { id: 'y1', partId: 'Y', qty: 3, noStandIns: true }] },
    ]
    expect(mixLines(choices, [18, 12])).toEqual([
      { id: 'base', partId: 'R', qtyPerKit: 60, allowSwaps: true },
      { id: 'x1', partId: 'X', qtyPerKit: 18, allowSwaps: true },
      { id: 'y1', partId: 'Y', qtyPerKit: 36, allowSwaps: false },
    ])
    expect(mixLines(choices, [0, 2]).map(l => l.id)).toEqual(['base', 'y1'])
  })
})

describe('buildableInMix against javascript-lp-solver as oracle', () => {
  it('a worked case: 18 × 40 m and 12 × 80 m, 12 of the 40 m crystal in stock → 20 kits (12 + 8)', () => {
    const choices: MixChoice[] = [
      { lines: [{ id: 'b', partId: 'board', qty: 1 }, { id: 'x40', partId: 'xtal40', qty: 1 }] },
      { lines: [{ id: 'b', partId: 'board', qty: 1 }, { id: 'x80', partId: 'xtal80', qty: 1 }] },
    ]
    const stock = [{ partId: 'board', available: 45 }, { partId: 'xtal40', available: 12 }, { partId: 'xtal80', available: 30 }]
    expect(buildableInMix(choices, [18, 12], stock, [])).toEqual({ kits: 20, counts: [12, 8], capped: false })
    expect(lpFits(choices, [12, 8], stock, [])).toBe(true)
    expect(lpFits(choices, [13, 8], stock, [])).toBe(false)
  })

  it('on 150 seeded random mixes with shared stand-ins: the answer fits and one kit more does not', () => {
    const r = rng(2026)
    for (let t = 0; t < 150; t++) {
      const parts = Array.from({ length: 3 + Math.floor(r() * 5) }, (_, i) => `p${i}`)
      const pick = () => parts[Math.floor(r() * parts.length)]!
      const base = Array.from({ length: 1 + Math.floor(r() * 3) }, (_, i) => ({ id: `b${i}`, partId: pick(), qty: 1 + Math.floor(r() * 3), noStandIns: r() < 0.2 }))
      const choices: MixChoice[] = Array.from({ length: 1 + Math.floor(r() * 3) }, (_, c) => ({
        lines: [...base, ...Array.from({ length: Math.floor(r() * 3) }, (_, i) => ({ id: `o${c}-${i}`, partId: pick(), qty: 1 + Math.floor(r() * 2) }))],
      }))
      const weights = choices.map(() => Math.floor(r() * 20))
      if (!weights.some(w => w > 0)) weights[0] = 5
      const stock = parts.map(p => ({ partId: p, available: Math.floor(r() * 60) }))
      const swaps = Array.from({ length: Math.floor(r() * 6) }, () => ({ from: pick(), to: pick() })).filter(s => s.from !== s.to)
      const { kits, counts } = buildableInMix(choices, weights, stock, swaps)
      expect(counts).toEqual(splitByMix(weights, kits))
      expect(lpFits(choices, counts, stock, swaps), `instance ${t}: ${kits} kits should fit`).toBe(true)
      expect(lpFits(choices, splitByMix(weights, kits + 1), stock, swaps), `instance ${t}: ${kits + 1} kits should not fit`).toBe(false)
    }
  })
})
