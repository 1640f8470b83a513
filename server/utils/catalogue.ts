// Explicit imports (no Nuxt auto-imports): reconciliation and packing helpers import this file too.
import { and, asc, between, eq, inArray, or, sql, type SQL } from 'drizzle-orm'
import type { MySql2Database } from 'drizzle-orm/mysql2'
import { createError } from 'h3'
import { z } from 'zod'
import * as schema from '../db/schema'
import { availableByPart } from './stock'
import { badRequest } from './validate'
import { decodeCapCode, describeValue, formatValue, parseValue, TOLERANCE_LETTERS, valueQueries, type ValueDescription } from '../../shared/utils/values'
import {
  checkGroup, DEFAULT_PARAMETRIC, dielectricFamily, standInsFor, swapPairs,
  type ParametricSettings, type StandIn, type SwapGroup, type SwapPair, type SwapPart,
} from '../../shared/utils/swaps'

type AnyDb = MySql2Database<typeof schema>
type Reader = Pick<AnyDb, 'select'>
export type PartRow = typeof schema.parts.$inferSelect

/** Relative tolerance for "same value" in SQL (stored as double). */
const VALUE_TOLERANCE = 1e-6

/**
 * Reads a part form's value for a kind. A bare three-digit number on a capacitor is its
 * IEC 60062 code in pF (`104` → 100 nF), and a capacitance of a farad or more typed without
 * an F is refused as a likely mistake. Throws an Error whose message reaches the user.
 */
export function readPartValue(text: string, kind: string): ValueDescription & { capCodeRead?: boolean } {
  const t = text.trim()
  if (kind === 'capacitor' && /^\d{3}$/.test(t)) return { ...describeValue(`${decodeCapCode(t)}F`, kind), capCodeRead: true }
  const d = describeValue(t, kind)
  if (kind === 'capacitor' && d.value >= 1 && !/f/i.test(t)) {
    throw new Error(`"${t}" would be ${formatValue(d.value, 'F')}: write a capacitance with a prefix (100n, 4n7, 22p) or as a three-digit code (104)`)
  }
  return d
}

/** The swap-rule view of a catalogue row (string ids, as the shared swap functions take). */
export function toSwapPart(p: PartRow): SwapPart {
  return {
    id: String(p.id), kind: p.kind, value: p.value, tolerancePct: p.tolerancePct, powerW: p.powerW,
    voltageV: p.voltageV, currentA: p.currentA, dielectric: p.dielectric, mounting: p.mounting,
    polarised: p.polarised, package: p.package,
  }
}

/** Parametric rules per kind (on unless switched off). */
export async function loadSwapSettings(db: Reader): Promise<ParametricSettings> {
  const rows = await db.select().from(schema.swapSettings)
  const out: ParametricSettings = { ...DEFAULT_PARAMETRIC }
  for (const r of rows) if (r.kind in out) out[r.kind as keyof ParametricSettings] = r.enabled
  return out
}

/** Every interchangeable group with its members, oldest first (group order decides the reason shown). */
export async function loadSwapGroups(db: Reader): Promise<(SwapGroup & { dbId: number })[]> {
  const [groups, members] = await Promise.all([
    db.select().from(schema.swapGroups).orderBy(asc(schema.swapGroups.id)),
    db.select().from(schema.swapGroupMembers),
  ])
  return groups.map(g => ({
    id: String(g.id),
    dbId: g.id,
    name: g.name,
    warning: g.warning,
    members: members.filter(m => m.groupId === g.id).map(m => ({ partId: String(m.partId), direction: m.direction })),
  }))
}

/** All parts, groups and settings, for callers that ask about many parts at once. */
export async function loadSwapContext(db: Reader) {
  const [rows, groups, settings] = await Promise.all([
    db.select().from(schema.parts).orderBy(asc(schema.parts.id)),
    loadSwapGroups(db),
    loadSwapSettings(db),
  ])
  return { rows, parts: rows.map(toSwapPart), groups, settings }
}

