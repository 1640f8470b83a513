// Missing-part reports: filed by a builder against lines of their bag, handled at the spares desk
// (queue, state changes, hand-outs from stock), with an e-mail to the builder at each change.
import type { H3Event } from 'h3'
import { z } from 'zod'
import type { Db, Tx } from './db'
import { availableByPart, moveStock } from './stock'
import { checkPhotos, PHOTO_MAX_BYTES, PHOTO_MAX_COUNT, photoKey, removePhoto, storePhoto, type CheckedPhoto, type IncomingPhoto } from './uploads'
import { loadSwapContext } from './catalogue'
import { standInsFor } from '../../shared/utils/swaps'

export const REPORT_REASONS = ['missing', 'damaged', 'wrong', 'extra'] as const
export const REPORT_REASON_WORDS: Record<(typeof REPORT_REASONS)[number], string> = { missing: 'missing', damaged: 'damaged', wrong: 'wrong part', extra: 'extra part' }
export const RESOLUTION_WORDS = { 'handed-out': 'part handed out', 'replaced': 'replaced', 'not-needed': 'not needed' } as const
type ReportState = 'open' | 'handling' | 'resolved' | 'declined'
type Resolution = keyof typeof RESOLUTION_WORDS

export const reportForm = z.object({
  bagId: z.coerce.number({ error: 'Choose your bag' }).int().positive('Choose your bag'),
  lineIds: z.array(z.coerce.number().int().positive()).max(40, 'Choose at most 40 lines').default([]),
  somethingElse: z.string().trim().max(255, 'Keep it under 255 characters').optional().transform(v => v || undefined),
  qty: z.coerce.number({ error: 'Give the number of parts' }).int('Give a whole number').min(1, 'At least 1').max(50, 'At most 50 at a time'),
  reason: z.enum(REPORT_REASONS, 'Choose missing, damaged, wrong part or extra'),
  comment: z.string().trim().max(2000, 'Keep the comment under 2,000 characters').optional().transform(v => v || undefined),
}).refine(v => v.lineIds.length > 0 || v.somethingElse, { message: 'Choose at least one line, or describe "something else"', path: ['lineIds'] })
export type ReportForm = z.output<typeof reportForm>

/** Three photos of 8 MB plus the form fields: anything larger is refused before it is read. */
const MAX_REPORT_BODY = PHOTO_MAX_COUNT * PHOTO_MAX_BYTES + 256 * 1024

/** Reads the multipart report form: its fields (validated) and its photos (checked and stripped). */
export async function readReportForm(event: H3Event) {
  const length = Number(getRequestHeader(event, 'content-length') || 0)
  if (length > MAX_REPORT_BODY) {
    throw createError({ statusCode: 413, statusMessage: 'Too large', message: `The photos are too large together: add at most ${PHOTO_MAX_COUNT} photos of 8 MB each` })
  }
  const parts = await readMultipartFormData(event)
  if (!parts) throw createError({ statusCode: 400, statusMessage: 'Invalid input', message: 'Send the report as a form (multipart/form-data)' })
  const fields: Record<string, unknown> = { lineIds: [] as string[] }
  const photos: IncomingPhoto[] = []
  for (const p of parts) {
    if (p.filename !== undefined) {
      if (p.data.length > 0 || p.filename) photos.push({ filename: p.filename, data: p.data })
      continue
    }
    const value = p.data.toString('utf8')
    if (p.name === 'lineIds') (fields.lineIds as string[]).push(...value.split(',').filter(Boolean))
    else if (p.name) fields[p.name] = value
  }
  const result = reportForm.safeParse(fields)
  if (!result.success) badRequest(result.error.issues)
  return { form: result.data, photos: checkPhotos(photos) }
}

/**
 * Files a report for the builder's own bag: every line must be in that bag (else 400), the bag
 * must be sealed or collected. The report, its first event and its photos are stored together.
 */
