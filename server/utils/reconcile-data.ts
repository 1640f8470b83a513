// Reconciliation of a revision and an options mix against stock, and the buy list that follows.
// Explicit imports (no Nuxt auto-imports): plain unit tests import the pure mix functions.
import { asc, eq, inArray, sql } from 'drizzle-orm'
import type { MySql2Database } from 'drizzle-orm/mysql2'
import type ExcelJSModule from 'exceljs'
import { createError } from 'h3'
import { z } from 'zod'
import * as schema from '../db/schema'
import { effectiveBom, type BomLine } from '../../shared/utils/bom'
import { reconcile, type ReconcileLine, type ReconcileResult, type ReconcileStock, type ReconcileSwap } from '../../shared/utils/reconcile'
import { buyList, sparesAllowance, type BuyList, type Offer, type SpareRule } from '../../shared/utils/buylist'
import type { SwapPair } from '../../shared/utils/swaps'
import { neutraliseCell, toCsv } from '../../shared/utils/spreadsheet'
import { loadSwapPairs } from './catalogue'
import { loadRevisionBom } from './revision-bom'
import { availableByPart } from './stock'

type AnyDb = MySql2Database<typeof schema>
type Reader = Pick<AnyDb, 'select'>

/** One row of an options mix: a choice of option ids and how many kits of it. */
export interface MixEntry { optionIds: number[], count: number }
/** A choice's effective BOM lines that have a catalogue part, in reconcile's terms. */
export interface MixChoice { lines: { id: string, partId: string, qty: number, noStandIns?: boolean }[] }

export const MAX_MIX_KITS = 100_000

/**
 * Splits a number of kits over the choices in proportion to their weights (the mix counts):
 * kits are handed out one at a time to the choice with the highest weight ÷ (kits so far + 1),
 * ties to the earlier choice (the D'Hondt rule). Shares only grow as the total grows, and at the
 * weights' sum each choice gets exactly its weight.
 */
export function splitByMix(weights: number[], total: number): number[] {
  if (!Number.isSafeInteger(total) || total < 0) throw new Error(`The number of kits must be a whole number of 0 or more, got ${total}`)
  if (weights.some(w => !Number.isSafeInteger(w) || w < 0)) throw new Error('Mix counts must be whole numbers of 0 or more')
  const shares = weights.map(() => 0)
  if (total === 0) return shares
  if (!weights.some(w => w > 0)) throw new Error('The mix needs at least one kit')
  for (let k = 0; k < total; k++) {
    let best = -1
    for (let c = 0; c < weights.length; c++) {
      if (weights[c] === 0) continue
      // weights[c] / (shares[c] + 1) > weights[best] / (shares[best] + 1), without division
      if (best === -1 || weights[c]! * (shares[best]! + 1) > weights[best]! * (shares[c]! + 1)) best = c
    }
    shares[best]!++
  }
  return shares
}

/**
 * Reconcile lines for a mix with `counts` kits of each choice: each BOM line once, demanding its
 * quantity × the kits of every choice it belongs to. Reconciled with kits = 1, these lines ask
 * for the whole mix at once, so stand-ins shared between choices are never counted twice.
 */
export function mixLines(choices: MixChoice[], counts: number[]): ReconcileLine[] {
  const byId = new Map<string, ReconcileLine>()
  choices.forEach((choice, c) => {
    const n = counts[c] ?? 0
    if (n === 0) return
    for (const l of choice.lines) {
      const had = byId.get(l.id)
      if (had) had.qtyPerKit += l.qty * n
      else byId.set(l.id, { id: l.id, partId: l.partId, qtyPerKit: l.qty * n, allowSwaps: !l.noStandIns })
    }
  })
  return [...byId.values()].filter(l => l.qtyPerKit > 0)
}

function mixFits(choices: MixChoice[], counts: number[], stock: ReconcileStock[], swaps: ReconcileSwap[]) {
  const lines = mixLines(choices, counts)
  return lines.length === 0 || reconcile({ lines, stock, swaps }).maxKits >= 1
}

/**
 * The most kits buildable now in the mix's proportions (split by splitByMix), found exactly by
 * doubling then bisecting: the split only grows with the total, so whether it fits is monotone.
 */
