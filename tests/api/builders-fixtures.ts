// Records the builders' tests make for themselves (API and browser): a small kit of their own with
// its own parts, bins and lots (exact stock numbers), sealed bags for builders who can sign in, and a
// newer revision for rework. Nothing here touches the demo rows other tests rely on.
import { randomBytes } from 'node:crypto'
import { and, eq, inArray } from 'drizzle-orm'
import { drizzle, type MySql2Database } from 'drizzle-orm/mysql2'
import mysql from 'mysql2/promise'
import * as schema from '../../server/db/schema'
import { newBagCode } from '../../server/utils/codes'
import { moveStock } from '../../server/utils/stock'

export type BuildersDb = MySql2Database<typeof schema>
export const tag = () => randomBytes(3).toString('hex').toUpperCase()

export async function openDb(url: string) {
  const conn = await mysql.createConnection({ uri: url, timezone: 'Z', dateStrings: ['DATE'] })
  return { conn, db: drizzle(conn, { schema, mode: 'default' }) as BuildersDb }
}

async function userId(db: BuildersDb, email: string) {
  const [u] = await db.select({ id: schema.users.id, hash: schema.users.passwordHash }).from(schema.users).where(eq(schema.users.email, email))
  return u!
}

/** A builder who signs in with the demo password (the hash is copied from a demo account). */
export async function makeBuilder(db: BuildersDb, name: string) {
  const demo = await userId(db, 'bea.marchetti@club.invalid')
  const email = `${name.toLowerCase().replace(/[^a-z0-9]+/g, '.')}.${tag().toLowerCase()}@club.invalid`
  const [u] = await db.insert(schema.users).values({ email, name, passwordHash: demo.hash }).$returningId()
  await db.insert(schema.userRoles).values({ userId: u!.id, role: 'builder' })
  return { id: u!.id, email, name }
}

type PartKey = 'pcb' | 'r1k' | 'r2k2' | 'npnA' | 'npnB' | 'cap' | 'diode' | 'screw'
export interface KitScenario {
  t: string
  kitId: number
  kitName: string
  revA: number
  offeringId: number
  buildDayId: number
  parts: Record<PartKey, number>
  partNames: Record<PartKey, string>
  /** lots: `main` per part in bin T<t>-1, and a small spares lot of r1k in bin T<t>-S. */
  lots: { main: Record<PartKey, number>, spares: number }
  bins: { main: string, spares: string }
  lines: Record<'pcb' | 'r' | 'q' | 'c' | 'hw', number>
  stages: [number, number]
  swapWarning: string
}

/**
 * A kit of the test's own on a build day of its own: PCB1, R1–R2 (1 kΩ), Q1 (NPN, a CBE stand-in with a
 * pinout warning allowed), C1 (100 nF, no stand-ins), HW1 (4 screws); stock 50 of each in one bin,
 * and 2 of the 1 kΩ in a spares bin.
 */