export async function fileMissingPartReport(db: Db, user: { id: number }, form: ReportForm, photos: CheckedPhoto[]) {
  const stored: string[] = []
  try {
    const id = await db.transaction(async (tx) => {
      const [bag] = await tx.select({ id: tables.bags.id, state: tables.bags.state, orderId: tables.bags.orderId, code: tables.bags.code })
        .from(tables.bags).innerJoin(tables.orders, eq(tables.orders.id, tables.bags.orderId))
        .where(and(eq(tables.bags.id, form.bagId), eq(tables.orders.userId, user.id)))
      if (!bag) throw createError({ statusCode: 404, statusMessage: 'Not found', message: 'No such bag among your orders' })
      if (bag.state !== 'sealed' && bag.state !== 'collected') {
        throw createError({ statusCode: 409, statusMessage: 'Not packed yet', message: `Bag ${bag.code} is not packed yet: reports open once it is sealed` })
      }
      const lineIds = [...new Set(form.lineIds)]
      if (lineIds.length) {
        const inBag = await tx.select({ lineId: tables.bagItems.lineId }).from(tables.bagItems)
          .where(and(eq(tables.bagItems.bagId, bag.id), inArray(tables.bagItems.lineId, lineIds)))
        const known = new Set(inBag.map(r => r.lineId))
        const stray = lineIds.filter(l => !known.has(l))
        if (stray.length) {
          throw createError({ statusCode: 400, statusMessage: 'Invalid input', message: `Line ${stray.join(', ')} is not in your bag ${bag.code}`, data: { fields: { lineIds: 'Choose lines from your own bag' } } })
        }
      }
      const [row] = await tx.insert(tables.reports).values({
        orderId: bag.orderId, bagId: bag.id, userId: user.id, lineIds, somethingElse: form.somethingElse ?? null,
        qty: form.qty, reason: form.reason, comment: form.comment ?? null,
      }).$returningId()
      await tx.insert(tables.reportEvents).values({ reportId: row!.id, state: 'open', userId: user.id, note: 'Report filed' })
      for (const p of photos) {
        const key = photoKey(row!.id, p.ext)
        await storePhoto(key, p.data)
        stored.push(key)
        await tx.insert(tables.reportPhotos).values({ reportId: row!.id, storageKey: key, contentType: p.contentType, size: p.data.length })
      }
      return row!.id
    })
    await mailReportChange(db, id)
    return id
  }
  catch (err) {
    await Promise.all(stored.map(k => removePhoto(k).catch(() => {})))
    throw err
  }
}

