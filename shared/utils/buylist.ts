/**
 * Buy list: the cheapest purchase that covers a shortfall, given price breaks, pack sizes and
 * minimum order quantities. All money is in integer minor units (cents, pence): a line's total
 * is unitPriceMinor × qty, exactly, so there is no rounding anywhere. Each part is bought from
 * one offer (one lot per part for the packers); totals are kept per currency and a grand
 * total over several currencies is refused (null) rather than added up.
 */

export interface PriceBreak { qty: number; unitPriceMinor: number }
export interface Offer {
  id: string
  partId: string
  supplier: string
  supplierRef?: string
  currency: string
  minQty: number
  packSize: number
  /** The unit price applies when the quantity bought is at least the break's qty. */
  breaks: PriceBreak[]
}
export interface OfferPurchase { offerId: string; qty: number; packs: number; unitPriceMinor: number; totalMinor: number; spare: number }
/**
 * rates: the worth of one minor unit of each currency in any common unit. Used only to
 * compare offers in different currencies, never to convert totals.
 */
export interface OfferCompareOptions { rates?: Record<string, number> }
export interface BuyQty { partId: string; qty: number }
export interface BuyItem extends OfferPurchase {
  partId: string
  /** shortfall plus spares for this part */
  need: number
  supplier: string
  supplierRef?: string
  currency: string
}
export interface BuySupplierGroup { supplier: string; currency: string; items: BuyItem[]; totalMinor: number }
export interface BuyListOptions extends OfferCompareOptions {
  /** Extra quantities on top of the needs, e.g. from sparesAllowance. */
  spares?: BuyQty[]
  /** Consider only offers in this currency. */
  currency?: string
}
export interface BuyList {
  items: BuyItem[]
  bySupplier: BuySupplierGroup[]
  /** The grand total, or null when the items are in more than one currency. */
  totalMinor: number | null
  currency: string | null
  mixedCurrencies: boolean
  totalsByCurrency: { currency: string; totalMinor: number }[]
  uncovered: BuyQty[]
}
export interface SpareRule { perKit?: number; percent?: number }

export function bestPurchase(need: number, offers: Offer[], opts: OfferCompareOptions = {}): OfferPurchase | null {
  if (!Number.isSafeInteger(need) || need < 1)
    throw new Error(`Quantity needed must be a whole number of 1 or more, got ${String(need)}`)
  offers.forEach(checkOffer)
  const parts = new Set(offers.map(o => o.partId))
  if (parts.size > 1) throw new Error(`Offers for one purchase must be for one part, got ${[...parts].join(', ')}`)
  const worth = currencyWorth(offers, opts.rates)
  let best: OfferPurchase | null = null
  let bestWorth = Infinity
  for (const offer of offers) {
    const p = cheapestFromOffer(need, offer)
    if (!p) continue
    const w = p.totalMinor * worth(offer.currency)
    if (w < bestWorth || (w === bestWorth && best && p.qty < best.qty)) {
      best = p
      bestWorth = w
    }
  }
  return best
}

/**
 * Within one offer the total is qty × price(qty), with price constant between break
 * thresholds, so the cheapest qty in each price band is the smallest allowed one: the first
 * pack multiple at or above max(need, minQty, first break), or at or above a higher break.
 */
function cheapestFromOffer(need: number, offer: Offer): OfferPurchase | null {
  const firstBreak = Math.min(...offer.breaks.map(b => b.qty))
  const base = roundUpToPack(Math.max(need, offer.minQty, firstBreak, 1), offer.packSize)
  const candidates = [base, ...offer.breaks.filter(b => b.qty > base).map(b => roundUpToPack(b.qty, offer.packSize))]
  let best: OfferPurchase | null = null
  for (const qty of candidates) {
    const unit = unitPriceAt(offer, qty)
    if (unit === null) continue
    const totalMinor = unit * qty
    if (!Number.isSafeInteger(totalMinor))
      throw new Error(`Offer "${offer.id}": ${qty} × ${unit} is too large to count exactly`)
    if (!best || totalMinor < best.totalMinor || (totalMinor === best.totalMinor && qty < best.qty))
      best = { offerId: offer.id, qty, packs: qty / offer.packSize, unitPriceMinor: unit, totalMinor, spare: qty - need }
  }
  return best
}

