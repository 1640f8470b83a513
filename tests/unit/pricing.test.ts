import { describe, expect, it } from 'vitest'
import fc from 'fast-check'
import { basisPoints, feeOf, formatMoney, grossUp, netOf, priceKit, roundUpToStep, unitCost, type KitPricingInput } from '../../shared/utils/pricing'

// CardFee check values: the derived algebra charge = (net + fixed) / (1 - rate), rounded up to a
// whole minor unit (handbook sources.md, "fees"), with the fee's percentage part rounded half-up.
const card = { percent: 2.9, fixedMinor: 30 }

describe('grossUp', () => {
  it('sources.md worked example: net 100.00 at 2.9 % + 0.30 -> 103.30', () => {
    expect(grossUp(10000, card)).toBe(10330)
  })

  it('sources.md worked example: net 96.80 at 2.9 % + 0.30 -> 100.00', () => {
    expect(grossUp(9680, card)).toBe(10000)
  })

  it('a zero net still pays the fixed fee: 0.31 (hand-worked: 0.31 - (0.01 + 0.30) = 0)', () => {
    expect(grossUp(0, card)).toBe(31)
    expect(netOf(30, card)).toBe(-1)
  })

  it('no fee at all: the charge is the net', () => {
    expect(grossUp(0, { percent: 0, fixedMinor: 0 })).toBe(0)
    expect(grossUp(1234, { percent: 0, fixedMinor: 0 })).toBe(1234)
  })

  it('percent 0: only the fixed part is added', () => {
    expect(grossUp(1000, { percent: 0, fixedMinor: 20 })).toBe(1020)
  })

  it('percent 99.99: the half-up fee lets 9950.01 do, below the algebra\'s 10000.00 (hand-worked)', () => {
    const fee = { percent: 99.99, fixedMinor: 0 }
    expect(grossUp(100, fee)).toBe(995001)
    expect(netOf(995001, fee)).toBe(100) // 995001 - round(994901.4999)
    expect(netOf(995000, fee)).toBe(99) // 995000 - round(994900.5)
  })

  it('rounding boundary: 2.9 % of 5.00 is 0.145, rounded half-up to 0.15, so 5.00 is never the answer', () => {
    expect(feeOf(500, card)).toBe(45)
    expect(grossUp(455, card)).toBe(499) // 4.99 - 0.14 - 0.30 = 4.55
    expect(grossUp(456, card)).toBe(501) // 5.00 nets only 4.55; 5.01 - 0.15 - 0.30 = 4.56
  })

  it('rounding boundary at 50 %: half a penny rounds up (hand-worked)', () => {
    const half = { percent: 50, fixedMinor: 0 }
    expect([1, 2, 3].map(n => grossUp(n, half))).toEqual([2, 4, 6])
  })

  it('a negative or fractional net is refused', () => {
    expect(() => grossUp(-1, card)).toThrow('The net amount must not be negative, got -1.')
    expect(() => grossUp(10.5, card)).toThrow('The net amount must be a whole number of minor units, got 10.5.')
  })

  it('a negative fee, a fee of 100 % or more, or more than two decimals is refused', () => {
    expect(() => grossUp(100, { percent: -1, fixedMinor: 0 })).toThrow(/0 or more/)
    expect(() => grossUp(100, { percent: 1, fixedMinor: -5 })).toThrow(/must not be negative/)
    expect(() => grossUp(100, { percent: 100, fixedMinor: 0 })).toThrow(/below 100 %/)
    expect(() => grossUp(100, { percent: 2.999, fixedMinor: 0 })).toThrow(/two decimals/)
    expect(() => grossUp(100, { percent: Number.NaN, fixedMinor: 0 })).toThrow(/percentage/)
  })

  it('percentages with two decimals are read exactly (1.75 % = 175 bp, 2.9 % = 290 bp)', () => {
    expect(basisPoints(1.75, 'x')).toBe(175)
    expect(basisPoints(2.9, 'x')).toBe(290)
    expect(basisPoints(0.07, 'x')).toBe(7)
  })

  it('property: net(r) >= net and net(r - 1) < net', () => {
    const fee = fc.record({ percent: fc.integer({ min: 0, max: 9999 }).map(bp => bp / 100), fixedMinor: fc.integer({ min: 0, max: 1000 }) })
    fc.assert(fc.property(fc.integer({ min: 0, max: 10_000_000 }), fee, (net, f) => {
      const r = grossUp(net, f)
      expect(netOf(r, f)).toBeGreaterThanOrEqual(net)
      if (r > 0) expect(netOf(r - 1, f)).toBeLessThan(net)
    }), { numRuns: 500 })
  })

  it('property: agrees with a plain search upwards from 0 on small amounts', () => {
    const fee = fc.record({ percent: fc.integer({ min: 0, max: 5000 }).map(bp => bp / 100), fixedMinor: fc.integer({ min: 0, max: 50 }) })
    fc.assert(fc.property(fc.integer({ min: 0, max: 500 }), fee, (net, f) => {
      let c = 0
      while (netOf(c, f) < net) c++
      expect(grossUp(net, f)).toBe(c)
    }), { numRuns: 200 })
  })
})