/** Reports with their lines, photos, events and hand-outs, in the shape both the builder and the desk read. */
export async function describeReports(db: Db, rows: (typeof tables.reports.$inferSelect)[]) {
  if (!rows.length) return []
  const ids = rows.map(r => r.id)
  const lineIds = [...new Set(rows.flatMap(r => r.lineIds ?? []))]
  const bagIds = [...new Set(rows.map(r => r.bagId).filter((x): x is number => x != null))]
  const [lines, items, photos, events, handOuts] = await Promise.all([
    lineIds.length
      ? db.select({ id: tables.bomLines.id, designators: tables.bomLines.designators, noStandIns: tables.bomLines.noStandIns, partId: tables.bomLines.partId, stage: tables.stages.name })
        .from(tables.bomLines).leftJoin(tables.stages, eq(tables.stages.id, tables.bomLines.stageId)).where(inArray(tables.bomLines.id, lineIds))
      : [],
    bagIds.length && lineIds.length
      ? db.select().from(tables.bagItems).where(and(inArray(tables.bagItems.bagId, bagIds), inArray(tables.bagItems.lineId, lineIds)))
      : [],
    db.select({ id: tables.reportPhotos.id, reportId: tables.reportPhotos.reportId, contentType: tables.reportPhotos.contentType, size: tables.reportPhotos.size })
      .from(tables.reportPhotos).where(inArray(tables.reportPhotos.reportId, ids)).orderBy(asc(tables.reportPhotos.id)),
    db.select({ e: tables.reportEvents, by: tables.users.name }).from(tables.reportEvents)
      .leftJoin(tables.users, eq(tables.users.id, tables.reportEvents.userId))
      .where(inArray(tables.reportEvents.reportId, ids)).orderBy(asc(tables.reportEvents.createdAt), asc(tables.reportEvents.id)),
    db.select({ reportId: tables.ledger.reportId, qty: tables.ledger.qty, partId: tables.ledger.partId, partName: tables.parts.name, binCode: tables.bins.code, at: tables.ledger.createdAt })
      .from(tables.ledger).innerJoin(tables.parts, eq(tables.parts.id, tables.ledger.partId)).innerJoin(tables.bins, eq(tables.bins.id, tables.ledger.binId))
      .where(and(eq(tables.ledger.kind, 'spares'), inArray(tables.ledger.reportId, ids))).orderBy(asc(tables.ledger.id)),
  ])
  const partIds = [...new Set([...lines.map(l => l.partId), ...items.flatMap(i => [i.partId, i.standInPartId])].filter((x): x is number => x != null))]
  const parts = partIds.length
    ? await db.select({ id: tables.parts.id, name: tables.parts.name, pinoutNote: tables.parts.pinoutNote }).from(tables.parts).where(inArray(tables.parts.id, partIds))
    : []
  const partOf = new Map(parts.map(p => [p.id, p]))
  return rows.map((r) => {
    const reportLines = (r.lineIds ?? []).map((lineId) => {
      const line = lines.find(l => l.id === lineId)
      const item = items.find(i => i.bagId === r.bagId && i.lineId === lineId)
      const partId = item?.partId ?? line?.partId ?? null
      const standInId = item?.standInPartId != null && item.standInPartId !== partId ? item.standInPartId : null
      return {
        lineId,
        designators: line?.designators ?? `line ${lineId}`,
        stage: line?.stage ?? null,
        noStandIns: line?.noStandIns ?? false,
        part: partId != null ? partOf.get(partId) ?? null : null,
        packedStandIn: standInId != null ? partOf.get(standInId) ?? null : null,
        warning: item?.standInWarning ?? null,
      }
    })
    return {
      id: r.id, orderId: r.orderId, bagId: r.bagId, userId: r.userId,
      state: r.state as ReportState, resolution: r.resolution as Resolution | null, declineReason: r.declineReason,
      reason: r.reason, qty: r.qty, comment: r.comment, somethingElse: r.somethingElse,
      createdAt: r.createdAt, updatedAt: r.updatedAt,
      lines: reportLines,
      photos: photos.filter(p => p.reportId === r.id).map(p => ({ id: p.id, contentType: p.contentType, size: p.size, url: `/api/reports/${r.id}/photos/${p.id}` })),
      events: events.filter(e => e.e.reportId === r.id).map(e => ({ state: e.e.state, resolution: e.e.resolution, note: e.e.note, by: e.by, at: e.e.createdAt })),
      handOuts: handOuts.filter(h => h.reportId === r.id).map(h => ({ qty: -h.qty, partId: h.partId, partName: h.partName, binCode: h.binCode, at: h.at })),
    }
  })
}
export type ReportView = Awaited<ReturnType<typeof describeReports>>[number]

/** The builder's own reports, newest first. */
export async function listBuilderReports(db: Db, userId: number) {
  const rows = await db.select().from(tables.reports).where(eq(tables.reports.userId, userId)).orderBy(desc(tables.reports.createdAt), desc(tables.reports.id))
  return describeReports(db, rows)
}

export interface SparesLot { lotId: number, partId: number, binCode: string, binPlace: string, onHand: number }

/**
 * The spares desk's queue: open and being-handled reports, oldest first, each with the builder's
 * seat and name, and per line the lots holding its part and the stand-ins allowed (with their lots).
 */