function roundUpToPack(qty: number, pack: number) {
  return Math.ceil(qty / pack) * pack
}

function unitPriceAt(offer: Offer, qty: number): number | null {
  let at: PriceBreak | null = null
  for (const b of offer.breaks) if (b.qty <= qty && (!at || b.qty > at.qty)) at = b
  return at ? at.unitPriceMinor : null
}

function checkOffer(o: Offer) {
  if (!o || typeof o.id !== 'string' || o.id === '') throw new Error('An offer has no id')
  const where = `Offer "${o.id}"`
  if (typeof o.partId !== 'string' || o.partId === '') throw new Error(`${where} has no part`)
  if (typeof o.supplier !== 'string' || o.supplier === '') throw new Error(`${where} has no supplier`)
  if (typeof o.currency !== 'string' || o.currency === '') throw new Error(`${where} has no currency`)
  if (!Number.isSafeInteger(o.packSize) || o.packSize < 1)
    throw new Error(`${where}: pack size must be a whole number of 1 or more, got ${String(o.packSize)}`)
  if (!Number.isSafeInteger(o.minQty) || o.minQty < 0)
    throw new Error(`${where}: minimum order must be a whole number of 0 or more, got ${String(o.minQty)}`)
  if (!Array.isArray(o.breaks) || o.breaks.length === 0) throw new Error(`${where} has no price`)
  const seen = new Set<number>()
  for (const b of o.breaks) {
    if (!Number.isSafeInteger(b.qty) || b.qty < 0)
      throw new Error(`${where}: a price break quantity must be a whole number of 0 or more, got ${String(b.qty)}`)
    if (!Number.isSafeInteger(b.unitPriceMinor) || b.unitPriceMinor < 0)
      throw new Error(`${where}: unit prices must be whole minor units (e.g. cents), got ${String(b.unitPriceMinor)}`)
    if (seen.has(b.qty)) throw new Error(`${where} has two prices for ${b.qty} or more`)
    seen.add(b.qty)
  }
}

function currencyWorth(offers: Offer[], rates?: Record<string, number>): (currency: string) => number {
  const currencies = [...new Set(offers.map(o => o.currency))]
  if (currencies.length <= 1) return () => 1
  if (!rates)
    throw new Error(`Offers for part "${offers[0]!.partId}" are in ${currencies.join(' and ')}: give exchange rates or one currency to compare them`)
  for (const c of currencies) {
    const r = rates[c]
    if (typeof r !== 'number' || !Number.isFinite(r) || r <= 0)
      throw new Error(`No exchange rate for ${c} to compare offers`)
  }
  return c => rates[c]!
}

export function buyList(needs: BuyQty[], offers: Offer[], opts: BuyListOptions = {}): BuyList {
  const wanted = sumQty([...needs, ...(opts.spares ?? [])])
  const offersByPart = new Map<string, Offer[]>()
  for (const o of offers) {
    checkOffer(o)
    if (opts.currency !== undefined && o.currency !== opts.currency) continue
    const list = offersByPart.get(o.partId)
    if (list) list.push(o)
    else offersByPart.set(o.partId, [o])
  }
  const byId = new Map(offers.map(o => [o.id, o]))
  if (byId.size !== offers.length) throw new Error('Two offers share an id')

  const items: BuyItem[] = []
  const uncovered: BuyQty[] = []
  for (const [partId, need] of wanted) {
    if (need === 0) continue
    const p = bestPurchase(need, offersByPart.get(partId) ?? [], opts)
    if (!p) {
      uncovered.push({ partId, qty: need })
      continue
    }
    const o = byId.get(p.offerId)!
    items.push({
      partId, need, ...p, supplier: o.supplier, currency: o.currency,
      ...(o.supplierRef !== undefined ? { supplierRef: o.supplierRef } : {}),
    })
  }
  return { items, ...totals(items), uncovered }
}

function sumQty(rows: BuyQty[]): Map<string, number> {
  const sums = new Map<string, number>()
  for (const r of rows) {
    if (!r || typeof r.partId !== 'string' || r.partId === '') throw new Error('A needed quantity has no part')
    if (!Number.isSafeInteger(r.qty) || r.qty < 0)
      throw new Error(`Quantity needed of part "${r.partId}" must be a whole number of 0 or more, got ${String(r.qty)}`)
    sums.set(r.partId, (sums.get(r.partId) ?? 0) + r.qty)
  }
  return sums
}

