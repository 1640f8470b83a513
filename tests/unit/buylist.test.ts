import { describe, expect, it } from 'vitest'
import { bestPurchase, buyList, sparesAllowance, type Offer } from '../../shared/utils/buylist'

// Check values are worked by hand from the algebra total = unitPrice(qty) × qty, with
// qty = packs × packSize ≥ max(need, minQty); random instances are checked against a
// brute-force enumeration of every pack count (the oracle written below).

let nextId = 0
function offer(o: Partial<Offer> & Pick<Offer, 'breaks'>): Offer {
  return { id: `o${++nextId}`, partId: 'p', supplier: 'Acme', currency: 'EUR', minQty: 0, packSize: 1, ...o }
}

/** Oracle: try every pack count up to a bound well past the last break, need and minimum. */
function bruteForce(need: number, offers: Offer[]) {
  let best: { offerId: string; qty: number; totalMinor: number } | null = null
  for (const o of offers) {
    const top = Math.max(need, o.minQty, ...o.breaks.map(b => b.qty))
    for (let packs = 1; packs * o.packSize <= top + 3 * o.packSize; packs++) {
      const qty = packs * o.packSize
      if (qty < need || qty < o.minQty) continue
      const applicable = o.breaks.filter(b => b.qty <= qty).sort((a, b) => b.qty - a.qty)
      if (applicable.length === 0) continue
      const totalMinor = applicable[0]!.unitPriceMinor * qty
      if (!best || totalMinor < best.totalMinor || (totalMinor === best.totalMinor && qty < best.qty))
        best = { offerId: o.id, qty, totalMinor }
    }
  }
  return best
}

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

