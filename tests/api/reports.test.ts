// Missing-part reports: filing with photos (and the refusals), the spares desk's queue, state
// changes with an e-mail each, hand-outs from stock in one transaction, and the day's counters.
import { crc32, deflateSync } from 'node:zlib'
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import { Client, DEMO, latestMail, signedIn } from '../support/client'
import { and, countRows, eq, lotOnHand, makeBag, makeBuilder, makeKitScenario, openDb, schema, type BuildersDb, type KitScenario } from './builders-fixtures'

const base = inject('baseUrl')
const mailUrl = inject('mailUrl')

function pngChunk(type: string, data: Buffer) {
  const len = Buffer.alloc(4)
  len.writeUInt32BE(data.length)
  const body = Buffer.concat([Buffer.from(type, 'latin1'), data])
  const crc = Buffer.alloc(4)
  crc.writeUInt32BE(crc32(body) >>> 0)
  return Buffer.concat([len, body, crc])
}
/** A 1×1 RGB PNG (ISO/IEC 15948 layout), optionally carrying a text chunk with a "location". */
function tinyPng(withText = false, padTo = 0) {
  const ihdr = Buffer.alloc(13)
  ihdr.writeUInt32BE(1, 0)
  ihdr.writeUInt32BE(1, 4)
  ihdr[8] = 8
  ihdr[9] = 2
  const chunks = [pngChunk('IHDR', ihdr)]
  if (withText) chunks.push(pngChunk('tEXt', Buffer.from('Location\0GPS 51.5N 0.1W')))
  chunks.push(pngChunk('IDAT', deflateSync(Buffer.from([0, 196, 106, 43]))))
  const png = Buffer.concat([Buffer.from([0x89, 0x50, 0x4E, 0x47, 0x0D, 0x0A, 0x1A, 0x0A]), ...chunks, pngChunk('IEND', Buffer.alloc(0))])
  if (padTo <= png.length) return png
  return Buffer.concat([png.subarray(0, 33), pngChunk('prVt', Buffer.alloc(padTo - png.length - 12)), png.subarray(33)])
}

function reportForm(fields: Record<string, string | number | (string | number)[]>, files: { name: string, data: Buffer, type?: string }[] = []) {
  const form = new FormData()
  for (const [k, v] of Object.entries(fields)) for (const x of Array.isArray(v) ? v : [v]) form.append(k, String(x))
  for (const f of files) form.append('photos', new Blob([new Uint8Array(f.data)], { type: f.type ?? 'application/octet-stream' }), f.name)
  return form
}

let db: BuildersDb
let close: () => Promise<void>
let kit: KitScenario
let fay: { id: number, email: string, name: string }
let gus: { id: number, email: string, name: string }
let fayBag: { orderId: number, bagId: number, code: string }
let gusBag: { orderId: number, bagId: number, code: string }
let asFay: Client
let asGus: Client
let asPacker: Client
let asOrganiser: Client

beforeAll(async () => {
  const opened = await openDb(inject('dbUrl'))
  db = opened.db
  close = () => opened.conn.end()
  kit = await makeKitScenario(db)
  fay = await makeBuilder(db, 'Fay Builder')
  gus = await makeBuilder(db, 'Gus Builder')
  fayBag = await makeBag(db, kit, fay.id, { seat: 21 })
  gusBag = await makeBag(db, kit, gus.id, { seat: 22, packer: 'ruth.ellingworth@club.invalid' })
  asFay = await signedIn(base, fay.email)
  asGus = await signedIn(base, gus.email)
  asPacker = await signedIn(base, DEMO.packer)
  asOrganiser = await signedIn(base, DEMO.organiser)
})
afterAll(async () => close?.())