/** Every allowed (from, to) pair, `to` standing in for `from`, with reason and warning (string part ids). */
export async function loadSwapPairs(db: Reader): Promise<SwapPair[]> {
  const { parts, groups, settings } = await loadSwapContext(db)
  return swapPairs(parts, groups, settings)
}

export interface PartStandIn extends Omit<StandIn, 'partId' | 'groupId'> {
  partId: number
  groupId: number | null
  part: PartRow
}

/** A BOM line's "no stand-ins" flag (404 when there is no such line). */
export async function loadLineFlag(db: Reader, line: number | { noStandIns?: boolean } | null | undefined) {
  if (line == null) return undefined
  if (typeof line !== 'number') return line
  const [row] = await db.select({ id: schema.bomLines.id, noStandIns: schema.bomLines.noStandIns }).from(schema.bomLines).where(eq(schema.bomLines.id, line))
  if (!row) throw createError({ statusCode: 404, statusMessage: 'Not found', message: `No BOM line ${line}` })
  return row
}

/**
 * The parts allowed to stand in for `partId` (optionally on a BOM line, by id or by its
 * "no stand-ins" flag), group stand-ins first, each with its reason and warning.
 * Loads only the part, its group partners and parts of the same kind and value.
 */
export async function standInsForPart(db: Reader, partId: number, line?: number | { noStandIns?: boolean } | null): Promise<PartStandIn[]> {
  const flag = await loadLineFlag(db, line)
  if (flag?.noStandIns) return []
  const [original] = await db.select().from(schema.parts).where(eq(schema.parts.id, partId))
  if (!original) return []
  const [groups, settings] = await Promise.all([loadSwapGroups(db), loadSwapSettings(db)])
  const mine = groups.filter(g => g.members.some(m => m.partId === String(partId)))
  const partnerIds = [...new Set(mine.flatMap(g => g.members.map(m => Number(m.partId))))]
  const near = original.value == null
    ? undefined
    : and(eq(schema.parts.kind, original.kind), valueNear(original.value))
  const where = or(eq(schema.parts.id, partId), partnerIds.length ? inArray(schema.parts.id, partnerIds) : undefined, near)
  const rows = await db.select().from(schema.parts).where(where).orderBy(asc(schema.parts.id))
  const byId = new Map(rows.map(r => [String(r.id), r]))
  return standInsFor(String(partId), rows.map(toSwapPart), mine, settings, flag)
    .filter(s => byId.has(s.partId))
    .map(s => ({ ...s, partId: Number(s.partId), groupId: s.groupId ? Number(s.groupId) : null, part: byId.get(s.partId)! }))
}

/** SQL: the part's value equals v within a small relative tolerance. */
export function valueNear(v: number): SQL {
  const lo = v >= 0 ? v * (1 - VALUE_TOLERANCE) : v * (1 + VALUE_TOLERANCE)
  const hi = v >= 0 ? v * (1 + VALUE_TOLERANCE) : v * (1 - VALUE_TOLERANCE)
  return between(schema.parts.value, lo, hi)
}

export interface PartUsage { lines: number, lots: number, reservations: number, bagItems: number, groups: string[] }

/** What keeps a part from being deleted: BOM lines, lots, reservations, bag items and swap groups. */
export async function partUsage(db: Reader, partId: number): Promise<PartUsage> {
  const count = sql<number>`cast(count(*) as signed)`
  const [[lines], [lots], [reservations], [bagItems], groups] = await Promise.all([
    db.select({ n: count }).from(schema.bomLines).where(eq(schema.bomLines.partId, partId)),
    db.select({ n: count }).from(schema.lots).where(eq(schema.lots.partId, partId)),
    db.select({ n: count }).from(schema.reservations).where(eq(schema.reservations.partId, partId)),
    db.select({ n: count }).from(schema.bagItems).where(or(eq(schema.bagItems.partId, partId), eq(schema.bagItems.standInPartId, partId))),
    db.select({ name: schema.swapGroups.name }).from(schema.swapGroupMembers)
      .innerJoin(schema.swapGroups, eq(schema.swapGroups.id, schema.swapGroupMembers.groupId))
      .where(eq(schema.swapGroupMembers.partId, partId)),
  ])
  return { lines: Number(lines!.n), lots: Number(lots!.n), reservations: Number(reservations!.n), bagItems: Number(bagItems!.n), groups: groups.map(g => g.name) }
}