describe('bestPurchase: worked examples (algebra: total = unit price at qty × qty)', () => {
  it('need 90 at 1–99: 10, 100+: 6 → buy 100 for 600, not 90 for 900', () => {
    const o = offer({ breaks: [{ qty: 1, unitPriceMinor: 10 }, { qty: 100, unitPriceMinor: 6 }] })
    expect(bestPurchase(90, [o])).toEqual({ offerId: o.id, qty: 100, packs: 100, unitPriceMinor: 6, totalMinor: 600, spare: 10 })
  })

  it('need 50 at the same breaks → 50 × 10 = 500 beats 100 × 6 = 600', () => {
    const o = offer({ breaks: [{ qty: 1, unitPriceMinor: 10 }, { qty: 100, unitPriceMinor: 6 }] })
    expect(bestPurchase(50, [o])).toMatchObject({ qty: 50, totalMinor: 500, spare: 0 })
  })

  it('packs of 25 with a minimum of 50: need 30 → 2 packs (50), need 60 → 3 packs (75)', () => {
    const o = offer({ packSize: 25, minQty: 50, breaks: [{ qty: 1, unitPriceMinor: 4 }] })
    expect(bestPurchase(30, [o])).toMatchObject({ qty: 50, packs: 2, totalMinor: 200, spare: 20 })
    expect(bestPurchase(60, [o])).toMatchObject({ qty: 75, packs: 3, totalMinor: 300, spare: 15 })
  })

  it('a minimum that is not a whole number of packs rounds up to packs: min 30, pack 25 → 50', () => {
    const o = offer({ packSize: 25, minQty: 30, breaks: [{ qty: 0, unitPriceMinor: 3 }] })
    expect(bestPurchase(1, [o])).toMatchObject({ qty: 50, packs: 2, totalMinor: 150 })
  })

  it('a break threshold is rounded up to whole packs: break at 110 with packs of 25 → 125', () => {
    // 100 × 9 = 900; 125 × 7 = 875 (the first pack multiple ≥ 110).
    const o = offer({ packSize: 25, breaks: [{ qty: 1, unitPriceMinor: 9 }, { qty: 110, unitPriceMinor: 7 }] })
    expect(bestPurchase(100, [o])).toMatchObject({ qty: 125, packs: 5, unitPriceMinor: 7, totalMinor: 875, spare: 25 })
  })

  it('below the first break nothing is on sale: first break at 10 → buy 10', () => {
    const o = offer({ breaks: [{ qty: 10, unitPriceMinor: 5 }] })
    expect(bestPurchase(3, [o])).toMatchObject({ qty: 10, totalMinor: 50 })
  })

  it('two suppliers: the cheaper total wins whatever the unit price', () => {
    // A: 40 at 12 = 480. B: packs of 50 at 9 = 450.
    const a = offer({ supplier: 'North', breaks: [{ qty: 1, unitPriceMinor: 12 }] })
    const b = offer({ supplier: 'South', packSize: 50, breaks: [{ qty: 1, unitPriceMinor: 9 }] })
    expect(bestPurchase(40, [a, b])).toMatchObject({ offerId: b.id, qty: 50, totalMinor: 450 })
    // At need 30: A 360, B 450.
    expect(bestPurchase(30, [a, b])).toMatchObject({ offerId: a.id, qty: 30, totalMinor: 360 })
  })

  it('equal totals: the smaller quantity, then the earlier offer', () => {
    const a = offer({ breaks: [{ qty: 1, unitPriceMinor: 6 }] }) // 10 × 6 = 60
    const b = offer({ packSize: 12, breaks: [{ qty: 1, unitPriceMinor: 5 }] }) // 12 × 5 = 60
    expect(bestPurchase(10, [b, a])).toMatchObject({ offerId: a.id, qty: 10 })
    const c = offer({ breaks: [{ qty: 1, unitPriceMinor: 6 }] })
    expect(bestPurchase(10, [a, c])).toMatchObject({ offerId: a.id })
  })

  it('no offers → null', () => {
    expect(bestPurchase(5, [])).toBeNull()
  })

  it('offers in two currencies need exchange rates to be compared', () => {
    const eur = offer({ currency: 'EUR', breaks: [{ qty: 1, unitPriceMinor: 10 }] })
    const gbp = offer({ currency: 'GBP', breaks: [{ qty: 1, unitPriceMinor: 9 }] })
    expect(() => bestPurchase(10, [eur, gbp])).toThrow(/EUR and GBP/)
    // 1 GBP minor unit worth 1.2 EUR minor units: 9 × 1.2 = 10.8 > 10 (rates invented).
    expect(bestPurchase(10, [eur, gbp], { rates: { EUR: 1, GBP: 1.2 } })).toMatchObject({ offerId: eur.id, totalMinor: 100 })
    expect(bestPurchase(10, [eur, gbp], { rates: { EUR: 1, GBP: 1.1 } })).toMatchObject({ offerId: gbp.id, totalMinor: 90 })
  })

  it('bad input throws a clear message', () => {
    const ok = { breaks: [{ qty: 1, unitPriceMinor: 1 }] }
    expect(() => bestPurchase(0, [offer(ok)])).toThrow(/Quantity needed/)
    expect(() => bestPurchase(2.5, [offer(ok)])).toThrow(/Quantity needed/)
    expect(() => bestPurchase(5, [offer({ ...ok, packSize: 0 })])).toThrow(/pack size/)
    expect(() => bestPurchase(5, [offer({ ...ok, minQty: -1 })])).toThrow(/minimum order/)
    expect(() => bestPurchase(5, [offer({ breaks: [] })])).toThrow(/has no price/)
    expect(() => bestPurchase(5, [offer({ breaks: [{ qty: 1, unitPriceMinor: 1.5 }] })])).toThrow(/whole minor units/)
    expect(() => bestPurchase(5, [offer({ breaks: [{ qty: 1, unitPriceMinor: 2 }, { qty: 1, unitPriceMinor: 1 }] })])).toThrow(/two prices/)
    expect(() => bestPurchase(5, [offer({ ...ok, partId: 'a' }), offer({ ...ok, partId: 'b' })])).toThrow(/one part/)
  })
})