export async function makeKitScenario(db: BuildersDb, opts: { transmits?: boolean } = {}): Promise<KitScenario> {
  const t = tag()
  const [day] = await db.insert(schema.buildDays).values({
    name: `Builders test day ${t}`, date: '2027-05-08', venue: 'Test hall', seats: 100,
    salesOpenAt: new Date('2027-01-01T00:00:00Z'), salesCloseAt: new Date('2027-05-01T00:00:00Z'), currency: 'GBP',
  }).$returningId()
  const organiser = await userId(db, 'olwen.hartley@club.invalid')
  const defs: Record<PartKey, typeof schema.parts.$inferInsert> = {
    pcb: { kind: 'board', name: `Test board ${t}` },
    r1k: { kind: 'resistor', name: `Resistor 1 kΩ ${t}`, value: 1000, unit: 'Ω', valueText: '1 kΩ', tolerancePct: 5, powerW: 0.25, mounting: 'tht', package: 'axial' },
    r2k2: { kind: 'resistor', name: `Resistor 2.2 kΩ ${t}`, value: 2200, unit: 'Ω', valueText: '2.2 kΩ', tolerancePct: 5, powerW: 0.25, mounting: 'tht', package: 'axial' },
    npnA: { kind: 'transistor', name: `NPN EBC ${t}`, package: 'TO-92', pinoutNote: 'EBC' },
    npnB: { kind: 'transistor', name: `NPN CBE ${t}`, package: 'TO-92', pinoutNote: 'CBE' },
    cap: { kind: 'capacitor', name: `Capacitor 100 nF ${t}`, value: 100e-9, unit: 'F', valueText: '100 nF', dielectric: 'X7R', voltageV: 50, mounting: 'tht' },
    diode: { kind: 'diode', name: `Diode ${t}`, package: 'DO-35', polarised: true },
    screw: { kind: 'hardware', name: `Screw M3 ${t}` },
  }
  const parts = {} as Record<PartKey, number>
  const partNames = {} as Record<PartKey, string>
  for (const [k, v] of Object.entries(defs) as [PartKey, typeof schema.parts.$inferInsert][]) {
    const [row] = await db.insert(schema.parts).values(v).$returningId()
    parts[k] = row!.id
    partNames[k] = v.name
  }
  const bins = { main: `T${t}-1`, spares: `T${t}-S` }
  const [mainBin] = await db.insert(schema.bins).values({ code: bins.main, place: 'Test shelf', walkOrder: 5 }).$returningId()
  const [sparesBin] = await db.insert(schema.bins).values({ code: bins.spares, place: 'Test spares crate', walkOrder: 6 }).$returningId()
  const receive = async (partId: number, binId: number, qty: number) => {
    const [lot] = await db.insert(schema.lots).values({ partId, binId, qtyReceived: qty, onHand: qty, unitCostMinor: 5, receivedOn: '2026-11-20' }).$returningId()
    await db.insert(schema.ledger).values({ lotId: lot!.id, partId, binId, kind: 'receive', qty, userId: organiser.id, reason: 'Builders test stock' })
    return lot!.id
  }
  const spares = await receive(parts.r1k, sparesBin!.id, 2)
  const main = {} as Record<PartKey, number>
  for (const k of Object.keys(parts) as PartKey[]) main[k] = await receive(parts[k], mainBin!.id, 50)

  const swapWarning = `Pinout differs (CBE, not EBC): turn it round ${t}`
  const [group] = await db.insert(schema.swapGroups).values({ name: `NPN pinouts ${t}`, warning: swapWarning }).$returningId()
  await db.insert(schema.swapGroupMembers).values([{ groupId: group!.id, partId: parts.npnA, direction: 'both' }, { groupId: group!.id, partId: parts.npnB, direction: 'both' }])

  const kitName = `Test receiver ${t}`
  const [kit] = await db.insert(schema.kits).values({ name: kitName, slug: `test-rx-${t.toLowerCase()}`, transmits: opts.transmits ?? false }).$returningId()
  const [rev] = await db.insert(schema.revisions).values({ kitId: kit!.id, label: 'A', state: 'released', releasedAt: new Date(Date.now() - 86_400_000) }).$returningId()
  const [s1] = await db.insert(schema.stages).values({ revisionId: rev!.id, name: 'Board and power', sortOrder: 1 }).$returningId()
  const [s2] = await db.insert(schema.stages).values({ revisionId: rev!.id, name: 'Audio', sortOrder: 2 }).$returningId()
  const line = async (designators: string, qty: number, partId: number, stageId: number, sortOrder: number, extra: Partial<typeof schema.bomLines.$inferInsert> = {}) => {
    const [l] = await db.insert(schema.bomLines).values({ revisionId: rev!.id, designators, qty, partId, stageId, sortOrder, ...extra }).$returningId()
    return l!.id
  }
  const lines = {
    pcb: await line('PCB1', 1, parts.pcb, s1!.id, 1),
    r: await line('R1, R2', 2, parts.r1k, s1!.id, 2),
    q: await line('Q1', 1, parts.npnA, s1!.id, 3),
    c: await line('C1', 1, parts.cap, s2!.id, 4, { noStandIns: true, notes: 'C0G only' }),
    hw: await line('HW1', 4, parts.screw, s2!.id, 5),
  }
  const [offering] = await db.insert(schema.offerings).values({ buildDayId: day!.id, revisionId: rev!.id, allowedOptionIds: [], memberPriceMinor: 1500, nonMemberPriceMinor: 1800 }).$returningId()
  return { t, kitId: kit!.id, kitName, revA: rev!.id, offeringId: offering!.id, buildDayId: day!.id, parts, partNames, lots: { main, spares }, bins, lines, stages: [s1!.id, s2!.id], swapWarning }
}

/**
 * A paid order of the scenario's kit for a builder, and its bag. `state` sealed (default) packs
 * every line from the main bin (ledger picks, reservations consumed); Q1 gets the CBE stand-in.
 */
