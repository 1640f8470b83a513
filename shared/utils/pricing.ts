// Money is in whole minor units (pence, cents). Percentages carry at most two decimals and are
// worked in basis points (2.9 % = 290) so that no float error reaches a price.

export interface CardFee { percent: number; fixedMinor: number }

export type CostMethod = 'average' | 'fifo'

export interface CostLot { qty: number; unitCostMinor: number; receivedAt: Date | string }

export interface UnitCostResult {
  totalMinor: number
  /** false when the lots hold fewer than needQty: the rest was costed at the last known or average price */
  covered: boolean
  shortQty: number
}

const BP = 10_000n
// Unit costs may carry up to 4 decimals of a minor unit: a resistor bought by the thousand costs 0.5p.
const UNIT_SCALE = 10_000n

function wholeMinor(value: number, what: string): number {
  if (!Number.isSafeInteger(value)) throw new Error(`${what} must be a whole number of minor units, got ${value}.`)
  return value
}

function nonNegativeMinor(value: number, what: string): number {
  if (wholeMinor(value, what) < 0) throw new Error(`${what} must not be negative, got ${value}.`)
  return value
}

/** A percentage as basis points; refuses negatives, more than two decimals and values of `max` or more. */
export function basisPoints(percent: number, what: string, max = Number.POSITIVE_INFINITY): number {
  if (!Number.isFinite(percent) || percent < 0) throw new Error(`${what} must be a percentage of 0 or more, got ${percent}.`)
  if (percent >= max) throw new Error(`${what} must be below ${max} %, got ${percent}.`)
  const bp = Math.round(percent * 100)
  if (Math.abs(percent * 100 - bp) > 1e-6) throw new Error(`${what} may have at most two decimals, got ${percent}.`)
  return bp
}

/** x * bp / 10000, rounded half-up, for x >= 0. */
function percentOf(x: bigint, bp: number): bigint {
  return (x * BigInt(bp) + BP / 2n) / BP
}

function checkFee(fee: CardFee): number {
  nonNegativeMinor(fee.fixedMinor, 'The fixed fee')
  return basisPoints(fee.percent, 'The fee percentage', 100)
}

/** The card fee on a charge: percent of the charge rounded half-up to a minor unit, plus the fixed part. */
export function feeOf(chargeMinor: number, fee: CardFee): number {
  const bp = checkFee(fee)
  nonNegativeMinor(chargeMinor, 'The charge')
  return Number(percentOf(BigInt(chargeMinor), bp)) + fee.fixedMinor
}

/** What the club receives from a charge after the fee (negative when the fee is larger). */
export function netOf(chargeMinor: number, fee: CardFee): number {
  return chargeMinor - feeOf(chargeMinor, fee)
}

/**
 * The smallest charge whose net after the fee is at least netMinor. The algebra
 * charge = (net + fixed) / (1 - rate), rounded up, always satisfies the rule; half-up rounding of
 * the fee can let a smaller charge do so too, down to (net + fixed - 0.5) / (1 - rate). The net
 * never falls as the charge rises, so a binary search between the two finds the exact answer.
 * A zero net still carries the fixed fee, as any card charge does.
 */
export function grossUp(netMinor: number, fee: CardFee): number {
  nonNegativeMinor(netMinor, 'The net amount')
  const bp = checkFee(fee)
  const need = BigInt(netMinor + fee.fixedMinor)
  const bottom = BP - BigInt(bp)
  let hi = Number((need * BP + bottom - 1n) / bottom)
  let lo = Math.max(0, Number(((2n * need - 1n) * BP) / (2n * bottom)))
  while (lo < hi) {
    const mid = Math.floor((lo + hi) / 2)
    if (netOf(mid, fee) >= netMinor) hi = mid
    else lo = mid + 1
  }
  return hi
}

/** Rounds up to the next multiple of stepMinor (50 = the next 0.50). */
export function roundUpToStep(minor: number, stepMinor: number): number {
  wholeMinor(minor, 'The amount')
  if (wholeMinor(stepMinor, 'The price step') <= 0) throw new Error(`The price step must be 1 or more, got ${stepMinor}.`)
  const rest = ((minor % stepMinor) + stepMinor) % stepMinor
  return rest === 0 ? minor : minor + stepMinor - rest
}

interface CheckedLot { qty: bigint; unit: bigint; time: number; index: number }