/** A sentence saying why a part cannot be deleted, or null when nothing uses it. */
export function usageRefusal(u: PartUsage): string | null {
  const uses: string[] = []
  if (u.lines) uses.push(`${u.lines} BOM line${u.lines === 1 ? '' : 's'}`)
  if (u.lots) uses.push(`${u.lots} lot${u.lots === 1 ? '' : 's'} of stock`)
  if (u.reservations) uses.push(`${u.reservations} reservation${u.reservations === 1 ? '' : 's'}`)
  if (u.bagItems) uses.push(`${u.bagItems} packed bag item${u.bagItems === 1 ? '' : 's'}`)
  if (u.groups.length) uses.push(`swap group${u.groups.length === 1 ? '' : 's'} ${u.groups.map(g => `"${g}"`).join(', ')}`)
  return uses.length ? `This part is still used by ${uses.join(', ')}: remove it there first` : null
}

// ---------------------------------------------------------------------------------------
// Part input: what the form and API callers send, read and checked on the server.

const KIND_WORD: Record<string, string> = {
  resistor: 'Resistor', capacitor: 'Capacitor', inductor: 'Inductor', crystal: 'Crystal', diode: 'Diode', transistor: 'Transistor',
  ic: 'IC', connector: 'Connector', hardware: 'Hardware', board: 'Board', other: 'Part',
}
const RATING_UNIT = { powerW: 'W', voltageV: 'V', currentA: 'A' } as const
const RATING_EXAMPLE = { W: '0.25, 1/4 W or 250m', V: '50 or 50 V', A: '0.3, 300m or 0.3 A' }
const text = (max: number) => z.string().trim().max(max, `Keep it to ${max} characters`).nullish().transform(s => s || null)
const numberOrText = z.union([z.number(), z.string()], { error: 'Give a number' }).nullish()

/** Reads a rating typed as 0.25, "250m", "1/4 W" or "50 V"; null when left empty. */
export function readRating(input: number | string | null | undefined, unit: 'W' | 'V' | 'A'): number | null {
  if (input == null || (typeof input === 'string' && !input.trim())) return null
  let v: { value: number, unit: string }
  try { v = typeof input === 'number' ? { value: input, unit: '' } : parseValue(input) }
  catch { throw new Error(`"${input}" is not a rating: write a number such as ${RATING_EXAMPLE[unit]}`) }
  if (v.unit && v.unit !== unit) throw new Error(`"${input}" is in ${v.unit}; this rating is in ${unit}`)
  if (!Number.isFinite(v.value) || v.value <= 0) throw new Error(`A rating must be more than 0 ${unit}`)
  return v.value
}

/** Reads a tolerance typed as 5, "5 %", "±5%" or an IEC 60062 letter (J); null when left empty. */
export function readTolerance(input: number | string | null | undefined): number | null {
  if (input == null || (typeof input === 'string' && !input.trim())) return null
  const s = typeof input === 'number' ? String(input) : input.trim().replace(/^±\s*/, '').replace(/\s*%$/, '')
  if (/^[a-z]$/i.test(s)) {
    const letter = TOLERANCE_LETTERS[s.toUpperCase()]
    if (!letter) throw new Error(`"${input}" is not a tolerance letter (B C D F G J K M Z)`)
    return letter.plus
  }
  if (!/^\d*\.?\d+$/.test(s)) throw new Error(`"${input}" is not a tolerance: write a percentage such as 5 or 1 %, or a letter such as J`)
  const n = Number(s)
  if (!Number.isFinite(n) || n <= 0 || n > 100) throw new Error('A tolerance is more than 0 % and at most 100 %')
  return n
}

function defaultName(kind: string, formatted: string | null, dielectric: string | null) {
  return [KIND_WORD[kind] ?? 'Part', formatted, kind === 'capacitor' ? dielectric : null].filter(Boolean).join(' ')
}