export function buildableInMix(choices: MixChoice[], weights: number[], stock: ReconcileStock[], swaps: ReconcileSwap[]) {
  const fits = (n: number) => mixFits(choices, splitByMix(weights, n), stock, swaps)
  if (!weights.some(w => w > 0) || mixLines(choices, weights).length === 0) return { kits: 0, counts: weights.map(() => 0), capped: false }
  let lo = 0
  let hi = 1
  while (hi <= MAX_MIX_KITS && fits(hi)) {
    lo = hi
    hi *= 2
  }
  if (hi > MAX_MIX_KITS) {
    if (fits(MAX_MIX_KITS)) return { kits: MAX_MIX_KITS, counts: splitByMix(weights, MAX_MIX_KITS), capped: true }
    hi = MAX_MIX_KITS
  }
  while (hi - lo > 1) {
    const mid = Math.floor((lo + hi) / 2)
    if (fits(mid)) lo = mid
    else hi = mid
  }
  return { kits: lo, counts: splitByMix(weights, lo), capped: false }
}

// ---------------------------------------------------------------------------------------
// The query both the reconciliation and the buy list take (GET, so a buy list export is a plain link)

function jsonParam<T extends z.ZodType>(inner: T, what: string) {
  return z.string().max(4000).transform((text, ctx) => {
    try {
      return JSON.parse(text) as unknown
    }
    catch {
      ctx.addIssue({ code: 'custom', message: `${what} is not readable` })
      return z.NEVER
    }
  }).pipe(inner)
}

const kitCount = z.coerce.number({ error: 'Give a number of kits' }).int('Kits come in whole numbers').min(0, 'Kits cannot be negative').max(MAX_MIX_KITS, `At most ${MAX_MIX_KITS} kits`)
const spareRule = z.object({
  perKit: z.number().min(0, 'Spares cannot be negative').max(1000).optional(),
  percent: z.number().min(0, 'Spares cannot be negative').max(1000).optional(),
  maxUnitCostMinor: z.number().int('Give the price in minor units').min(0).optional(),
})

export const reconcileQuery = z.object({
  revisionId: z.coerce.number({ error: 'Choose a revision' }).int().positive('Choose a revision'),
  mix: jsonParam(z.array(z.object({ optionIds: z.array(z.number().int().positive()).max(20), count: kitCount })).min(1, 'Add at least one choice of options').max(20, 'At most 20 choices'), 'The options mix'),
  target: z.union([z.literal(''), kitCount]).optional().transform(t => (t === '' || t === undefined ? undefined : t)),
  spares: jsonParam(z.record(z.string().max(24), spareRule), 'The spares rules').optional(),
  currency: z.string().trim().toUpperCase().regex(/^([A-Z]{3})?$/, 'Use a three-letter currency code').optional().transform(c => c || undefined),
})

// ---------------------------------------------------------------------------------------
// Loading from the database

/** Allowed stand-in pairs with reason and warning (groups and parametric rules), from the catalogue. */
export async function loadStandInPairs(db: Reader): Promise<SwapPair[]> {
  return loadSwapPairs(db)
}

function refuse(message: string, field?: string): never {
  throw createError({ statusCode: 400, statusMessage: 'Invalid input', message, data: field ? { fields: { [field]: message } } : undefined })
}