describe('bestPurchase against a brute-force enumeration of all pack counts (oracle in this file)', () => {
  it('500 seeded random offers sets: same least total, same quantity (ties: fewer units)', () => {
    const rand = mulberry32(4242)
    const int = (lo: number, hi: number) => lo + Math.floor(rand() * (hi - lo + 1))
    for (let n = 0; n < 500; n++) {
      const offers = Array.from({ length: int(1, 3) }, () => offer({
        packSize: rand() < 0.4 ? 1 : int(2, 30),
        minQty: rand() < 0.5 ? 0 : int(1, 120),
        // Random thresholds and prices, not always falling: the search must not assume order.
        breaks: [...new Set(Array.from({ length: int(1, 4) }, () => int(0, 300)))]
          .map(qty => ({ qty, unitPriceMinor: int(1, 100) })),
      }))
      const need = int(1, 400)
      const got = bestPurchase(need, offers)
      const want = bruteForce(need, offers)
      const ctx = JSON.stringify({ need, offers })
      expect(got?.totalMinor, ctx).toBe(want?.totalMinor)
      expect(got?.qty, ctx).toBe(want?.qty)
      if (got) {
        const o = offers.find(x => x.id === got.offerId)!
        expect(got.qty % o.packSize).toBe(0)
        expect(got.packs * o.packSize).toBe(got.qty)
        expect(got.unitPriceMinor * got.qty).toBe(got.totalMinor)
        expect(got.spare).toBe(got.qty - need)
      }
    }
  })
})

describe('buyList', () => {
  const r10k = offer({ partId: 'r10k', supplier: 'North', breaks: [{ qty: 1, unitPriceMinor: 2 }, { qty: 100, unitPriceMinor: 1 }] })
  const bc547 = offer({ partId: 'bc547', supplier: 'South', supplierRef: 'S-77', packSize: 10, breaks: [{ qty: 1, unitPriceMinor: 15 }] })
  const c100n = offer({ partId: 'c100n', supplier: 'North', breaks: [{ qty: 1, unitPriceMinor: 5 }] })

  it('groups by supplier with per-group and grand totals (algebra: sums of unit × qty)', () => {
    const out = buyList(
      [{ partId: 'r10k', qty: 80 }, { partId: 'bc547', qty: 12 }, { partId: 'c100n', qty: 7 }, { partId: 'xtal', qty: 2 }],
      [r10k, bc547, c100n],
    )
    // r10k: 100 × 1 = 100 is cheaper than 80 × 2 = 160; bc547: 2 packs of 10 × 15 = 300.
    expect(out.items.map(i => [i.partId, i.qty, i.totalMinor])).toEqual([['r10k', 100, 100], ['bc547', 20, 300], ['c100n', 7, 35]])
    expect(out.items[1]).toMatchObject({ supplier: 'South', supplierRef: 'S-77', currency: 'EUR', need: 12, spare: 8, packs: 2 })
    expect(out.bySupplier.map(g => [g.supplier, g.currency, g.totalMinor, g.items.length])).toEqual([['North', 'EUR', 135, 2], ['South', 'EUR', 300, 1]])
    expect(out.totalMinor).toBe(435)
    expect(out.currency).toBe('EUR')
    expect(out.uncovered).toEqual([{ partId: 'xtal', qty: 2 }])
  })

  it('needs of one part add up, spares are added, zero needs are skipped', () => {
    const out = buyList(
      [{ partId: 'c100n', qty: 4 }, { partId: 'c100n', qty: 3 }, { partId: 'r10k', qty: 0 }],
      [r10k, c100n],
      { spares: [{ partId: 'c100n', qty: 2 }] },
    )
    expect(out.items).toHaveLength(1)
    expect(out.items[0]).toMatchObject({ partId: 'c100n', need: 9, qty: 9, totalMinor: 45 })
  })

  it('several currencies: no grand total, totals per currency instead', () => {
    const gbp = offer({ partId: 'bc547', supplier: 'Island', currency: 'GBP', breaks: [{ qty: 1, unitPriceMinor: 20 }] })
    const out = buyList([{ partId: 'c100n', qty: 10 }, { partId: 'bc547', qty: 3 }], [c100n, gbp])
    expect(out.mixedCurrencies).toBe(true)
    expect(out.totalMinor).toBeNull()
    expect(out.currency).toBeNull()
    expect(out.totalsByCurrency).toEqual([{ currency: 'EUR', totalMinor: 50 }, { currency: 'GBP', totalMinor: 60 }])
    expect(out.bySupplier.map(g => [g.supplier, g.currency, g.totalMinor])).toEqual([['Island', 'GBP', 60], ['North', 'EUR', 50]])
  })

  it('one currency only: offers in others are left out, possibly leaving parts uncovered', () => {
    const gbp = offer({ partId: 'bc547', supplier: 'Island', currency: 'GBP', breaks: [{ qty: 1, unitPriceMinor: 1 }] })
    const out = buyList([{ partId: 'bc547', qty: 3 }, { partId: 'c100n', qty: 1 }], [gbp, c100n], { currency: 'EUR' })
    expect(out.items.map(i => i.partId)).toEqual(['c100n'])
    expect(out.uncovered).toEqual([{ partId: 'bc547', qty: 3 }])
  })

  it('an empty list totals 0', () => {
    expect(buyList([], [r10k])).toMatchObject({ items: [], bySupplier: [], totalMinor: 0, uncovered: [], mixedCurrencies: false })
  })

  it('bad needs throw', () => {
    expect(() => buyList([{ partId: 'r10k', qty: -1 }], [r10k])).toThrow(/whole number of 0 or more/)
    expect(() => buyList([{ partId: 'r10k', qty: 1 }], [r10k, { ...c100n, id: r10k.id }])).toThrow(/share an id/)
  })
})