describe('feeOf and netOf', () => {
  it('fee and net of the worked charge 103.30: 3.30 and 100.00', () => {
    expect(feeOf(10330, card)).toBe(330)
    expect(netOf(10330, card)).toBe(10000)
  })

  it('a negative charge is refused', () => {
    expect(() => feeOf(-1, card)).toThrow(/must not be negative/)
  })
})

describe('roundUpToStep', () => {
  it('rounds up to the next 0.50', () => {
    expect([0, 1, 1234, 1250, 1251].map(m => roundUpToStep(m, 50))).toEqual([0, 50, 1250, 1250, 1300])
  })

  it('a step of 1 changes nothing', () => {
    expect(roundUpToStep(1237, 1)).toBe(1237)
  })

  it('a step of 0 or a fractional step is refused', () => {
    expect(() => roundUpToStep(100, 0)).toThrow(/1 or more/)
    expect(() => roundUpToStep(100, 2.5)).toThrow(/whole number/)
  })
})

// unitCost check values: weighted average and first-in-first-out costing (common practice,
// from memory), worked by hand.
describe('unitCost', () => {
  const older = { qty: 10, unitCostMinor: 5, receivedAt: '2026-01-05' }
  const newer = { qty: 100, unitCostMinor: 3, receivedAt: new Date('2026-03-01') }

  it('average: 100 at 2 and 100 at 3 average 2.5; 3 units = 7.5, rounded half-up on the total to 8', () => {
    const lots = [{ qty: 100, unitCostMinor: 2, receivedAt: '2026-01-01' }, { qty: 100, unitCostMinor: 3, receivedAt: '2026-02-01' }]
    expect(unitCost(lots, 3, 'average')).toEqual({ totalMinor: 8, covered: true, shortQty: 0 })
  })

  it('fifo takes the oldest lot first, whatever the input order: 10 x 5 + 5 x 3 = 65', () => {
    expect(unitCost([newer, older], 15, 'fifo')).toEqual({ totalMinor: 65, covered: true, shortQty: 0 })
  })

  it('fifo beyond the lots uses the newest price and is flagged: 10 x 5 + 110 x 3 = 380', () => {
    expect(unitCost([older, newer], 120, 'fifo')).toEqual({ totalMinor: 380, covered: false, shortQty: 10 })
  })

  it('average beyond the lots uses the average and is flagged: 120 x 350/110 = 381.8 -> 382', () => {
    expect(unitCost([older, newer], 120, 'average')).toEqual({ totalMinor: 382, covered: false, shortQty: 10 })
  })

  it('fractions of a minor unit: 3 resistors at 0.5 = 1.5 -> 2; 7 at 0.25 = 1.75 -> 2', () => {
    expect(unitCost([{ qty: 1000, unitCostMinor: 0.5, receivedAt: '2026-01-01' }], 3, 'fifo').totalMinor).toBe(2)
    expect(unitCost([{ qty: 1000, unitCostMinor: 0.25, receivedAt: '2026-01-01' }], 7, 'average').totalMinor).toBe(2)
  })

  it('no lots: cost 0, covered only when nothing is needed', () => {
    expect(unitCost([], 2, 'fifo')).toEqual({ totalMinor: 0, covered: false, shortQty: 2 })
    expect(unitCost([], 0, 'average')).toEqual({ totalMinor: 0, covered: true, shortQty: 0 })
  })

  it('empty lots still give a last known price', () => {
    expect(unitCost([{ qty: 0, unitCostMinor: 12, receivedAt: '2026-01-01' }], 2, 'average')).toEqual({ totalMinor: 24, covered: false, shortQty: 2 })
  })

  it('bad lots and quantities are refused with the lot number', () => {
    expect(() => unitCost([older, { ...newer, qty: -1 }], 1, 'fifo')).toThrow(/^Lot 2: quantity/)
    expect(() => unitCost([{ ...older, unitCostMinor: 0.00001 }], 1, 'fifo')).toThrow(/4 decimals/)
    expect(() => unitCost([{ ...older, receivedAt: 'soon' }], 1, 'fifo')).toThrow(/"soon" cannot be read/)
    expect(() => unitCost([older], 1.5, 'fifo')).toThrow(/quantity needed/)
  })
})