/** The body of a part create (and, merged over the stored part, of an update); values are read here, never trusted. */
export const partBody = z.object({
  kind: z.enum(schema.PART_KINDS, { error: 'Choose a kind' }),
  name: text(160),
  valueText: text(64),
  tolerancePct: numberOrText,
  powerW: numberOrText,
  voltageV: numberOrText,
  currentA: numberOrText,
  dielectric: text(24),
  // Loose here and checked in the transform, so these errors come together with the value's.
  mounting: z.unknown().optional(),
  polarised: z.unknown().optional(),
  package: text(64),
  pinoutNote: text(255),
  description: text(2000),
  makerPartNumber: text(64),
}).transform((b, ctx) => {
  const fail = (path: string, err: unknown) => ctx.addIssue({ code: 'custom', path: [path], message: (err as Error).message })
  let value: ReturnType<typeof readPartValue> | null = null
  try { value = b.valueText ? readPartValue(b.valueText, b.kind) : null }
  catch (err) { fail('valueText', err) }
  const ratings = { powerW: null, voltageV: null, currentA: null } as Record<keyof typeof RATING_UNIT, number | null>
  for (const key of Object.keys(RATING_UNIT) as (keyof typeof RATING_UNIT)[]) {
    try { ratings[key] = readRating(b[key], RATING_UNIT[key]) }
    catch (err) { fail(key, err) }
  }
  let tolerancePct: number | null = null
  try { tolerancePct = readTolerance(b.tolerancePct) ?? value?.tolerance ?? null }
  catch (err) { fail('tolerancePct', err) }
  const mounting = b.mounting == null || b.mounting === '' ? null : b.mounting
  if (mounting !== null && mounting !== 'tht' && mounting !== 'smd') ctx.addIssue({ code: 'custom', path: ['mounting'], message: 'Choose through-hole or surface-mount' })
  if (b.polarised != null && typeof b.polarised !== 'boolean') ctx.addIssue({ code: 'custom', path: ['polarised'], message: 'Polarised is yes (true) or no (false)' })
  const name = b.name ?? (value ? defaultName(b.kind, value.formatted, b.dielectric) : null)
  if (!name && !b.valueText) ctx.addIssue({ code: 'custom', path: ['name'], message: 'Give the part a name (or a value to name it by)' })
  const family = dielectricFamily(b.dielectric)
  return {
    kind: b.kind, name: name ?? '', value: value?.value ?? null, unit: value?.unit || null, valueText: b.valueText,
    tolerancePct, ...ratings, dielectric: b.dielectric, mounting: mounting as 'tht' | 'smd' | null,
    polarised: (b.polarised as boolean | null | undefined) ?? (family === 'electrolytic' || family === 'tantalum'),
    package: b.package, pinoutNote: b.pinoutNote, description: b.description, makerPartNumber: b.makerPartNumber,
  }
})
export type PartValues = z.output<typeof partBody>

/** A stored part in the shape of partBody's input, so an update can merge changes over it. */
export function partAsInput(p: PartRow): z.input<typeof partBody> {
  return {
    kind: p.kind, name: p.name, valueText: p.valueText, tolerancePct: p.tolerancePct, powerW: p.powerW, voltageV: p.voltageV,
    currentA: p.currentA, dielectric: p.dielectric, mounting: p.mounting, polarised: p.polarised, package: p.package,
    pinoutNote: p.pinoutNote, description: p.description, makerPartNumber: p.makerPartNumber,
  }
}

// ---------------------------------------------------------------------------------------
// Catalogue search

export const PART_SORTS = ['name', 'kind', 'value', 'package', 'onHand', 'updated'] as const
export const partSearchQuery = z.object({
  q: z.string().trim().max(100, 'Keep the search to 100 characters').optional(),
  kind: z.enum(schema.PART_KINDS, { error: 'Choose a kind from the list' }).optional().or(z.literal('').transform(() => undefined)),
  name: z.string().trim().max(100).optional(),
  value: z.string().trim().max(64).optional(),
  package: z.string().trim().max(64).optional(),
  sort: z.enum(PART_SORTS, { error: `Sort by one of ${PART_SORTS.join(', ')}` }).default('name'),
  dir: z.enum(['asc', 'desc'], { error: 'Sort asc or desc' }).default('asc'),
  page: z.coerce.number({ error: 'Give a page number' }).int().min(1, 'Pages start at 1').default(1),
  pageSize: z.coerce.number({ error: 'Give a page size' }).int().min(1).max(100, 'At most 100 a page').default(25),
})
export type PartSearch = z.output<typeof partSearchQuery>