function checkLots(lots: CostLot[]): CheckedLot[] {
  return lots.map((lot, index) => {
    if (!Number.isSafeInteger(lot.qty) || lot.qty < 0) throw new Error(`Lot ${index + 1}: quantity must be a whole number of 0 or more, got ${lot.qty}.`)
    const scaled = Math.round(lot.unitCostMinor * Number(UNIT_SCALE))
    if (!Number.isFinite(lot.unitCostMinor) || lot.unitCostMinor < 0 || Math.abs(lot.unitCostMinor * Number(UNIT_SCALE) - scaled) > 1e-6) {
      throw new Error(`Lot ${index + 1}: unit cost must be 0 or more with at most 4 decimals of a minor unit, got ${lot.unitCostMinor}.`)
    }
    const time = new Date(lot.receivedAt).getTime()
    if (Number.isNaN(time)) throw new Error(`Lot ${index + 1}: the received date "${String(lot.receivedAt)}" cannot be read.`)
    return { qty: BigInt(lot.qty), unit: BigInt(scaled), time, index }
  })
}

/** A scaled amount (minor units x UNIT_SCALE x denominator) to whole minor units, half-up. */
function scaledToMinor(numerator: bigint, denominator = 1n): number {
  const d = UNIT_SCALE * denominator
  return Number((2n * numerator + d) / (2n * d))
}

/**
 * The cost of needQty units from a part's lots. 'average': the quantity-weighted average of all
 * lots; 'fifo': oldest lots first. Units beyond the lots are costed at the average ('average')
 * or the newest lot's price ('fifo') and the result is flagged as not covered.
 */
export function unitCost(lots: CostLot[], needQty: number, method: CostMethod): UnitCostResult {
  if (!Number.isSafeInteger(needQty) || needQty < 0) throw new Error(`The quantity needed must be a whole number of 0 or more, got ${needQty}.`)
  const checked = checkLots(lots).sort((a, b) => a.time - b.time || a.index - b.index)
  const held = checked.reduce((sum, l) => sum + l.qty, 0n)
  const need = BigInt(needQty)
  const shortQty = Number(need > held ? need - held : 0n)
  if (checked.length === 0) return { totalMinor: 0, covered: needQty === 0, shortQty }
  const newest = checked.at(-1)!.unit
  if (method === 'average') {
    if (held === 0n) return { totalMinor: scaledToMinor(need * newest), covered: needQty === 0, shortQty }
    const value = checked.reduce((sum, l) => sum + l.qty * l.unit, 0n)
    return { totalMinor: scaledToMinor(need * value, held), covered: shortQty === 0, shortQty }
  }
  let left = need
  let total = 0n
  for (const lot of checked) {
    const take = lot.qty < left ? lot.qty : left
    total += take * lot.unit
    left -= take
  }
  total += left * newest
  return { totalMinor: scaledToMinor(total), covered: shortQty === 0, shortQty }
}

export interface KitPricingInput {
  lines: { partId: string; qtyPerKit: number }[]
  lotsByPart: Record<string, CostLot[]>
  method: CostMethod
  extras: { boardMinor: number; enclosureMinor: number; bagMinor: number; labelMinor: number }
  /** extra parts allowed for losses, as a percentage of the parts cost */
  sparesPercent: number
  overheadMinor: number
  /** markup on the cost of one kit */
  marginPercent: number
  fee: CardFee
  stepMinor: number
  /** taken off the net for members (before the card fee); default 0 */
  memberDiscountPercent?: number
  /** non-members pay the undiscounted net plus this fixed sum and percentage of the net; default 0 */
  nonMemberSurchargeMinor?: number
  nonMemberSurchargePercent?: number
}

export interface KitPrice {
  partsMinor: number
  extrasMinor: number
  sparesMinor: number
  overheadMinor: number
  costMinor: number
  marginMinor: number
  netMinor: number
  memberNetMinor: number
  nonMemberNetMinor: number
  memberPriceMinor: number
  nonMemberPriceMinor: number
  feeMember: number
  feeNonMember: number
  breakdown: { label: string; minor: number }[]
  /** part ids whose lots do not cover one kit (costed at the last known or average price, or 0 with no lots) */
  missingCosts: string[]
  warnings: string[]
}

function partsCost(input: KitPricingInput): { partsMinor: number; missingCosts: string[] } {
  const qtyByPart = new Map<string, number>()
  for (const l of input.lines) qtyByPart.set(l.partId, (qtyByPart.get(l.partId) ?? 0) + l.qtyPerKit)
  let partsMinor = 0
  const missingCosts: string[] = []
  for (const [partId, qty] of qtyByPart) {
    let result: UnitCostResult
    try {
      result = unitCost(input.lotsByPart[partId] ?? [], qty, input.method)
    }
    catch (e) {
      throw new Error(`Part ${partId}: ${(e as Error).message}`)
    }
    partsMinor += result.totalMinor
    if (!result.covered) missingCosts.push(partId)
  }
  return { partsMinor, missingCosts }
}

const pct = (bp: number) => `${bp / 100} %`

function priceFor(netMinor: number, input: KitPricingInput): { price: number; fee: number; rounding: number } {
  const price = roundUpToStep(grossUp(netMinor, input.fee), input.stepMinor)
  const fee = feeOf(price, input.fee)
  return { price, fee, rounding: price - fee - netMinor }
}