export async function loadSparesQueue(db: Db, opts: { states?: ReportState[], limit?: number } = {}) {
  const states = opts.states ?? ['open', 'handling']
  const rows = await db.select().from(tables.reports).where(inArray(tables.reports.state, states))
    .orderBy(asc(tables.reports.createdAt), asc(tables.reports.id)).limit(opts.limit ?? 200)
  const views = await describeReports(db, rows)
  const orderIds = [...new Set(rows.map(r => r.orderId))]
  const who = orderIds.length
    ? await db.select({ orderId: tables.orders.id, seat: tables.orders.seat, name: tables.users.name, callsign: tables.users.callsign, bagCode: tables.bags.code, kit: tables.kits.name })
      .from(tables.orders).innerJoin(tables.users, eq(tables.users.id, tables.orders.userId))
      .innerJoin(tables.offerings, eq(tables.offerings.id, tables.orders.offeringId))
      .innerJoin(tables.revisions, eq(tables.revisions.id, tables.offerings.revisionId))
      .innerJoin(tables.kits, eq(tables.kits.id, tables.revisions.kitId))
      .leftJoin(tables.bags, eq(tables.bags.orderId, tables.orders.id))
      .where(inArray(tables.orders.id, orderIds))
    : []
  const swap = views.some(v => v.lines.length) ? await loadSwapContext(db) : null
  const standInsOf = (partId: number, noStandIns: boolean) => swap
    ? standInsFor(String(partId), swap.parts, swap.groups, swap.settings, { noStandIns }).map(s => ({
        partId: Number(s.partId), name: swap.rows.find(p => p.id === Number(s.partId))?.name ?? `Part ${s.partId}`, reason: s.reason, warning: s.warning,
      }))
    : []
  const lines = views.flatMap(v => v.lines.map(l => ({ l, standIns: l.part ? standInsOf(l.part.id, l.noStandIns) : [] })))
  const partIds = [...new Set(lines.flatMap(x => [x.l.part?.id, x.l.packedStandIn?.id, ...x.standIns.map(s => s.partId)]).filter((x): x is number => x != null))]
  const lots = await lotsOfParts(db, partIds)
  return views.map((v) => {
    const w = who.find(x => x.orderId === v.orderId)
    return {
      ...v,
      builder: { name: w?.name ?? '?', seat: w?.seat ?? null, callsign: w?.callsign ?? null },
      bagCode: w?.bagCode ?? null,
      kit: w?.kit ?? null,
      lines: v.lines.map((l) => {
        const standIns = l.part ? standInsOf(l.part.id, l.noStandIns) : []
        return { ...l, lots: l.part ? lots.filter(x => x.partId === l.part!.id) : [], standIns: standIns.map(s => ({ ...s, lots: lots.filter(x => x.partId === s.partId) })) }
      }),
    }
  })
}

/** Lots of these parts that hold stock, in walk order, with their bin. */
async function lotsOfParts(db: Db | Tx, partIds: number[]): Promise<SparesLot[]> {
  if (!partIds.length) return []
  return db.select({ lotId: tables.lots.id, partId: tables.lots.partId, binCode: tables.bins.code, binPlace: tables.bins.place, onHand: tables.lots.onHand })
    .from(tables.lots).innerJoin(tables.bins, eq(tables.bins.id, tables.lots.binId))
    .where(and(inArray(tables.lots.partId, partIds), gt(tables.lots.onHand, 0)))
    .orderBy(asc(tables.bins.walkOrder), asc(tables.bins.code), asc(tables.lots.id))
}

export const reportStateChange = z.discriminatedUnion('state', [
  z.object({ state: z.literal('open') }),
  z.object({ state: z.literal('handling') }),
  z.object({ state: z.literal('resolved'), resolution: z.enum(['replaced', 'not-needed'], 'Choose replaced or not needed (hand-outs go through "Hand out")'), note: z.string().trim().max(255).optional() }),
  z.object({ state: z.literal('declined'), reason: z.string().trim().min(3, 'Say why, so the builder knows').max(255, 'Keep it under 255 characters') }),
], 'Choose a state: open, handling, resolved or declined')
export type ReportStateChange = z.output<typeof reportStateChange>

const ACTIVE: ReportState[] = ['open', 'handling']

/** Refuses a change to a finished report or a no-op, naming the report's state. */
async function refuseChange(db: Db | Tx, id: number, wanted: ReportState): Promise<never> {
  const [r] = await db.select({ state: tables.reports.state }).from(tables.reports).where(eq(tables.reports.id, id))
  if (!r) throw createError({ statusCode: 404, statusMessage: 'Not found', message: `No report ${id}` })
  const words: Record<ReportState, string> = { open: 'open', handling: 'being handled', resolved: 'resolved', declined: 'declined' }
  const message = r.state === wanted ? `Report ${id} is already ${words[r.state]}` : `Report ${id} is ${words[r.state]} and can no longer change`
  throw createError({ statusCode: 409, statusMessage: 'Conflict', message })
}