describe('filing a report', () => {
  let reportId: number

  it('files a report on lines of my bag with a photo, stripped of its text metadata, and mails me', async () => {
    const since = Date.now()
    const res = await asFay.post('/api/my/reports', reportForm({ bagId: fayBag.bagId, lineIds: [kit.lines.r], qty: 1, reason: 'missing', comment: 'Only one in the pouch' }, [{ name: 'pouch.png', data: tinyPng(true), type: 'image/png' }]))
    expect(res.status).toBe(201)
    expect(res.body).toMatchObject({ state: 'open', reason: 'missing', qty: 1, lines: [{ lineId: kit.lines.r, designators: 'R1, R2', part: { name: kit.partNames.r1k } }] })
    expect(res.body.photos).toHaveLength(1)
    reportId = res.body.id
    const photo = await fetch(base + res.body.photos[0].url, { headers: { cookie: asFay.cookie } })
    expect(photo.status).toBe(200)
    expect(photo.headers.get('content-type')).toBe('image/png')
    const bytes = Buffer.from(await photo.arrayBuffer())
    expect(bytes.equals(tinyPng(false))).toBe(true)
    const mail = await latestMail(mailUrl, fay.email, { after: since })
    expect(mail.subject).toBe(`Report #${reportId}: received`)
    expect(mail.text).toContain('R1, R2')
  })

  it("shows the photo to the desk but not to another builder", async () => {
    const url = `/api/reports/${reportId}/photos/${(await asFay.get('/api/my/reports')).body[0].photos[0].id}`
    expect((await asGus.get(url)).status).toBe(404)
    expect((await asPacker.get(url)).status).toBe(200)
  })

  it('takes a JPEG with Exif and XMP and stores it without them', async () => {
    const app1 = (text: string) => {
      const payload = Buffer.from(text, 'latin1')
      const head = Buffer.from([0xFF, 0xE1, 0, 0])
      head.writeUInt16BE(payload.length + 2, 2)
      return Buffer.concat([head, payload])
    }
    // SOI, APP1 Exif, APP1 XMP, a minimal scan and EOI (ITU-T T.81 marker layout).
    const sos = Buffer.from([0xFF, 0xDA, 0x00, 0x08, 0x01, 0x01, 0x00, 0x00, 0x3F, 0x00])
    const jpeg = Buffer.concat([Buffer.from([0xFF, 0xD8]), app1('Exif\0\0MM\0*GPSLatitude 51N'), app1('http://ns.adobe.com/xap/1.0/\0<GPSLongitude>0W</GPSLongitude>'), sos, Buffer.from([0x12, 0x34, 0xFF, 0xD9])])
    const res = await asFay.post('/api/my/reports', reportForm({ bagId: fayBag.bagId, lineIds: [kit.lines.q], qty: 1, reason: 'damaged' }, [{ name: 'leg.jpg', data: jpeg }]))
    expect(res.status).toBe(201)
    const photo = Buffer.from(await (await fetch(base + res.body.photos[0].url, { headers: { cookie: asFay.cookie } })).arrayBuffer())
    expect(photo.includes('GPS')).toBe(false)
    expect(photo.equals(Buffer.concat([Buffer.from([0xFF, 0xD8]), sos, Buffer.from([0x12, 0x34, 0xFF, 0xD9])]))).toBe(true)
  })

  it('refuses, with a clear message and nothing stored: too large, not an image, four photos, a line not in my bag, no line', async () => {
    const before = await countRows(db, fay.id)
    const ok = { bagId: fayBag.bagId, lineIds: [kit.lines.r], qty: 1, reason: 'missing' }
    const big = await asFay.post('/api/my/reports', reportForm(ok, [{ name: 'huge.png', data: tinyPng(false, 8 * 1024 * 1024 + 1) }]))
    expect(big.status).toBe(413)
    expect(big.body.message).toBe('huge.png is 8.0 MB; each photo may be at most 8 MB')
    const text = await asFay.post('/api/my/reports', reportForm(ok, [{ name: 'notes.jpg', data: Buffer.from('not a photo at all'), type: 'image/jpeg' }]))
    expect(text.status).toBe(422)
    expect(text.body.message).toBe('notes.jpg is not a JPEG, PNG or WebP image')
    const four = await asFay.post('/api/my/reports', reportForm(ok, [1, 2, 3, 4].map(i => ({ name: `p${i}.png`, data: tinyPng() }))))
    expect(four.status).toBe(400)
    expect(four.body.message).toBe('Add at most 3 photos (you chose 4)')
    const [demoLine] = await db.select({ id: schema.bomLines.id }).from(schema.bomLines).limit(1)
    const stray = await asFay.post('/api/my/reports', reportForm({ ...ok, lineIds: [kit.lines.r, demoLine!.id] }, [{ name: 'ok.png', data: tinyPng() }]))
    expect(stray.status).toBe(400)
    expect(stray.body.message).toBe(`Line ${demoLine!.id} is not in your bag ${fayBag.code}`)
    const none = await asFay.post('/api/my/reports', reportForm({ bagId: fayBag.bagId, qty: 1, reason: 'missing' }))
    expect(none.status).toBe(400)
    expect(none.body.data.fields.lineIds).toBe('Choose at least one line, or describe "something else"')
    const badReason = await asFay.post('/api/my/reports', reportForm({ ...ok, reason: 'stolen' }))
    expect(badReason.status).toBe(400)
    expect(await countRows(db, fay.id)).toEqual(before)
  })

  it("refuses another builder's bag (404) and a bag not yet sealed (409)", async () => {
    const other = await asFay.post('/api/my/reports', reportForm({ bagId: gusBag.bagId, lineIds: [kit.lines.r], qty: 1, reason: 'missing' }))
    expect(other.status).toBe(404)
    const hal = await makeBuilder(db, 'Hal Builder')
    const halBag = await makeBag(db, kit, hal.id, { state: 'open' })
    const asHal = await signedIn(base, hal.email)
    const open = await asHal.post('/api/my/reports', reportForm({ bagId: halBag.bagId, lineIds: [kit.lines.r], qty: 1, reason: 'missing' }))
    expect(open.status).toBe(409)
    expect(open.body.message).toBe(`Bag ${halBag.code} is not packed yet: reports open once it is sealed`)
  })

  it('takes "something else" without a line', async () => {
    const res = await asGus.post('/api/my/reports', reportForm({ bagId: gusBag.bagId, somethingElse: 'Knob for the volume control', qty: 1, reason: 'missing' }))
    expect(res.status).toBe(201)
    expect(res.body).toMatchObject({ lines: [], somethingElse: 'Knob for the volume control' })
  })
})