/** A revision's lines per choice of the mix, the stand-in pairs that matter, stock and part names. */
export async function loadReconcileData(db: Reader, revisionId: number, mix: MixEntry[]) {
  const [rev] = await db.select({ id: schema.revisions.id, label: schema.revisions.label, state: schema.revisions.state, kitName: schema.kits.name })
    .from(schema.revisions).innerJoin(schema.kits, eq(schema.kits.id, schema.revisions.kitId)).where(eq(schema.revisions.id, revisionId))
  if (!rev) throw createError({ statusCode: 404, statusMessage: 'Not found', message: `There is no revision ${revisionId}` })
  if (!mix.length) refuse('Add at least one choice of options to the mix', 'mix')
  if (!mix.some(m => m.count > 0)) refuse('The mix needs at least one kit', 'mix')
  const bom = await loadRevisionBom(db as AnyDb, revisionId)
  const optionName = new Map(bom.groups.flatMap(g => g.options.map(o => [o.id, o.name] as const)))
  const keys = new Set<string>()
  const choices = mix.map((m, i) => {
    const key = [...m.optionIds].sort((a, b) => a - b).join('+')
    if (keys.has(key)) refuse(`Choice ${i + 1} repeats an earlier choice of options: add its kits to that row`, 'mix')
    keys.add(key)
    let effective: BomLine[]
    try {
      effective = effectiveBom(bom.lines, bom.groups, m.optionIds.map(String))
    }
    catch (err) {
      refuse(`Choice ${i + 1}: ${(err as Error).message}`, 'mix')
    }
    const names = m.optionIds.map(id => optionName.get(String(id)) ?? `option ${id}`)
    return { optionIds: m.optionIds, count: m.count, label: names.join(', ') || 'No options', effective }
  })
  const lineById = new Map(choices.flatMap(c => c.effective.map(l => [l.id, l] as const)))
  const ownParts = [...new Set([...lineById.values()].flatMap(l => (l.partId ? [l.partId] : [])))]
  const pairs = (await loadStandInPairs(db)).filter(p => ownParts.includes(p.from))
  const partIds = [...new Set([...ownParts, ...pairs.map(p => p.to)])].map(Number)
  const [stock, parts] = await Promise.all([
    availableByPart(db, partIds),
    partIds.length ? db.select({ id: schema.parts.id, name: schema.parts.name, kind: schema.parts.kind, valueText: schema.parts.valueText }).from(schema.parts).where(inArray(schema.parts.id, partIds)) : [],
  ])
  return { revision: rev, choices, lineById, pairs, stock, parts: new Map(parts.map(p => [String(p.id), p])) }
}

export type ReconcileData = Awaited<ReturnType<typeof loadReconcileData>>

function asChoices(data: ReconcileData): MixChoice[] {
  return data.choices.map(c => ({
    lines: c.effective.filter(l => l.partId).map(l => ({ id: l.id, partId: l.partId!, qty: l.qty, noStandIns: l.noStandIns })),
  }))
}

function stockList(data: ReconcileData): ReconcileStock[] {
  return [...data.stock].map(([partId, s]) => ({ partId: String(partId), available: s.available }))
}

// ---------------------------------------------------------------------------------------
// The report the reconciliation page shows

/** Reconciles the mix at a target (default: the mix's own counts) and finds the kits buildable now. */
export function reconcileReport(data: ReconcileData, target?: number) {
  const weights = data.choices.map(c => c.count)
  const total = target ?? weights.reduce((a, b) => a + b, 0)
  if (total > MAX_MIX_KITS) refuse(`Aim for at most ${MAX_MIX_KITS} kits`, 'target')
  const counts = splitByMix(weights, total)
  const choices = asChoices(data)
  const stock = stockList(data)
  const swaps = data.pairs.map(p => ({ from: p.from, to: p.to }))
  const lines = mixLines(choices, counts)
  const result: ReconcileResult = lines.length
    ? reconcile({ lines, stock, swaps, kits: 1 })
    : { maxKits: 0, kits: 1, allocation: [], shortfall: [], perLine: [] }
  const now = buildableInMix(choices, weights, stock, swaps)
  const alone = choices.map(c => (c.lines.length ? reconcile({ lines: c.lines.map(l => ({ id: l.id, partId: l.partId, qtyPerKit: l.qty, allowSwaps: !l.noStandIns })), stock, swaps }).maxKits : 0))
  return {
    revision: data.revision,
    target: total,
    buildable: now.kits,
    buildableCapped: now.capped,
    choices: data.choices.map((c, i) => ({ optionIds: c.optionIds, label: c.label, count: c.count, targetKits: counts[i]!, buildableKits: now.counts[i]!, aloneMaxKits: alone[i]! })),
    lines: lineReports(data, result, counts),
    unassigned: [...data.lineById.values()].filter(l => !l.partId).map(l => ({ lineId: Number(l.id), designators: l.designators, valueText: l.valueText ?? null })),
    shortTotal: result.shortfall.reduce((n, s) => n + s.qty, 0),
    result,
  }
}

export type ReconcileReport = ReturnType<typeof reconcileReport>