/** Moves a report on at the desk (not a hand-out); the check and the change are one statement. */
export async function changeReportState(db: Db, id: number, change: ReportStateChange, userId: number) {
  await db.transaction(async (tx) => {
    const from = change.state === 'open' ? ['handling'] as ReportState[] : ACTIVE.filter(s => s !== change.state)
    const [res] = await tx.update(tables.reports).set({
      state: change.state,
      resolution: change.state === 'resolved' ? change.resolution : null,
      declineReason: change.state === 'declined' ? change.reason : null,
      handledBy: change.state === 'open' ? null : userId,
    }).where(and(eq(tables.reports.id, id), inArray(tables.reports.state, from)))
    if (res.affectedRows !== 1) await refuseChange(tx, id, change.state)
    const note = change.state === 'declined' ? change.reason : change.state === 'resolved' ? change.note ?? null : null
    await tx.insert(tables.reportEvents).values({ reportId: id, state: change.state, resolution: change.state === 'resolved' ? change.resolution : null, note, userId })
  })
  await mailReportChange(db, id)
}

export const handOutBody = z.object({
  items: z.array(z.object({
    lineId: z.coerce.number().int().positive(),
    lotId: z.coerce.number().int().positive('Choose a bin'),
    qty: z.coerce.number().int('Give a whole number').min(1, 'At least 1').max(200),
  })).min(1, 'Choose what to hand out').max(40),
  note: z.string().trim().max(255).optional(),
})
export type HandOut = z.output<typeof handOutBody>

/**
 * Hands out spares for a report and resolves it, in one transaction: one ledger 'spares' movement
 * per item, from a lot holding the line's part or an allowed stand-in. Beyond stock is a 409 naming
 * the bin and the count; nothing is taken then.
 */
export async function handOutSpares(db: Db, reportId: number, body: HandOut, userId: number) {
  await db.transaction(async (tx) => {
    const [report] = await tx.select().from(tables.reports).where(eq(tables.reports.id, reportId)).for('update')
    if (!report) throw createError({ statusCode: 404, statusMessage: 'Not found', message: `No report ${reportId}` })
    if (!ACTIVE.includes(report.state)) await refuseChange(tx, reportId, 'resolved')
    const notes: string[] = []
    for (const item of body.items) {
      if (!(report.lineIds ?? []).includes(item.lineId)) {
        throw createError({ statusCode: 400, statusMessage: 'Invalid input', message: `Line ${item.lineId} is not on report ${reportId}` })
      }
      const lot = await allowedLot(tx, report, item)
      if (lot.onHand < item.qty) {
        throw createError({ statusCode: 409, statusMessage: 'Not enough stock', message: `Bin ${lot.binCode} holds only ${lot.onHand} of ${lot.partName}; ${item.qty} asked for` })
      }
      await moveStock(tx, { lotId: lot.lotId, qty: -item.qty, kind: 'spares', userId, reportId, orderId: report.orderId, bagId: report.bagId, reason: `Spares desk: report ${reportId}, ${lot.designators}` })
      notes.push(`${item.qty} × ${lot.partName} from bin ${lot.binCode}${lot.warning ? ` (stand-in: ${lot.warning})` : ''}`)
    }
    const note = `Handed out ${notes.join('; ')}${body.note ? `. ${body.note}` : ''}`.slice(0, 500)
    await tx.update(tables.reports).set({ state: 'resolved', resolution: 'handed-out', declineReason: null, handledBy: userId }).where(eq(tables.reports.id, reportId))
    await tx.insert(tables.reportEvents).values({ reportId, state: 'resolved', resolution: 'handed-out', note, userId })
  })
  await mailReportChange(db, reportId)
}