const p = schema.parts
// Qualified by hand: drizzle leaves columns unqualified in single-table selects, and `id` would mean lots.id here.
const onHandSql = sql<number>`(select cast(coalesce(sum(l.on_hand), 0) as signed) from lots l where l.part_id = ${sql.identifier('parts')}.${sql.identifier('id')})`
const TEXT_COLUMNS = [p.name, p.description, p.package, p.makerPartNumber, p.valueText, p.pinoutNote, p.dielectric, p.kind]

function likeText(word: string) {
  return `%${word.replace(/[\\%_]/g, c => `\\${c}`)}%`
}
function anyColumnLike(word: string, columns = TEXT_COLUMNS) {
  return or(...columns.map(c => sql`${c} like ${likeText(word)}`))!
}
function wordsMatch(text: string, columns = TEXT_COLUMNS) {
  return and(...text.split(/\s+/).filter(Boolean).map(w => anyColumnLike(w, columns)))
}
function readingMatch(readings: { value: number, unit?: string }[]) {
  return readings.map(r => (r.unit ? and(eq(p.unit, r.unit), valueNear(r.value))! : valueNear(r.value)))
}
function readingText(r: { value: number, unit?: string }) {
  return r.unit ? formatValue(r.value, r.unit) : `${formatValue(r.value, '').trim()} (any unit)`
}

/** One page of the catalogue: `q` reads values in any notation (4k7, yellow violet red, 104) and matches text too. */
export async function searchParts(db: Reader, s: PartSearch) {
  const conds: (SQL | undefined)[] = []
  const readings: string[] = []
  let valueProblem: string | null = null
  if (s.kind) conds.push(eq(p.kind, s.kind))
  if (s.q) {
    const qs = valueQueries(s.q, s.kind)
    readings.push(...qs.map(readingText))
    conds.push(or(...readingMatch(qs), wordsMatch(s.q)))
  }
  if (s.value) {
    const vs = valueQueries(s.value, s.kind)
    if (!vs.length) valueProblem = `"${s.value}" does not read as a value: try 4k7, 100n or 104`
    readings.push(...vs.map(readingText))
    conds.push(vs.length ? or(...readingMatch(vs)) : sql`false`)
  }
  if (s.name) conds.push(wordsMatch(s.name, [p.name, p.description, p.makerPartNumber]))
  if (s.package) conds.push(sql`${p.package} like ${likeText(s.package)}`)
  const where = and(...conds)
  const dir = s.dir === 'desc' ? sql`desc` : sql`asc`
  const key = { name: sql`${p.name}`, kind: sql`${p.kind}`, value: sql`${p.value} is null, ${p.unit} ${dir}, ${p.value}`, package: sql`${p.package} is null, ${p.package}`, onHand: onHandSql, updated: sql`${p.updatedAt}` }[s.sort]
  const [rows, [count]] = await Promise.all([
    db.select({ part: p, onHand: onHandSql }).from(p).where(where)
      .orderBy(sql`${key} ${dir}`, asc(p.name), asc(p.id))
      .limit(s.pageSize).offset((s.page - 1) * s.pageSize),
    db.select({ n: sql<number>`cast(count(*) as signed)` }).from(p).where(where),
  ])
  return {
    rows: rows.map(r => ({ ...r.part, onHand: Number(r.onHand), display: displayValue(r.part) })),
    total: Number(count!.n),
    page: s.page,
    pageSize: s.pageSize,
    readings: [...new Set(readings)],
    valueProblem,
  }
}