// An invented CW receiver kit, priced by hand (each step commented).
const kit: KitPricingInput = {
  lines: [
    { partId: 'res-10k', qtyPerKit: 5 },
    { partId: 'cap-100n', qtyPerKit: 3 },
    { partId: 'ic-mixer', qtyPerKit: 1 },
    { partId: 'res-10k', qtyPerKit: 2 },
  ],
  lotsByPart: {
    'res-10k': [{ qty: 1000, unitCostMinor: 0.5, receivedAt: '2026-01-10' }], // 7 x 0.5 = 3.5 -> 4
    'cap-100n': [{ qty: 100, unitCostMinor: 4, receivedAt: '2026-01-10' }], // 3 x 4 = 12
    'ic-mixer': [{ qty: 10, unitCostMinor: 180, receivedAt: '2026-04-01' }, { qty: 1, unitCostMinor: 150, receivedAt: '2025-11-01' }], // fifo: 150
  },
  method: 'fifo',
  extras: { boardMinor: 250, enclosureMinor: 400, bagMinor: 10, labelMinor: 5 }, // 665
  sparesPercent: 10, // 10 % of 166 = 16.6 -> 17
  overheadMinor: 100,
  marginPercent: 20,
  fee: card,
  stepMinor: 50,
}

describe('priceKit', () => {
  it('costs, margin and net, worked by hand', () => {
    const p = priceKit(kit)
    expect(p.partsMinor).toBe(166) // 4 + 12 + 150
    expect(p.extrasMinor).toBe(665)
    expect(p.sparesMinor).toBe(17)
    expect(p.costMinor).toBe(948) // 166 + 665 + 17 + 100
    expect(p.marginMinor).toBe(190) // 20 % of 948 = 189.6
    expect(p.netMinor).toBe(1138)
    expect(p.missingCosts).toEqual([])
    expect(p.warnings).toEqual([])
  })

  it('member price: gross-up of 11.38 is 12.03, rounded up to 12.50; fee 0.36 + 0.30', () => {
    const p = priceKit(kit)
    expect(p.memberPriceMinor).toBe(1250)
    expect(p.feeMember).toBe(66)
  })

  it('non-member price: net plus a 1.00 surcharge, 12.38 -> 13.06 -> 13.50; fee 0.39 + 0.30', () => {
    const p = priceKit({ ...kit, nonMemberSurchargeMinor: 100 })
    expect(p.nonMemberNetMinor).toBe(1238)
    expect(p.nonMemberPriceMinor).toBe(1350)
    expect(p.feeNonMember).toBe(69)
    expect(p.memberPriceMinor).toBe(1250)
  })

  it('a percentage surcharge: 10 % of 11.38 = 1.138 -> 1.14', () => {
    expect(priceKit({ ...kit, nonMemberSurchargePercent: 10 }).nonMemberNetMinor).toBe(1252)
  })

  it('the breakdown uses plain labels and adds up to the member price', () => {
    const p = priceKit(kit)
    expect(p.breakdown.map(b => b.label)).toEqual([
      'Parts', 'Board', 'Enclosure', 'Bag', 'Label', 'Spares allowance (10 % of parts)', 'Overhead', 'Cost of one kit',
      'Margin (20 % of cost)', 'Net to the club', 'Card fee', 'Rounding up to the price step', 'Member price',
      'Card fee (non-member)', 'Rounding up to the price step (non-member)', 'Non-member price',
    ])
    const get = (label: string) => p.breakdown.find(b => b.label === label)!.minor
    expect(get('Net to the club') + get('Card fee') + get('Rounding up to the price step')).toBe(get('Member price'))
    expect(get('Rounding up to the price step')).toBe(46) // 12.50 - 0.66 - 11.38
  })

  it('a member discount comes off the net; below cost it is flagged', () => {
    const p = priceKit({ ...kit, memberDiscountPercent: 20 }) // 20 % of 11.38 = 2.276 -> 2.28
    expect(p.memberNetMinor).toBe(910)
    expect(p.breakdown.find(b => b.label === 'Member discount (20 %)')!.minor).toBe(-228)
    expect(p.warnings).toEqual(['The member discount takes the member price below the cost of the kit.'])
  })

  it('average costing changes the mixer\'s cost: (150 + 1800) / 11 = 177.3 -> 177', () => {
    expect(priceKit({ ...kit, method: 'average' }).partsMinor).toBe(4 + 12 + 177)
  })

  it('parts without enough stock are listed and warned about', () => {
    const p = priceKit({ ...kit, lines: [...kit.lines, { partId: 'knob', qtyPerKit: 1 }, { partId: 'ic-mixer', qtyPerKit: 20 }] })
    expect(p.missingCosts).toEqual(['ic-mixer', 'knob'])
    expect(p.warnings[0]).toBe('Stock does not cover one kit for: ic-mixer, knob; their cost is estimated.')
  })

  it('bad inputs are refused with plain messages', () => {
    expect(() => priceKit({ ...kit, overheadMinor: -1 })).toThrow('Overhead must not be negative, got -1.')
    expect(() => priceKit({ ...kit, memberDiscountPercent: 100 })).toThrow(/member discount must be below 100 %/)
    expect(() => priceKit({ ...kit, lotsByPart: { ...kit.lotsByPart, 'cap-100n': [{ qty: 1, unitCostMinor: -4, receivedAt: '2026-01-01' }] } }))
      .toThrow(/^Part cap-100n: Lot 1: unit cost/)
  })
})

describe('formatMoney', () => {
  it('pound, euro and dollar signs', () => {
    expect(formatMoney(1250, 'GBP')).toBe('£12.50')
    expect(formatMoney(1250, 'EUR')).toBe('€12.50')
    expect(formatMoney(1250, 'usd')).toBe('$12.50')
  })

  it('other currencies as amount then code, with ISO 4217 minor units (JPY 0, BHD 3; from memory)', () => {
    expect(formatMoney(1250, 'CHF')).toBe('12.50 CHF')
    expect(formatMoney(1250, 'JPY')).toBe('1,250 JPY')
    expect(formatMoney(1250, 'BHD')).toBe('1.250 BHD')
  })

  it('thousands separators, pence and negatives', () => {
    expect(formatMoney(123456789, 'GBP')).toBe('£1,234,567.89')
    expect(formatMoney(5, 'GBP')).toBe('£0.05')
    expect(formatMoney(-1250, 'GBP')).toBe('-£12.50')
  })

  it('a bad currency code or fractional amount is refused', () => {
    expect(() => formatMoney(100, 'pounds')).toThrow(/three-letter/)
    expect(() => formatMoney(1.5, 'GBP')).toThrow(/whole number/)
  })
})