describe('sparesAllowance', () => {
  const lines = [
    { partId: 'r10k', kind: 'resistor', qtyPerKit: 4 },
    { partId: 'r1k', kind: 'resistor', qtyPerKit: 1 },
    { partId: 'r10k', kind: 'resistor', qtyPerKit: 3 },
    { partId: 'ic1', kind: 'ic', qtyPerKit: 1 },
    { partId: 'c100n', kind: 'capacitor', qtyPerKit: 100 },
  ]

  it('one extra of each small passive per kit (common practice): 20 kits → 20 of each resistor', () => {
    expect(sparesAllowance(lines, 20, { resistor: { perKit: 1 } }))
      .toEqual([{ partId: 'r10k', qty: 20 }, { partId: 'r1k', qty: 20 }])
  })

  it('a percentage of the part\'s total, rounded up (algebra): 10 % of (4 + 3) × 3 = 2.1 → 3', () => {
    expect(sparesAllowance(lines, 3, { resistor: { percent: 10 } }))
      .toEqual([{ partId: 'r10k', qty: 3 }, { partId: 'r1k', qty: 1 }])
  })

  it('exact percentages do not round up by floating error: 7 % of 100 = 7, 0.1 % of 1000 = 1', () => {
    expect(sparesAllowance(lines, 1, { capacitor: { percent: 7 } })).toEqual([{ partId: 'c100n', qty: 7 }])
    expect(sparesAllowance(lines, 10, { capacitor: { percent: 0.1 } })).toEqual([{ partId: 'c100n', qty: 1 }])
  })

  it('with both a per-kit and a percent rule the larger applies; "*" covers other kinds', () => {
    // c100n at 2 kits: perKit 1 → 2; 5 % of 200 → 10. ic1: '*' perKit 1 → 2.
    expect(sparesAllowance(lines, 2, { capacitor: { perKit: 1, percent: 5 }, '*': { perKit: 1 }, resistor: {} }))
      .toEqual([{ partId: 'ic1', qty: 2 }, { partId: 'c100n', qty: 10 }])
  })

  it('bad input throws', () => {
    expect(() => sparesAllowance(lines, -1, {})).toThrow(/Number of kits/)
    expect(() => sparesAllowance(lines, 1, { resistor: { percent: -5 } })).toThrow(/percent for resistor/)
    expect(() => sparesAllowance([{ partId: 'x', kind: 'a', qtyPerKit: 1 }, { partId: 'x', kind: 'b', qtyPerKit: 1 }], 1, {}))
      .toThrow(/both a and b/)
  })
})