/** How a part's value reads in lists: formatted from the stored number, else the text as typed. */
export function displayValue(part: Pick<PartRow, 'value' | 'unit' | 'valueText'>): string | null {
  if (part.value != null && part.unit) return formatValue(part.value, part.unit)
  return part.valueText ?? null
}

/** Checks changes merged over a stored part. The stored value is kept unless the value text or kind changes. */
export function mergePartChanges(stored: PartRow, changes: Record<string, unknown>): PartValues {
  const keepValue = !('valueText' in changes) && (changes.kind === undefined || changes.kind === stored.kind)
  const input = { ...partAsInput(stored), ...changes, ...(keepValue ? { valueText: null } : {}) }
  // A name made from the value follows the value, unless a new name is given.
  const wasAuto = stored.value != null && !!stored.unit && stored.name === defaultName(stored.kind, formatValue(stored.value, stored.unit), stored.dielectric)
  if (wasAuto && (changes.name == null || changes.name === '' || changes.name === stored.name)) {
    const dielectric = typeof input.dielectric === 'string' ? input.dielectric.trim() || null : null
    input.name = keepValue ? defaultName(input.kind as string, formatValue(stored.value!, stored.unit!), dielectric) : null
  }
  const checked = partBody.safeParse(input)
  if (!checked.success) badRequest(checked.error.issues)
  const values = checked.data
  if (keepValue) Object.assign(values, { value: stored.value, unit: stored.unit, valueText: stored.valueText })
  return values
}

/** One part with where it is used (BOM lines by kit and revision), its stock by bin and its availability. */
export async function partDetail(db: Reader, id: number) {
  const [part] = await db.select().from(schema.parts).where(eq(schema.parts.id, id))
  if (!part) return null
  const [usedIn, lots, available, usage] = await Promise.all([
    db.select({
      lineId: schema.bomLines.id, designators: schema.bomLines.designators, qty: schema.bomLines.qty, noStandIns: schema.bomLines.noStandIns,
      revisionId: schema.revisions.id, revision: schema.revisions.label, state: schema.revisions.state, kitId: schema.kits.id, kit: schema.kits.name,
    }).from(schema.bomLines)
      .innerJoin(schema.revisions, eq(schema.revisions.id, schema.bomLines.revisionId))
      .innerJoin(schema.kits, eq(schema.kits.id, schema.revisions.kitId))
      .where(eq(schema.bomLines.partId, id))
      .orderBy(asc(schema.kits.name), asc(schema.revisions.label), asc(schema.bomLines.sortOrder)),
    db.select({ lotId: schema.lots.id, bin: schema.bins.code, place: schema.bins.place, onHand: schema.lots.onHand, receivedOn: schema.lots.receivedOn })
      .from(schema.lots).innerJoin(schema.bins, eq(schema.bins.id, schema.lots.binId))
      .where(eq(schema.lots.partId, id)).orderBy(asc(schema.bins.walkOrder), asc(schema.bins.code)),
    availableByPart(db, [id]),
    partUsage(db, id),
  ])
  const stock = available.get(id) ?? { onHand: 0, reserved: 0, available: 0 }
  return { part: { ...part, display: displayValue(part) }, usedIn, lots, stock, groups: usage.groups, deletable: usageRefusal(usage) === null, inUse: usageRefusal(usage) }
}

// ---------------------------------------------------------------------------------------
// Interchangeable groups

export const swapGroupBody = z.object({
  name: z.string({ error: 'Give the group a name' }).trim().min(1, 'Give the group a name').max(120, 'Keep the name to 120 characters'),
  warning: text(255),
  members: z.array(z.object({
    partId: z.coerce.number({ error: 'Choose a part' }).int().positive('Choose a part'),
    direction: z.enum(['both', 'replaces', 'replaced'], { error: 'Choose both, may replace or may be replaced' }),
  }), { error: 'List the parts in the group' }).min(2, 'A group needs at least two parts').max(50, 'At most 50 parts in a group'),
})
export type SwapGroupInput = z.output<typeof swapGroupBody>