function lineReports(data: ReconcileData, result: ReconcileResult, counts: number[]) {
  const warningOf = new Map(data.pairs.map(p => [`${p.from}>${p.to}`, p]))
  const kitsOf = (lineId: string) => data.choices.reduce((n, c, i) => n + (c.effective.some(l => l.id === lineId) ? counts[i]! : 0), 0)
  return result.perLine.map((r) => {
    const line = data.lineById.get(r.lineId)!
    const part = data.parts.get(line.partId!)
    const s = data.stock.get(Number(line.partId)) ?? { onHand: 0, reserved: 0, available: 0 }
    return {
      lineId: Number(r.lineId), designators: line.designators, stage: line.stage, optionId: line.optionId ? Number(line.optionId) : null,
      partId: Number(line.partId), partName: part?.name ?? `part ${line.partId}`, kind: part?.kind ?? 'other',
      qtyPerKit: line.qty, kits: kitsOf(r.lineId), noStandIns: !!line.noStandIns,
      onHand: s.onHand, reserved: s.reserved, available: s.available,
      demand: r.demand, own: r.own, short: r.short,
      standIns: r.standIns.map((x) => {
        const pair = warningOf.get(`${line.partId}>${x.partId}`)
        return { partId: Number(x.partId), partName: data.parts.get(x.partId)?.name ?? `part ${x.partId}`, qty: x.qty, reason: pair?.reason ?? '', warning: pair?.warning ?? null }
      }),
    }
  })
}

// ---------------------------------------------------------------------------------------
// The buy list

/** A spares rule for a kind of part; maxUnitCostMinor keeps it to cheap parts (a trimmer is not a small passive). */
export type KitSpareRule = SpareRule & { maxUnitCostMinor?: number }

/** Spares rules per part kind ('*' for the rest). Common practice: one extra of each small passive per kit. */
export const DEFAULT_SPARES: Record<string, KitSpareRule> = { resistor: { perKit: 1, maxUnitCostMinor: 10 }, capacitor: { perKit: 1, maxUnitCostMinor: 10 } }

/**
 * What to buy per part: the shortfall, plus the spares the rules ask for beyond the stock left
 * over once the target is allocated. Spares per part: perKit × the kits using the part, or percent
 * of its total quantity, rounded up; the larger (sparesAllowance's rule over the whole mix).
 */
export function buyNeeds(data: ReconcileData, report: ReconcileReport, rules: Record<string, KitSpareRule>, unitCost = new Map<number, number>()) {
  const byPart = new Map<number, { partId: number, partName: string, kind: string, short: number, qty: number, allocated: number }>()
  for (const l of report.lines) {
    const p = byPart.get(l.partId) ?? { partId: l.partId, partName: l.partName, kind: l.kind, short: 0, qty: 0, allocated: 0 }
    p.short += l.short
    p.qty += l.demand
    byPart.set(l.partId, p)
  }
  for (const a of report.result.allocation) {
    const p = byPart.get(Number(a.partId))
    if (p) p.allocated += a.qty
  }
  // A part on several lines of one kit is still one part per kit for a per-kit rule.
  const kitsUsing = kitsUsingPart(data, report)
  return [...byPart.values()].map((p) => {
    const kindRule = rules[p.kind] ?? rules['*']
    const cost = unitCost.get(p.partId)
    const rule = kindRule?.maxUnitCostMinor !== undefined && cost !== undefined && cost > kindRule.maxUnitCostMinor ? undefined : kindRule
    const kits = kitsUsing.get(p.partId) ?? 0
    const perKit = rule?.perKit && kits > 0 ? sparesAllowance([{ partId: 'p', kind: p.kind, qtyPerKit: 1 }], kits, { [p.kind]: { perKit: rule.perKit } })[0]?.qty ?? 0 : 0
    const percent = rule?.percent && p.qty > 0 ? sparesAllowance([{ partId: 'p', kind: p.kind, qtyPerKit: p.qty }], 1, { [p.kind]: { percent: rule.percent } })[0]?.qty ?? 0 : 0
    const spares = Math.max(perKit, percent)
    const available = Math.max(0, data.stock.get(p.partId)?.available ?? 0)
    const leftOver = Math.max(0, available - p.allocated)
    const buy = p.short + Math.max(0, spares - leftOver)
    return { partId: p.partId, partName: p.partName, kind: p.kind, short: p.short, spares, leftOver, buy }
  })
}