/** The lot for one hand-out item: it must hold the line's part, the stand-in packed, or an allowed stand-in. */
async function allowedLot(tx: Tx, report: typeof tables.reports.$inferSelect, item: HandOut['items'][number]) {
  const [lot] = await tx.select({ lotId: tables.lots.id, partId: tables.lots.partId, onHand: tables.lots.onHand, binCode: tables.bins.code, partName: tables.parts.name })
    .from(tables.lots).innerJoin(tables.bins, eq(tables.bins.id, tables.lots.binId)).innerJoin(tables.parts, eq(tables.parts.id, tables.lots.partId))
    .where(eq(tables.lots.id, item.lotId))
  if (!lot) throw createError({ statusCode: 400, statusMessage: 'Invalid input', message: `No lot ${item.lotId}` })
  const [line] = await tx.select({ partId: tables.bomLines.partId, designators: tables.bomLines.designators, noStandIns: tables.bomLines.noStandIns })
    .from(tables.bomLines).where(eq(tables.bomLines.id, item.lineId))
  const [packed] = report.bagId
    ? await tx.select({ partId: tables.bagItems.partId, standInPartId: tables.bagItems.standInPartId }).from(tables.bagItems)
      .where(and(eq(tables.bagItems.bagId, report.bagId), eq(tables.bagItems.lineId, item.lineId)))
    : []
  const own = packed?.partId ?? line?.partId
  const designators = line?.designators ?? `line ${item.lineId}`
  if (lot.partId === own || lot.partId === packed?.standInPartId) return { ...lot, designators, warning: null }
  if (own != null && !line?.noStandIns) {
    const swap = await loadSwapContext(tx)
    const s = standInsFor(String(own), swap.parts, swap.groups, swap.settings, { noStandIns: false }).find(x => Number(x.partId) === lot.partId)
    if (s) return { ...lot, designators, warning: s.warning }
  }
  throw createError({ statusCode: 400, statusMessage: 'Invalid input', message: `${lot.partName} (bin ${lot.binCode}) is not allowed on ${designators}${line?.noStandIns ? ': this line takes no stand-ins' : ''}` })
}

const STATE_WORDS: Record<ReportState, string> = { open: 'received', handling: 'being handled', resolved: 'resolved', declined: 'declined' }

/** E-mails the builder the report's current state (quietly: a mail failure never undoes the change). */
export async function mailReportChange(db: Db, reportId: number) {
  const [row] = await db.select({ r: tables.reports, email: tables.users.email, name: tables.users.name })
    .from(tables.reports).innerJoin(tables.users, eq(tables.users.id, tables.reports.userId)).where(eq(tables.reports.id, reportId))
  if (!row) return
  const [view] = await describeReports(db, [row.r])
  const what = [...view!.lines.map(l => `${l.designators}${l.part ? ` (${l.part.name})` : ''}`), ...(row.r.somethingElse ? [row.r.somethingElse] : [])].join(', ')
  const last = view!.events.at(-1)
  const status = row.r.state === 'resolved' && row.r.resolution ? `resolved: ${RESOLUTION_WORDS[row.r.resolution]}` : STATE_WORDS[row.r.state]
  const lines = [
    `Hello ${row.name},`,
    '',
    `Your missing-part report #${reportId} (${what}, ${REPORT_REASON_WORDS[row.r.reason]}, ${row.r.qty}) is now ${status}.`,
    ...(row.r.state === 'declined' && row.r.declineReason ? ['', `Reason: ${row.r.declineReason}`] : []),
    ...(last?.note && row.r.state === 'resolved' ? ['', last.note] : []),
    ...(row.r.state === 'resolved' && row.r.resolution === 'handed-out' ? ['', 'Collect it from the spares desk if it is not with you yet.'] : []),
    '',
    `See your reports: ${appUrl('/my')}`,
  ]
  await sendMailQuietly({ to: row.email, subject: `Report #${reportId}: ${status}`, text: lines.join('\n') })
}

/** Build days for the counters, and the one to show first: the next one to come, else the latest. */
export async function sparesDays(db: Db) {
  const days = await db.select({ id: tables.buildDays.id, name: tables.buildDays.name, date: tables.buildDays.date }).from(tables.buildDays).orderBy(asc(tables.buildDays.date))
  const today = new Date().toISOString().slice(0, 10)
  return { days, current: days.find(d => d.date >= today) ?? days.at(-1) ?? null }
}

/**
 * The day's counters: reports by line and by reason, parts handed out, stock left of the parts
 * concerned, and (organisers only) bags sealed per packer with the reports that say "missing" or
 * "wrong part" against them.
 */