/** Prices one kit: cost, margin, net to the club, then member and non-member prices after the card fee. */
export function priceKit(input: KitPricingInput): KitPrice {
  const { extras } = input
  const extraItems: [string, number][] = [['Board', extras.boardMinor], ['Enclosure', extras.enclosureMinor], ['Bag', extras.bagMinor], ['Label', extras.labelMinor]]
  for (const [label, v] of extraItems) nonNegativeMinor(v, label)
  nonNegativeMinor(input.overheadMinor, 'Overhead')
  const sparesBp = basisPoints(input.sparesPercent, 'The spares allowance')
  const marginBp = basisPoints(input.marginPercent, 'The margin')
  const discountBp = basisPoints(input.memberDiscountPercent ?? 0, 'The member discount', 100)
  const surchargeBp = basisPoints(input.nonMemberSurchargePercent ?? 0, 'The non-member surcharge')
  const surchargeFixed = nonNegativeMinor(input.nonMemberSurchargeMinor ?? 0, 'The non-member surcharge')

  const { partsMinor, missingCosts } = partsCost(input)
  const extrasMinor = extraItems.reduce((s, [, v]) => s + v, 0)
  const sparesMinor = Number(percentOf(BigInt(partsMinor), sparesBp))
  const costMinor = partsMinor + extrasMinor + sparesMinor + input.overheadMinor
  const marginMinor = Number(percentOf(BigInt(costMinor), marginBp))
  const netMinor = costMinor + marginMinor
  const discountMinor = Number(percentOf(BigInt(netMinor), discountBp))
  const surchargeMinor = surchargeFixed + Number(percentOf(BigInt(netMinor), surchargeBp))
  const memberNetMinor = netMinor - discountMinor
  const nonMemberNetMinor = netMinor + surchargeMinor
  const member = priceFor(memberNetMinor, input)
  const nonMember = priceFor(nonMemberNetMinor, input)

  const breakdown: { label: string; minor: number }[] = [
    { label: 'Parts', minor: partsMinor },
    ...extraItems.map(([label, minor]) => ({ label, minor })),
    { label: `Spares allowance (${pct(sparesBp)} of parts)`, minor: sparesMinor },
    { label: 'Overhead', minor: input.overheadMinor },
    { label: 'Cost of one kit', minor: costMinor },
    { label: `Margin (${pct(marginBp)} of cost)`, minor: marginMinor },
    { label: 'Net to the club', minor: netMinor },
    ...(discountMinor > 0 ? [{ label: `Member discount (${pct(discountBp)})`, minor: -discountMinor }] : []),
    { label: 'Card fee', minor: member.fee },
    { label: 'Rounding up to the price step', minor: member.rounding },
    { label: 'Member price', minor: member.price },
    ...(surchargeMinor > 0 ? [{ label: 'Non-member surcharge', minor: surchargeMinor }] : []),
    { label: 'Card fee (non-member)', minor: nonMember.fee },
    { label: 'Rounding up to the price step (non-member)', minor: nonMember.rounding },
    { label: 'Non-member price', minor: nonMember.price },
  ]
  const warnings: string[] = []
  if (missingCosts.length > 0) warnings.push(`Stock does not cover one kit for: ${missingCosts.join(', ')}; their cost is estimated.`)
  if (memberNetMinor < costMinor) warnings.push('The member discount takes the member price below the cost of the kit.')

  return {
    partsMinor, extrasMinor, sparesMinor, overheadMinor: input.overheadMinor, costMinor, marginMinor, netMinor,
    memberNetMinor, nonMemberNetMinor,
    memberPriceMinor: member.price, nonMemberPriceMinor: nonMember.price, feeMember: member.fee, feeNonMember: nonMember.fee,
    breakdown, missingCosts, warnings,
  }
}

const SYMBOLS: Record<string, string> = { GBP: '£', EUR: '€', USD: '$' }

/** "£12.50", "€12.50", "$12.50"; other currencies as "12.50 CHF", with the currency's own decimals. */
export function formatMoney(minor: number, currency: string): string {
  wholeMinor(minor, 'The amount')
  const code = currency.toUpperCase()
  if (!/^[A-Z]{3}$/.test(code)) throw new Error(`"${currency}" is not a three-letter currency code.`)
  const digits = new Intl.NumberFormat('en-GB', { style: 'currency', currency: code }).resolvedOptions().maximumFractionDigits ?? 2
  const abs = BigInt(Math.abs(minor))
  const scale = 10n ** BigInt(digits)
  const whole = (abs / scale).toLocaleString('en-GB')
  const frac = digits > 0 ? `.${(abs % scale).toString().padStart(digits, '0')}` : ''
  const sign = minor < 0 ? '-' : ''
  const symbol = SYMBOLS[code]
  return symbol ? `${sign}${symbol}${whole}${frac}` : `${sign}${whole}${frac} ${code}`
}