function kitsUsingPart(data: ReconcileData, report: ReconcileReport) {
  const out = new Map<number, number>()
  data.choices.forEach((c, i) => {
    const kits = report.choices[i]!.targetKits
    for (const partId of new Set(c.effective.flatMap(l => (l.partId ? [Number(l.partId)] : [])))) out.set(partId, (out.get(partId) ?? 0) + kits)
  })
  return out
}

/** The lowest known unit cost per part, from its lots and its offers' prices (to tell cheap parts). */
async function lowestUnitCosts(db: Reader, partIds: number[], offers: Offer[]) {
  const out = new Map<number, number>()
  const keep = (partId: number, cost: number) => out.set(partId, Math.min(cost, out.get(partId) ?? Infinity))
  if (partIds.length) {
    const rows = await db.select({ partId: schema.lots.partId, cost: sql<number>`min(${schema.lots.unitCostMinor})` })
      .from(schema.lots).where(inArray(schema.lots.partId, partIds)).groupBy(schema.lots.partId)
    for (const r of rows) keep(r.partId, Number(r.cost))
  }
  for (const o of offers) for (const b of o.breaks) keep(Number(o.partId), b.unitPriceMinor)
  return out
}

/** Supplier offers for some parts, in the buy list's terms. */
export async function loadOffers(db: Reader, partIds: number[]): Promise<Offer[]> {
  if (!partIds.length) return []
  const rows = await db.select().from(schema.supplierOffers).where(inArray(schema.supplierOffers.partId, partIds)).orderBy(asc(schema.supplierOffers.id))
  return rows.map(o => ({
    id: String(o.id), partId: String(o.partId), supplier: o.supplier, currency: o.currency, minQty: o.minQty, packSize: o.packSize, breaks: o.breaks,
    ...(o.supplierRef ? { supplierRef: o.supplierRef } : {}),
  }))
}

/** The buy list for a report: needs per part, the cheapest purchase of each, grouped by supplier. */
export async function buyListReport(db: Reader, data: ReconcileData, report: ReconcileReport, opts: { spares: Record<string, KitSpareRule>, currency?: string }) {
  const partIds = [...new Set(report.lines.map(l => l.partId))]
  const offers = await loadOffers(db, partIds)
  const needs = buyNeeds(data, report, opts.spares, await lowestUnitCosts(db, partIds, offers))
  const wanted = needs.filter(n => n.buy > 0)
  const names = new Map(needs.map(n => [String(n.partId), n.partName]))
  let list: BuyList
  try {
    list = buyList(wanted.map(n => ({ partId: String(n.partId), qty: n.buy })), offers, opts.currency ? { currency: opts.currency } : {})
  }
  catch (err) {
    const message = (err as Error).message.replace(/part "(\d+)"/g, (_, id: string) => `"${names.get(id) ?? `part ${id}`}"`)
    refuse(`${message}. Choose one currency for the buy list.`, 'currency')
  }
  const named = <T extends { partId: string }>(x: T) => ({ ...x, partName: names.get(x.partId) ?? `part ${x.partId}` })
  return {
    needs,
    items: list.items.map(named),
    bySupplier: list.bySupplier.map(g => ({ ...g, items: g.items.map(named) })),
    totalMinor: list.totalMinor,
    currency: list.currency,
    mixedCurrencies: list.mixedCurrencies,
    totalsByCurrency: list.totalsByCurrency,
    uncovered: list.uncovered.map(named),
  }
}

export type BuyListReport = Awaited<ReturnType<typeof buyListReport>>

// ---------------------------------------------------------------------------------------
// Supplier offers and the exported buy list

const whole = (what: string, min: number) => z.number({ error: `Give the ${what}` }).int(`The ${what} is a whole number`).min(min, `The ${what} must be ${min} or more`).max(10_000_000, `The ${what} is too large`)