/** Every group with its members and their parts, for the swap rules page. */
export async function listSwapGroups(db: Reader) {
  const groups = await loadSwapGroups(db)
  const ids = [...new Set(groups.flatMap(g => g.members.map(m => Number(m.partId))))]
  const rows = ids.length ? await db.select().from(schema.parts).where(inArray(schema.parts.id, ids)) : []
  const byId = new Map(rows.map(r => [r.id, r]))
  return groups.map(g => ({
    id: g.dbId,
    name: g.name,
    warning: g.warning ?? null,
    members: g.members.map((m) => {
      const part = byId.get(Number(m.partId))!
      return { partId: part.id, direction: m.direction, name: part.name, kind: part.kind, display: displayValue(part), package: part.package, pinoutNote: part.pinoutNote }
    }),
  }))
}

/**
 * Refuses (400, with every problem listed) a group whose parts are unknown, that lists a part
 * twice, makes a part stand in for itself, or contradicts another group. `id` is the group being edited.
 */
export async function checkSwapGroup(db: Reader, input: SwapGroupInput, id: number | null) {
  const ids = [...new Set(input.members.map(m => m.partId))]
  const found = await db.select({ id: schema.parts.id }).from(schema.parts).where(inArray(schema.parts.id, ids))
  const missing = ids.filter(i => !found.some(f => f.id === i))
  if (missing.length) {
    const message = `Not in the catalogue: part${missing.length === 1 ? '' : 's'} ${missing.join(', ')}`
    throw createError({ statusCode: 400, statusMessage: 'Invalid input', message, data: { fields: { members: message }, problems: [message] } })
  }
  const existing = await loadSwapGroups(db)
  const partIds = [...new Set([...ids, ...existing.flatMap(g => g.members.map(m => Number(m.partId)))])]
  const names = await db.select({ id: schema.parts.id, name: schema.parts.name }).from(schema.parts).where(inArray(schema.parts.id, partIds))
  // checkGroup only compares ids, so readable labels make its messages readable.
  const label = new Map(names.map(n => [String(n.id), `${n.name} (#${n.id})`]))
  const relabel = (g: SwapGroup): SwapGroup => ({ ...g, members: g.members.map(m => ({ ...m, partId: label.get(m.partId) ?? m.partId })) })
  const mine = relabel({ id: id == null ? 'new' : String(id), name: input.name, warning: input.warning, members: input.members.map(m => ({ partId: String(m.partId), direction: m.direction })) })
  const problems = checkGroup(mine, existing.map(relabel))
  if (problems.length) {
    throw createError({ statusCode: 400, statusMessage: 'Swap rule refused', message: problems.join('. '), data: { fields: { members: problems[0] }, problems } })
  }
}

/** Creates (id null) or replaces a group and its members in one transaction; returns its id. */
export async function saveSwapGroup(db: AnyDb, userId: number, id: number | null, input: SwapGroupInput) {
  return db.transaction(async (tx) => {
    // Locks every group row (and the gap after them) first: one writer at a time, so two saves
    // cannot together make a contradiction that neither makes alone.
    const locked = await tx.select({ id: schema.swapGroups.id }).from(schema.swapGroups).for('update')
    if (id != null && !locked.some(g => g.id === id)) throw createError({ statusCode: 404, statusMessage: 'Not found', message: `No swap group ${id}` })
    await checkSwapGroup(tx, input, id)
    let groupId = id
    if (groupId == null) {
      const [row] = await tx.insert(schema.swapGroups).values({ name: input.name, warning: input.warning }).$returningId()
      groupId = row!.id
    }
    else {
      await tx.update(schema.swapGroups).set({ name: input.name, warning: input.warning }).where(eq(schema.swapGroups.id, groupId))
      await tx.delete(schema.swapGroupMembers).where(eq(schema.swapGroupMembers.groupId, groupId))
    }
    await tx.insert(schema.swapGroupMembers).values(input.members.map(m => ({ groupId: groupId!, partId: m.partId, direction: m.direction })))
    await tx.insert(schema.auditLog).values({ userId, action: id == null ? 'swap-group.create' : 'swap-group.update', subjectType: 'swap_group', subjectId: String(groupId), detail: input })
    return groupId
  })
}