function totals(items: BuyItem[]) {
  const groups = new Map<string, BuySupplierGroup>()
  const perCurrency = new Map<string, number>()
  for (const it of items) {
    const key = JSON.stringify([it.supplier, it.currency])
    let g = groups.get(key)
    if (!g) groups.set(key, g = { supplier: it.supplier, currency: it.currency, items: [], totalMinor: 0 })
    g.items.push(it)
    g.totalMinor += it.totalMinor
    perCurrency.set(it.currency, (perCurrency.get(it.currency) ?? 0) + it.totalMinor)
  }
  for (const [c, t] of perCurrency)
    if (!Number.isSafeInteger(t)) throw new Error(`The ${c} total is too large to count exactly`)
  const byName = (a: string, b: string) => (a < b ? -1 : a > b ? 1 : 0)
  const bySupplier = [...groups.values()].sort((a, b) => byName(a.supplier, b.supplier) || byName(a.currency, b.currency))
  const totalsByCurrency = [...perCurrency].map(([currency, totalMinor]) => ({ currency, totalMinor }))
    .sort((a, b) => byName(a.currency, b.currency))
  const mixedCurrencies = totalsByCurrency.length > 1
  return {
    bySupplier,
    totalMinor: mixedCurrencies ? null : (totalsByCurrency[0]?.totalMinor ?? 0),
    currency: mixedCurrencies ? null : (totalsByCurrency[0]?.currency ?? null),
    mixedCurrencies,
    totalsByCurrency,
  }
}

/**
 * Spares to buy on top of the shortfall, per part: perKit × kits, or percent of the part's
 * total quantity (qtyPerKit summed over its lines × kits) rounded up; when a rule gives both,
 * the larger. A rule for '*' applies to kinds without their own rule.
 */
export function sparesAllowance(
  lineKinds: { partId: string; kind: string; qtyPerKit: number }[],
  kits: number,
  rule: Record<string, SpareRule>,
): BuyQty[] {
  if (!Number.isSafeInteger(kits) || kits < 0)
    throw new Error(`Number of kits must be a whole number of 0 or more, got ${String(kits)}`)
  const parts = new Map<string, { kind: string; qty: number }>()
  for (const l of lineKinds) {
    if (!Number.isSafeInteger(l.qtyPerKit) || l.qtyPerKit <= 0)
      throw new Error(`Part "${l.partId}" needs a whole quantity per kit of 1 or more, got ${String(l.qtyPerKit)}`)
    const p = parts.get(l.partId)
    if (!p) parts.set(l.partId, { kind: l.kind, qty: l.qtyPerKit })
    else if (p.kind !== l.kind) throw new Error(`Part "${l.partId}" is listed as both ${p.kind} and ${l.kind}`)
    else p.qty += l.qtyPerKit
  }
  const out: BuyQty[] = []
  for (const [partId, { kind, qty }] of parts) {
    const r = rule[kind] ?? rule['*']
    if (!r) continue
    const byKit = r.perKit === undefined ? 0 : ceilOfRate(r.perKit, kits, 1, `perKit for ${kind}`)
    const byPercent = r.percent === undefined ? 0 : ceilOfRate(r.percent, qty * kits, 100, `percent for ${kind}`)
    const extra = Math.max(byKit, byPercent)
    if (extra > 0) out.push({ partId, qty: extra })
  }
  return out
}

/** ceil(rate × count / per), exact for rates with up to 6 decimals (7 % of 100 is 7, not 8). */
function ceilOfRate(rate: number, count: number, per: number, what: string): number {
  const scaled = Math.round(rate * 1e6)
  if (!Number.isFinite(rate) || rate < 0 || Math.abs(scaled / 1e6 - rate) > 1e-9)
    throw new Error(`Spare rule ${what} must be 0 or more with at most 6 decimals, got ${String(rate)}`)
  const num = BigInt(scaled) * BigInt(count)
  const den = BigInt(per) * 1_000_000n
  const result = Number((num + den - 1n) / den)
  if (!Number.isSafeInteger(result)) throw new Error(`Spare rule ${what} gives too many to count`)
  return result
}