/** A supplier offer as the offers editor sends it; prices in minor units (pence, cents). */
export const offerBody = z.object({
  partId: z.number({ error: 'Choose a part' }).int().positive('Choose a part'),
  supplier: z.string({ error: 'Name the supplier' }).trim().min(1, 'Name the supplier').max(120, 'Keep it under 120 characters'),
  supplierRef: z.string().trim().max(120, 'Keep it under 120 characters').nullish().transform(s => s || null),
  currency: z.string().trim().toUpperCase().regex(/^[A-Z]{3}$/, 'Use a three-letter currency code, e.g. GBP').default('GBP'),
  minQty: whole('minimum order', 0).default(1),
  packSize: whole('pack size', 1).default(1),
  breaks: z.array(z.object({ qty: whole('break quantity', 0), unitPriceMinor: whole('unit price', 0) }), { error: 'Give at least one price' })
    .min(1, 'Give at least one price').max(20, 'At most 20 price breaks')
    .refine(b => new Set(b.map(x => x.qty)).size === b.length, 'Two prices for the same quantity: keep one')
    .transform(b => [...b].sort((x, y) => x.qty - y.qty)),
})

function decimalsOf(currency: string) {
  return new Intl.NumberFormat('en-GB', { style: 'currency', currency }).resolvedOptions().maximumFractionDigits ?? 2
}

/** Minor units as a number of major units (1234 pence → 12.34), exact for the currency's decimals. */
export function minorToMajor(minor: number, currency: string): number {
  return Number((minor / 10 ** decimalsOf(currency)).toFixed(decimalsOf(currency)))
}

const HEADER = ['Supplier', 'Supplier ref', 'Part', 'Needed', 'Buy', 'Packs', 'Unit price', 'Total', 'Currency']

/** The rows of the exported buy list: per supplier its items and a subtotal, then totals per currency. */
export function buyListRows(list: BuyListReport, title: string) {
  type Row = { cells: (string | number | null)[], style?: 'title' | 'header' | 'group' | 'total', money?: string }
  const rows: Row[] = [{ cells: [title], style: 'title' }, { cells: [] }, { cells: HEADER, style: 'header' }]
  for (const g of list.bySupplier) {
    rows.push({ cells: [g.supplier], style: 'group' })
    for (const it of g.items) {
      rows.push({ cells: [g.supplier, it.supplierRef ?? '', it.partName, it.need, it.qty, it.packs, minorToMajor(it.unitPriceMinor, it.currency), minorToMajor(it.totalMinor, it.currency), it.currency], money: it.currency })
    }
    rows.push({ cells: [`${g.supplier} total`, null, null, null, null, null, null, minorToMajor(g.totalMinor, g.currency), g.currency], style: 'total', money: g.currency })
    rows.push({ cells: [] })
  }
  for (const t of list.totalsByCurrency) rows.push({ cells: ['Total', null, null, null, null, null, null, minorToMajor(t.totalMinor, t.currency), t.currency], style: 'total', money: t.currency })
  if (list.uncovered.length) {
    rows.push({ cells: [] }, { cells: ['No supplier offer for these parts'], style: 'group' })
    for (const u of list.uncovered) rows.push({ cells: ['', '', u.partName, u.qty] })
  }
  return rows
}

/** CSV (RFC 4180, text cells neutralised), grouped by supplier. */
export function buyListCsv(list: BuyListReport, title: string): string {
  return toCsv(buyListRows(list, title).map(r => r.cells))
}

/** An .xlsx workbook of the buy list; text cells are neutralised, money cells are numbers. */
export async function buyListWorkbook(list: BuyListReport, title: string): Promise<Buffer> {
  const ExcelJS = await loadExcelJs()
  const wb = new ExcelJS.Workbook()
  wb.creator = 'Kitwright'
  const ws = wb.addWorksheet('Buy list')
  ws.columns = [28, 16, 36, 10, 10, 8, 12, 12, 10].map(width => ({ width }))
  for (const r of buyListRows(list, title)) {
    const row = ws.addRow(r.cells.map(c => (typeof c === 'string' ? neutraliseCell(c) : c)))
    if (r.style) row.font = { bold: true, size: r.style === 'title' ? 14 : 11 }
    if (r.money) for (const col of [7, 8]) row.getCell(col).numFmt = decimalsOf(r.money) ? `#,##0.${'0'.repeat(decimalsOf(r.money))}` : '#,##0'
  }
  return Buffer.from(await wb.xlsx.writeBuffer())
}

/** exceljs, loaded on the first export rather than when the server starts. */
async function loadExcelJs(): Promise<typeof ExcelJSModule> {
  const mod = await import('exceljs')
  return ((mod as { default?: typeof ExcelJSModule }).default ?? mod) as typeof ExcelJSModule
}