describe('the spares desk', () => {
  let reportId: number

  beforeAll(async () => {
    const res = await asGus.post('/api/my/reports', reportForm({ bagId: gusBag.bagId, lineIds: [kit.lines.r], qty: 3, reason: 'missing' }))
    reportId = res.body.id
  })

  it('queues reports oldest first with the seat, the line, bins holding the part and the stand-ins allowed', async () => {
    const res = await asPacker.get('/api/reports')
    expect(res.status).toBe(200)
    const mine = res.body.filter((r: { userId: number }) => r.userId === gus.id)
    const times = res.body.map((r: { createdAt: string }) => new Date(r.createdAt).getTime())
    expect(times).toEqual([...times].sort((a, b) => a - b))
    const r = mine.find((x: { id: number }) => x.id === reportId)
    expect(r.builder).toMatchObject({ name: gus.name, seat: 22 })
    expect(r.bagCode).toBe(gusBag.code)
    const line = r.lines[0]
    expect(line.designators).toBe('R1, R2')
    expect(line.lots.map((l: { binCode: string, onHand: number }) => `${l.binCode}:${l.onHand}`)).toEqual([`${kit.bins.main}:46`, `${kit.bins.spares}:2`])
    // The demo catalogue's 1 kΩ 5 % 0.25 W through-hole resistor meets the parametric rule (same value, kind, rating).
    expect(line.standIns.some((s: { name: string }) => s.name === 'Resistor 1 kΩ')).toBe(true)
    const q = (await asPacker.get('/api/reports')).body.find((x: { userId: number, lines: { designators: string }[] }) => x.userId === fay.id && x.lines[0]?.designators === 'Q1')
    expect(q.lines[0].packedStandIn.name).toBe(kit.partNames.npnB)
    expect(q.lines[0].standIns).toEqual([expect.objectContaining({ name: kit.partNames.npnB, warning: kit.swapWarning })])
  })

  it('moves a report to being handled once, and mails the builder', async () => {
    const since = Date.now()
    const res = await asPacker.patch(`/api/reports/${reportId}`, { state: 'handling' })
    expect(res.status).toBe(200)
    expect(res.body.state).toBe('handling')
    expect((await latestMail(mailUrl, gus.email, { after: since })).subject).toBe(`Report #${reportId}: being handled`)
    const again = await asPacker.patch(`/api/reports/${reportId}`, { state: 'handling' })
    expect(again.status).toBe(409)
    expect(again.body.message).toBe(`Report ${reportId} is already being handled`)
  })

  it('refuses to hand out beyond stock, naming the bin and the count, and takes nothing', async () => {
    const res = await asPacker.post(`/api/reports/${reportId}/hand-out`, { items: [{ lineId: kit.lines.r, lotId: kit.lots.spares, qty: 3 }] })
    expect(res.status).toBe(409)
    expect(res.body.message).toBe(`Bin ${kit.bins.spares} holds only 2 of ${kit.partNames.r1k}; 3 asked for`)
    expect(await lotOnHand(db, kit.lots.spares)).toBe(2)
    const [r] = await db.select().from(schema.reports).where(eq(schema.reports.id, reportId))
    expect(r!.state).toBe('handling')
  })

  it('refuses a part that may not stand in on the line', async () => {
    const res = await asPacker.post(`/api/reports/${reportId}/hand-out`, { items: [{ lineId: kit.lines.r, lotId: kit.lots.main.diode, qty: 1 }] })
    expect(res.status).toBe(400)
    expect(res.body.message).toBe(`${kit.partNames.diode} (bin ${kit.bins.main}) is not allowed on R1, R2`)
  })

  it('hands out from two bins in one go: ledger spares movements, report resolved, builder mailed and sees it', async () => {
    const since = Date.now()
    const res = await asOrganiser.post(`/api/reports/${reportId}/hand-out`, { items: [{ lineId: kit.lines.r, lotId: kit.lots.spares, qty: 2 }, { lineId: kit.lines.r, lotId: kit.lots.main.r1k, qty: 1 }] })
    expect(res.status).toBe(200)
    expect(res.body).toMatchObject({ state: 'resolved', resolution: 'handed-out' })
    expect(await lotOnHand(db, kit.lots.spares)).toBe(0)
    expect(await lotOnHand(db, kit.lots.main.r1k)).toBe(45)
    const moves = await db.select().from(schema.ledger).where(and(eq(schema.ledger.reportId, reportId), eq(schema.ledger.kind, 'spares')))
    expect(moves.map(m => m.qty).sort()).toEqual([-1, -2])
    const mail = await latestMail(mailUrl, gus.email, { after: since })
    expect(mail.subject).toBe(`Report #${reportId}: resolved: part handed out`)
    expect(mail.text).toContain(`2 × ${kit.partNames.r1k} from bin ${kit.bins.spares}`)
    const mine = (await asGus.get('/api/my/reports')).body.find((r: { id: number }) => r.id === reportId)
    expect(mine).toMatchObject({ state: 'resolved', resolution: 'handed-out' })
    expect(mine.handOuts.map((h: { qty: number, binCode: string }) => `${h.qty}@${h.binCode}`).sort()).toEqual([`1@${kit.bins.main}`, `2@${kit.bins.spares}`])
    expect(mine.events.map((e: { state: string }) => e.state)).toEqual(['open', 'handling', 'resolved'])
    const again = await asOrganiser.post(`/api/reports/${reportId}/hand-out`, { items: [{ lineId: kit.lines.r, lotId: kit.lots.main.r1k, qty: 1 }] })
    expect(again.status).toBe(409)
  })

  it('hands out the last one to only one of two desks at once', async () => {
    const [lot] = await db.insert(schema.lots).values({ partId: kit.parts.r1k, binId: (await db.select().from(schema.lots).where(eq(schema.lots.id, kit.lots.spares)))[0]!.binId, qtyReceived: 1, onHand: 1, receivedOn: '2026-11-21' }).$returningId()
    await db.insert(schema.ledger).values({ lotId: lot!.id, partId: kit.parts.r1k, binId: (await db.select().from(schema.lots).where(eq(schema.lots.id, lot!.id)))[0]!.binId, kind: 'receive', qty: 1 })
    const a = (await asGus.post('/api/my/reports', reportForm({ bagId: gusBag.bagId, lineIds: [kit.lines.r], qty: 1, reason: 'damaged' }))).body.id
    const b = (await asFay.post('/api/my/reports', reportForm({ bagId: fayBag.bagId, lineIds: [kit.lines.r], qty: 1, reason: 'damaged' }))).body.id
    const results = await Promise.all([a, b].map(id => asOrganiser.post(`/api/reports/${id}/hand-out`, { items: [{ lineId: kit.lines.r, lotId: lot!.id, qty: 1 }] })))
    expect(results.map(r => r.status).sort()).toEqual([200, 409])
    expect(await lotOnHand(db, lot!.id)).toBe(0)
  })

  it('declines with a reason the builder reads, and resolves without stock', async () => {
    const r1 = (await asFay.post('/api/my/reports', reportForm({ bagId: fayBag.bagId, lineIds: [kit.lines.hw], qty: 2, reason: 'extra' }))).body.id
    const noReason = await asPacker.patch(`/api/reports/${r1}`, { state: 'declined' })
    expect(noReason.status).toBe(400)
    const since = Date.now()
    const declined = await asPacker.patch(`/api/reports/${r1}`, { state: 'declined', reason: 'Extra screws are yours to keep' })
    expect(declined.status).toBe(200)
    const mail = await latestMail(mailUrl, fay.email, { after: since })
    expect(mail.subject).toBe(`Report #${r1}: declined`)
    expect(mail.text).toContain('Reason: Extra screws are yours to keep')
    const r2 = (await asFay.post('/api/my/reports', reportForm({ bagId: fayBag.bagId, lineIds: [kit.lines.c], qty: 1, reason: 'wrong' }))).body.id
    const resolved = await asOrganiser.patch(`/api/reports/${r2}`, { state: 'resolved', resolution: 'replaced' })
    expect(resolved.body).toMatchObject({ state: 'resolved', resolution: 'replaced' })
    const handedOutByPatch = await asOrganiser.patch(`/api/reports/${r2}`, { state: 'resolved', resolution: 'handed-out' })
    expect(handedOutByPatch.status).toBe(400)
    expect((await asOrganiser.patch(`/api/reports/${r1}`, { state: 'open' })).status).toBe(409)
  })

  it('is closed to builders', async () => {
    expect((await asFay.get('/api/reports')).status).toBe(403)
    expect((await asFay.post(`/api/reports/${reportId}/hand-out`, { items: [{ lineId: kit.lines.r, lotId: kit.lots.main.r1k, qty: 1 }] })).status).toBe(403)
  })
})