export async function makeBag(db: BuildersDb, k: KitScenario, builderId: number, opts: { seat?: number, state?: 'open' | 'sealed', packer?: string } = {}) {
  const state = opts.state ?? 'sealed'
  const packer = await userId(db, opts.packer ?? 'pip.achterberg@club.invalid')
  return db.transaction(async (tx) => {
    const [order] = await tx.insert(schema.orders).values({
      buildDayId: k.buildDayId, offeringId: k.offeringId, userId: builderId, optionIds: [], state: 'paid', amountMinor: 1500, currency: 'GBP',
      seat: opts.seat ?? null, stripeSessionId: `cs_builders_${tag()}${tag()}`, paidAt: new Date(),
    }).$returningId()
    const lines = await tx.select().from(schema.bomLines).where(eq(schema.bomLines.revisionId, k.revA))
    await tx.insert(schema.reservations).values(lines.map(l => ({ orderId: order!.id, lineId: l.id, partId: l.id === k.lines.q && state === 'sealed' ? k.parts.npnB : l.partId!, qty: l.qty, state: state === 'sealed' ? 'consumed' as const : 'confirmed' as const })))
    const code = newBagCode()
    const [bag] = await tx.insert(schema.bags).values({
      code, orderId: order!.id, buildDayId: k.buildDayId, revisionId: k.revA, state,
      ...(state === 'sealed' ? { sealedBy: packer.id, sealedAt: new Date() } : {}),
    }).$returningId()
    for (const l of lines) {
      const standIn = state === 'sealed' && l.id === k.lines.q
      await tx.insert(schema.bagItems).values({
        bagId: bag!.id, lineId: l.id, stageId: l.stageId, partId: l.partId!, qtyNeeded: l.qty, qtyPacked: state === 'sealed' ? l.qty : 0,
        standInPartId: standIn ? k.parts.npnB : null, standInWarning: standIn ? k.swapWarning : null,
      })
      if (state === 'sealed') {
        const partKey = (Object.keys(k.parts) as PartKey[]).find(p => k.parts[p] === (standIn ? k.parts.npnB : l.partId))!
        await moveStock(tx, { lotId: k.lots.main[partKey], qty: -l.qty, kind: 'pick', userId: packer.id, orderId: order!.id, bagId: bag!.id, reason: 'Builders test packing' })
      }
    }
    return { orderId: order!.id, bagId: bag!.id, code }
  })
}

/**
 * Releases revision B of the scenario's kit: R1–R2 become 2.2 kΩ, C1 goes, D1 (diode) comes in,
 * HW1 grows from 4 to 6 screws; PCB1 and Q1 stay as they are.
 */
export async function releaseRevisionB(db: BuildersDb, k: KitScenario) {
  const [rev] = await db.insert(schema.revisions).values({ kitId: k.kitId, label: 'B', state: 'released', parentId: k.revA, releasedAt: new Date() }).$returningId()
  const [s1] = await db.insert(schema.stages).values({ revisionId: rev!.id, name: 'Board and power', sortOrder: 1 }).$returningId()
  const [s2] = await db.insert(schema.stages).values({ revisionId: rev!.id, name: 'Audio', sortOrder: 2 }).$returningId()
  await db.insert(schema.bomLines).values([
    { revisionId: rev!.id, designators: 'PCB1', qty: 1, partId: k.parts.pcb, stageId: s1!.id, sortOrder: 1 },
    { revisionId: rev!.id, designators: 'R1, R2', qty: 2, partId: k.parts.r2k2, stageId: s1!.id, sortOrder: 2 },
    { revisionId: rev!.id, designators: 'Q1', qty: 1, partId: k.parts.npnA, stageId: s1!.id, sortOrder: 3 },
    { revisionId: rev!.id, designators: 'D1', qty: 1, partId: k.parts.diode, stageId: s1!.id, sortOrder: 4 },
    { revisionId: rev!.id, designators: 'HW1', qty: 6, partId: k.parts.screw, stageId: s2!.id, sortOrder: 5 },
  ])
  return rev!.id
}

/** Sum of on-hand over every lot of each part. */
export async function onHandByPart(db: BuildersDb, partIds: number[]) {
  const lots = await db.select({ partId: schema.lots.partId, onHand: schema.lots.onHand }).from(schema.lots).where(inArray(schema.lots.partId, partIds))
  const out = new Map<number, number>()
  for (const l of lots) out.set(l.partId, (out.get(l.partId) ?? 0) + l.onHand)
  return out
}

export async function lotOnHand(db: BuildersDb, lotId: number) {
  const [l] = await db.select({ onHand: schema.lots.onHand }).from(schema.lots).where(eq(schema.lots.id, lotId))
  return l!.onHand
}

export async function countRows(db: BuildersDb, userIdValue: number) {
  const reports = await db.select({ id: schema.reports.id }).from(schema.reports).where(eq(schema.reports.userId, userIdValue))
  const photos = reports.length ? await db.select({ id: schema.reportPhotos.id }).from(schema.reportPhotos).where(inArray(schema.reportPhotos.reportId, reports.map(r => r.id))) : []
  return { reports: reports.length, photos: photos.length }
}

export { and, eq, schema }