export async function sparesCounters(db: Db, buildDayId: number, withPackers: boolean) {
  const reports = await db.select({ r: tables.reports }).from(tables.reports)
    .innerJoin(tables.orders, eq(tables.orders.id, tables.reports.orderId))
    .where(eq(tables.orders.buildDayId, buildDayId))
  const views = await describeReports(db, reports.map(x => x.r))
  const byReason = REPORT_REASONS.map(reason => ({ reason, label: REPORT_REASON_WORDS[reason], reports: views.filter(v => v.reason === reason).length }))
  const byLine = new Map<string, { key: string, designators: string, part: string | null, reports: number, qty: number }>()
  for (const v of views) {
    const keys = v.lines.length ? v.lines.map(l => ({ key: `line:${l.lineId}`, designators: l.designators, part: l.part?.name ?? null })) : [{ key: 'else', designators: 'Something else', part: null }]
    for (const k of keys) {
      const e = byLine.get(k.key) ?? { ...k, reports: 0, qty: 0 }
      e.reports++
      e.qty += v.qty
      byLine.set(k.key, e)
    }
  }
  const handOuts = new Map<number, { partId: number, name: string, qty: number }>()
  for (const h of views.flatMap(v => v.handOuts)) {
    const e = handOuts.get(h.partId) ?? { partId: h.partId, name: h.partName, qty: 0 }
    e.qty += h.qty
    handOuts.set(h.partId, e)
  }
  const partIds = [...new Set([...views.flatMap(v => v.lines.map(l => l.part?.id)), ...handOuts.keys()].filter((x): x is number => x != null))]
  const stock = partIds.length ? await availableByPart(db, partIds) : new Map<number, { onHand: number, available: number }>()
  const names = partIds.length ? await db.select({ id: tables.parts.id, name: tables.parts.name }).from(tables.parts).where(inArray(tables.parts.id, partIds)) : []
  const sparesLeft = names.map(p => ({ partId: p.id, name: p.name, handedOut: handOuts.get(p.id)?.qty ?? 0, onHand: stock.get(p.id)?.onHand ?? 0, available: stock.get(p.id)?.available ?? 0 }))
    .sort((a, b) => b.handedOut - a.handedOut || a.available - b.available || a.name.localeCompare(b.name))
  return {
    buildDayId,
    totals: { reports: views.length, open: views.filter(v => ACTIVE.includes(v.state)).length, handedOut: [...handOuts.values()].reduce((n, h) => n + h.qty, 0) },
    byReason,
    byLine: [...byLine.values()].sort((a, b) => b.reports - a.reports || b.qty - a.qty),
    handedOut: [...handOuts.values()].sort((a, b) => b.qty - a.qty),
    sparesLeft,
    packers: withPackers ? await packerCounters(db, buildDayId, views) : null,
  }
}

/** Bags sealed by each packer on a build day, and how many of them drew "missing" or "wrong part" reports. */
async function packerCounters(db: Db, buildDayId: number, views: ReportView[]) {
  const bags = await db.select({ id: tables.bags.id, sealedBy: tables.bags.sealedBy, name: tables.users.name })
    .from(tables.bags).innerJoin(tables.users, eq(tables.users.id, tables.bags.sealedBy))
    .where(and(eq(tables.bags.buildDayId, buildDayId), inArray(tables.bags.state, ['sealed', 'collected'])))
  const packers = new Map<number, { userId: number, name: string, bagsSealed: number, bagsReported: number, reports: number }>()
  for (const b of bags) {
    const e = packers.get(b.sealedBy!) ?? { userId: b.sealedBy!, name: b.name, bagsSealed: 0, bagsReported: 0, reports: 0 }
    const against = views.filter(v => v.bagId === b.id && (v.reason === 'missing' || v.reason === 'wrong') && v.state !== 'declined').length
    e.bagsSealed++
    e.reports += against
    if (against) e.bagsReported++
    packers.set(b.sealedBy!, e)
  }
  return [...packers.values()].sort((a, b) => b.reports - a.reports || a.name.localeCompare(b.name))
}