describe("the day's counters", () => {
  it('counts reports by reason and line, parts handed out, spares left; per packer for organisers only', async () => {
    const res = await asOrganiser.get(`/api/spares/counters?buildDayId=${kit.buildDayId}`)
    expect(res.status).toBe(200)
    const line = res.body.byLine.find((l: { key: string }) => l.key === `line:${kit.lines.r}`)
    // Reports on R1, R2 filed above: Fay 1 (missing), Gus 1 (missing, 3), Gus 1 + Fay 1 (damaged).
    expect(line).toMatchObject({ designators: 'R1, R2', reports: 4, qty: 6 })
    expect(res.body.handedOut.find((h: { partId: number }) => h.partId === kit.parts.r1k)).toMatchObject({ qty: 4 })
    const left = res.body.sparesLeft.find((p: { partId: number }) => p.partId === kit.parts.r1k)
    expect(left).toMatchObject({ handedOut: 4, onHand: 45 })
    for (const reason of ['missing', 'damaged', 'wrong', 'extra']) expect(res.body.byReason.find((r: { reason: string }) => r.reason === reason).reports).toBeGreaterThan(0)
    const pip = res.body.packers.find((p: { name: string }) => p.name === 'Pip Achterberg')
    const ruth = res.body.packers.find((p: { name: string }) => p.name === 'Ruth Ellingworth')
    expect(pip.bagsReported).toBeGreaterThanOrEqual(1)
    expect(ruth.bagsReported).toBeGreaterThanOrEqual(1)
    const asPackerRes = await asPacker.get(`/api/spares/counters?buildDayId=${kit.buildDayId}`)
    expect(asPackerRes.status).toBe(200)
    expect(asPackerRes.body.packers).toBeNull()
  })
})
