// Kits and revisions through the API: kits and pictures, the draft → released → retired life,
// frozen revisions (every edit route answers 409), copies for a new revision, options and diffs.
import mysql from 'mysql2/promise'
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import { Client, DEMO, signedIn } from '../support/client'

const base = inject('baseUrl')
const dbUrl = inject('dbUrl')
const tag = Date.now().toString(36)
let org: Client
let db: mysql.Connection

/** A part made for these tests (exact fields, never a demo row). */
async function makePart(fields: Record<string, unknown>): Promise<number> {
  const cols = Object.keys(fields)
  const [res] = await db.query(`insert into parts (${cols.join(', ')}) values (${cols.map(() => '?').join(', ')})`, Object.values(fields)) as [mysql.ResultSetHeader, unknown]
  return res.insertId
}

async function newKit(name: string) {
  const res = await org.post('/api/kits', { name, description: 'A test kit', designerCredit: 'Test designer' })
  expect(res.status).toBe(201)
  return res.body.kit.id as number
}

beforeAll(async () => {
  org = await signedIn(base, DEMO.organiser)
  db = await mysql.createConnection({ uri: dbUrl })
})
afterAll(async () => { await db.end() })

describe('kits', () => {
  it('creates a kit with a slug from its name, lists it and refuses an empty name', async () => {
    const id = await newKit(`Kestrel ${tag}`)
    const detail = await org.get(`/api/kits/${id}`)
    expect(detail.body.kit.slug).toBe(`kestrel-${tag}`)
    expect(detail.body.kit.designerCredit).toBe('Test designer')
    expect(detail.body.revisions).toEqual([])
    const list = await org.get('/api/kits')
    expect(list.body.map((k: { id: number }) => k.id)).toContain(id)
    const bad = await org.post('/api/kits', { name: '  ' })
    expect(bad.status).toBe(400)
    expect(bad.body.data.fields.name).toBe('Give the kit a name')
  })

  it('gives a second kit of the same name its own slug', async () => {
    const a = await newKit(`Twin ${tag}`)
    const b = await newKit(`Twin ${tag}`)
    const [sa, sb] = await Promise.all([org.get(`/api/kits/${a}`), org.get(`/api/kits/${b}`)])
    expect(sa.body.kit.slug).toBe(`twin-${tag}`)
    expect(sb.body.kit.slug).toBe(`twin-${tag}-2`)
  })

  it('edits a kit', async () => {
    const id = await newKit(`Editable ${tag}`)
    const res = await org.patch(`/api/kits/${id}`, { description: 'New words', transmits: true })
    expect(res.status).toBe(200)
    expect(res.body.kit.description).toBe('New words')
    expect(res.body.kit.transmits).toBe(true)
  })
})

describe('kit pictures', () => {
  // The 8-byte PNG signature and a minimal IHDR: the type is judged from these bytes (PNG spec, section 5.2).
  const png = Buffer.from('89504e470d0a1a0a0000000d49484452000000010000000108060000001f15c489', 'hex')
  const upload = (kitId: number, bytes: Buffer, name: string, type = 'image/png') => {
    const form = new FormData()
    form.append('picture', new Blob([bytes], { type }), name)
    return org.post(`/api/kits/${kitId}/picture`, form)
  }

  it('stores a PNG and serves it back with its type; a second upload replaces it', async () => {
    const id = await newKit(`Pictured ${tag}`)
    expect((await upload(id, png, 'kit.png')).status).toBe(200)
    const res = await fetch(`${base}/api/kits/${id}/picture`)
    expect(res.status).toBe(200)
    expect(res.headers.get('content-type')).toBe('image/png')
    expect(Buffer.from(await res.arrayBuffer()).equals(png)).toBe(true)
    // JPEG starts FF D8 FF (JFIF/ISO 10918-1 start-of-image marker).
    const jpeg = Buffer.concat([Buffer.from([0xFF, 0xD8, 0xFF, 0xE0]), Buffer.alloc(64, 1)])
    expect((await upload(id, jpeg, 'photo.jpg', 'image/jpeg')).status).toBe(200)
    const again = await fetch(`${base}/api/kits/${id}/picture`)
    expect(again.headers.get('content-type')).toBe('image/jpeg')
    expect((await org.get(`/api/kits/${id}`)).body.kit.hasPicture).toBe(true)
  })

  it('judges the type from the bytes: a script named .png is refused with 422', async () => {
    const id = await newKit(`Fake picture ${tag}`)
    const res = await upload(id, Buffer.from('<script>alert(1)</script>'), 'kit.png')
    expect(res.status).toBe(422)
    expect(res.body.message).toMatch(/JPEG, PNG or WebP/)
    expect((await fetch(`${base}/api/kits/${id}/picture`)).status).toBe(404)
  })

  it('refuses a picture over 3 MB with 413', async () => {
    const id = await newKit(`Big picture ${tag}`)
    const big = Buffer.concat([png, Buffer.alloc(3 * 1024 * 1024)])
    const res = await upload(id, big, 'big.png')
    expect(res.status).toBe(413)
  })
})

describe('revisions', () => {
  let kitId: number
  let revA: number
  let resistor: number
  let capacitor: number
  let stageIds: number[]

  beforeAll(async () => {
    kitId = await newKit(`Revised ${tag}`)
    resistor = await makePart({ kind: 'resistor', name: `Resistor 3.32 kΩ ${tag}`, value: 3320, unit: 'Ω', tolerance_pct: 1, power_w: 0.25, mounting: 'tht' })
    capacitor = await makePart({ kind: 'capacitor', name: `Capacitor 3.3 nF ${tag}`, value: 3.3e-9, unit: 'F', dielectric: 'C0G', voltage_v: 50, mounting: 'tht' })
  })

  it('starts an empty draft A, adds stages and lines; designators are stored compressed', async () => {
    const res = await org.post(`/api/kits/${kitId}/revisions`, {})
    expect(res.status).toBe(201)
    expect(res.body.label).toBe('A')
    revA = res.body.id
    stageIds = []
    for (const name of ['Power', 'Audio']) stageIds.push((await org.post(`/api/revisions/${revA}/stages`, { name })).body.id)
    const l1 = await org.post(`/api/revisions/${revA}/lines`, { designators: 'r3, R1-2, R5', qty: 4, partId: resistor, stageId: stageIds[0] })
    expect(l1.status).toBe(201)
    const l2 = await org.post(`/api/revisions/${revA}/lines`, { designators: 'C1', qty: 1, valueText: '3n3', stageId: stageIds[1] })
    expect(l2.status).toBe(201)
    const detail = await org.get(`/api/revisions/${revA}`)
    expect(detail.body.lines.map((l: { designators: string }) => l.designators)).toEqual(['R1-R3, R5', 'C1'])
    // IEC 60062: 3.32 kΩ ±1 % is orange orange red brown brown (five bands, three digits).
    expect(detail.body.lines[0].value).toEqual({ text: '3.32 kΩ', letterCode: '3k32', marking: 'orange orange red brown brown' })
    expect(detail.body.problems.map((p: { message: string }) => p.message)).toContain('No catalogue part chosen yet')
  })

  it('refuses bad lines with 400: reversed range, qty 0 on a base line, a stage of another revision', async () => {
    const reversed = await org.post(`/api/revisions/${revA}/lines`, { designators: 'R9-R7', qty: 3 })
    expect(reversed.status).toBe(400)
    expect(reversed.body.message).toMatch(/reversed/)
    expect((await org.post(`/api/revisions/${revA}/lines`, { designators: 'R8', qty: 0 })).status).toBe(400)
    expect((await org.post(`/api/revisions/${revA}/lines`, { designators: 'R8', qty: 1, stageId: 1 })).status).toBe(400)
  })

  it('refuses to release while a line has no part (409), then releases', async () => {
    const refused = await org.post(`/api/revisions/${revA}/release`)
    expect(refused.status).toBe(409)
    expect(refused.body.message).toMatch(/C1/)
    const detail = await org.get(`/api/revisions/${revA}`)
    const c1 = detail.body.lines.find((l: { designators: string }) => l.designators === 'C1')
    expect((await org.patch(`/api/revisions/${revA}/lines/${c1.id}`, { partId: capacitor })).status).toBe(200)
    const released = await org.post(`/api/revisions/${revA}/release`)
    expect(released.status).toBe(200)
    expect(released.body.state).toBe('released')
  })

  it('answers 409 on every edit route of a released revision, and nothing changes', async () => {
    const before = await org.get(`/api/revisions/${revA}`)
    const lineId = before.body.lines[0].id
    const attempts = [
      org.patch(`/api/revisions/${revA}`, { notes: 'x' }),
      org.del(`/api/revisions/${revA}`),
      org.post(`/api/revisions/${revA}/lines`, { designators: 'R9', qty: 1 }),
      org.patch(`/api/revisions/${revA}/lines/${lineId}`, { qty: 9 }),
      org.del(`/api/revisions/${revA}/lines/${lineId}`),
      org.post(`/api/revisions/${revA}/stages`, { name: 'Late' }),
      org.patch(`/api/revisions/${revA}/stages/${stageIds[0]}`, { name: 'Renamed' }),
      org.del(`/api/revisions/${revA}/stages/${stageIds[0]}`),
      org.post(`/api/revisions/${revA}/option-groups`, { name: 'Band', rule: 'one' }),
      org.post(`/api/revisions/${revA}/release`),
    ]
    const statuses = (await Promise.all(attempts)).map(r => r.status)
    expect(statuses).toEqual(Array(attempts.length).fill(409))
    const res = await org.patch(`/api/revisions/${revA}/lines/${lineId}`, { qty: 9 })
    expect(res.body.message).toMatch(/released and frozen/)
    const after = await org.get(`/api/revisions/${revA}`)
    expect(after.body.lines).toEqual(before.body.lines)
    expect(after.body.stages).toEqual(before.body.stages)
  })

  it('makes B as a copy of A (lines, stages, options), edits B, and diffs A → B', async () => {
    const b = await org.post(`/api/kits/${kitId}/revisions`, { fromId: revA })
    expect(b.body.label).toBe('B')
    const revB = b.body.id
    const detailB = await org.get(`/api/revisions/${revB}`)
    expect(detailB.body.revision.parentId).toBe(revA)
    const kit = (await org.get(`/api/kits/${kitId}`)).body
    expect(kit.revisions.map((r: { label: string, lines: number, parentLabel: string | null }) => [r.label, r.lines, r.parentLabel])).toEqual([['B', 2, 'A'], ['A', 2, null]])
    expect(detailB.body.stages.map((s: { name: string }) => s.name)).toEqual(['Power', 'Audio'])
    expect(detailB.body.lines.map((l: { designators: string, qty: number, partId: number }) => [l.designators, l.qty, l.partId]))
      .toEqual([['R1-R3, R5', 4, resistor], ['C1', 1, capacitor]])
    const r = detailB.body.lines[0]
    expect((await org.patch(`/api/revisions/${revB}/lines/${r.id}`, { designators: 'R1-R5', qty: 5 })).status).toBe(200)
    expect((await org.post(`/api/revisions/${revB}/lines`, { designators: 'C2', qty: 1, partId: capacitor, stageId: detailB.body.stages[1].id })).status).toBe(201)
    const diff = await org.get(`/api/revisions/${revB}/diff`)
    expect(diff.status).toBe(200)
    expect(diff.body.a.label).toBe('A')
    expect(diff.body.added.map((l: { designators: string }) => l.designators)).toEqual(['C2'])
    expect(diff.body.removed).toEqual([])
    expect(diff.body.changed).toHaveLength(1)
    expect(diff.body.changed[0].fields.sort()).toEqual(['designators', 'qty'])
    expect(diff.body.changed[0].before.designators).toBe('R1-R3, R5')
    expect(diff.body.unchanged).toBe(1)
    // A is untouched by the copy's edits.
    const a = await org.get(`/api/revisions/${revA}`)
    expect(a.body.lines[0].designators).toBe('R1-R3, R5')
  })

  it('refuses a diff across two kits with 400', async () => {
    const other = await newKit(`Other ${tag}`)
    const rev = (await org.post(`/api/kits/${other}/revisions`, {})).body.id
    const res = await org.get(`/api/revisions/${rev}/diff?against=${revA}`)
    expect(res.status).toBe(400)
  })

  it('retires a released revision; a draft or a retired one cannot be retired', async () => {
    const res = await org.post(`/api/revisions/${revA}/retire`)
    expect(res.status).toBe(200)
    expect((await org.post(`/api/revisions/${revA}/retire`)).status).toBe(409)
    expect((await org.patch(`/api/revisions/${revA}`, { notes: 'x' })).body.message).toMatch(/retired/)
    const draft = (await org.post(`/api/kits/${kitId}/revisions`, {})).body.id
    expect((await org.post(`/api/revisions/${draft}/retire`)).status).toBe(409)
    expect((await org.del(`/api/revisions/${draft}`)).status).toBe(200)
    expect((await org.get(`/api/revisions/${draft}`)).status).toBe(404)
  })

  it('refuses a label already used in the kit with 409', async () => {
    const res = await org.post(`/api/kits/${kitId}/revisions`, { label: 'A' })
    expect(res.status).toBe(409)
  })
})

describe('options', () => {
  let rev: number
  let base40: number
  let parts: number[]

  beforeAll(async () => {
    const kitId = await newKit(`Optioned ${tag}`)
    parts = []
    for (const [i, v] of [[0, 1.5e-6], [1, 2.2e-6], [2, 3.9e-6]] as const) {
      parts[i] = await makePart({ kind: 'inductor', name: `Inductor ${v * 1e6} µH ${tag}`, value: v, unit: 'H', mounting: 'tht' })
    }
    rev = (await org.post(`/api/kits/${kitId}/revisions`, {})).body.id
    base40 = (await org.post(`/api/revisions/${rev}/lines`, { designators: 'L1', qty: 1, partId: parts[0] })).body.id
    await org.post(`/api/revisions/${rev}/lines`, { designators: 'L2', qty: 1, partId: parts[0] })
  })

  it('an option line replaces a base line; another option removes one; the workbook follows the choice', async () => {
    const group = (await org.post(`/api/revisions/${rev}/option-groups`, { name: 'Band', rule: 'one' })).body.id
    const o40 = (await org.post(`/api/revisions/${rev}/option-groups/${group}/options`, { name: '40 m' })).body.id
    const o20 = (await org.post(`/api/revisions/${rev}/option-groups/${group}/options`, { name: '20 m' })).body.id
    const replace = await org.post(`/api/revisions/${rev}/lines`, { designators: 'L1', qty: 1, partId: parts[1], optionId: o20, replacesLineId: base40 })
    expect(replace.status).toBe(201)
    // Only an option's line may replace; qty 0 only for a removal.
    expect((await org.post(`/api/revisions/${rev}/lines`, { designators: 'L1', qty: 1, partId: parts[1], replacesLineId: base40 })).status).toBe(400)
    const detail = await org.get(`/api/revisions/${rev}`)
    const l2 = detail.body.lines.find((l: { designators: string, optionId: number | null }) => l.designators === 'L2' && !l.optionId)
    expect((await org.post(`/api/revisions/${rev}/lines`, { designators: '', qty: 0, optionId: o40, removesLineId: l2.id })).status).toBe(201)
    // Deleting a base line that an option replaces is refused.
    expect((await org.del(`/api/revisions/${rev}/lines/${base40}`)).status).toBe(409)

    const csv20 = await org.req('GET', `/api/revisions/${rev}/workbook?format=csv&options=${o20}`, undefined, { accept: 'text/csv' })
    expect(csv20.status).toBe(200)
    expect(csv20.body).toContain(`Band: 20 m`)
    expect(csv20.body).toContain(`Inductor 2.2 µH ${tag}`)
    expect(csv20.body.match(new RegExp(`Inductor 1.5 µH ${tag}`, 'g'))).toHaveLength(1) // L1's base part is replaced; L2 keeps it
    const csv40 = await org.req('GET', `/api/revisions/${rev}/workbook?format=csv&options=${o40}`, undefined, { accept: 'text/csv' })
    expect(csv40.body.match(new RegExp(`Inductor 1.5 µH ${tag}`, 'g'))).toHaveLength(1) // L2 removed, L1 kept
    expect(csv40.body).not.toContain('L2')
    const none = await org.get(`/api/revisions/${rev}/workbook?format=csv`)
    expect(none.status).toBe(400)
    expect(none.body.message).toMatch(/Choose one option from "Band"/)
  })

  it('a copy keeps options and remaps replace/remove links to the copied lines', async () => {
    const kit = (await org.get(`/api/revisions/${rev}`)).body.kit.id
    const copy = (await org.post(`/api/kits/${kit}/revisions`, { fromId: rev })).body.id
    const d = (await org.get(`/api/revisions/${copy}`)).body
    expect(d.groups.map((g: { name: string, options: { name: string }[] }) => [g.name, g.options.map(o => o.name)])).toEqual([['Band', ['40 m', '20 m']]])
    const ids = new Set(d.lines.map((l: { id: number }) => l.id))
    const linked = d.lines.filter((l: { replacesLineId: number | null, removesLineId: number | null }) => l.replacesLineId || l.removesLineId)
    expect(linked).toHaveLength(2)
    for (const l of linked) expect(ids.has(l.replacesLineId ?? l.removesLineId)).toBe(true)
    const optionIds = new Set(d.groups[0].options.map((o: { id: number }) => o.id))
    for (const l of linked) expect(optionIds.has(l.optionId)).toBe(true)
    const diff = (await org.get(`/api/revisions/${copy}/diff`)).body
    expect([diff.added, diff.removed, diff.changed]).toEqual([[], [], []])
  })
})

describe('options of a released revision', () => {
  it('answers 409 on the option routes once released', async () => {
    const kitId = await newKit(`Frozen options ${tag}`)
    const rev = (await org.post(`/api/kits/${kitId}/revisions`, {})).body.id
    const part = await makePart({ kind: 'hardware', name: `Frozen knob ${tag}` })
    await org.post(`/api/revisions/${rev}/lines`, { designators: '', qty: 1, partId: part })
    const group = (await org.post(`/api/revisions/${rev}/option-groups`, { name: 'Add-on', rule: 'zero-or-one' })).body.id
    const refused = await org.post(`/api/revisions/${rev}/release`)
    expect(refused.status).toBe(409)
    expect(refused.body.message).toMatch(/"Add-on" has no options/)
    const option = (await org.post(`/api/revisions/${rev}/option-groups/${group}/options`, { name: 'Case' })).body.id
    expect((await org.post(`/api/revisions/${rev}/release`)).status).toBe(200)
    const statuses = (await Promise.all([
      org.patch(`/api/revisions/${rev}/option-groups/${group}`, { name: 'x' }),
      org.del(`/api/revisions/${rev}/option-groups/${group}`),
      org.post(`/api/revisions/${rev}/option-groups/${group}/options`, { name: 'x' }),
      org.patch(`/api/revisions/${rev}/options/${option}`, { name: 'x' }),
      org.del(`/api/revisions/${rev}/options/${option}`),
    ])).map(r => r.status)
    expect(statuses).toEqual([409, 409, 409, 409, 409])
    const d = (await org.get(`/api/revisions/${rev}`)).body
    expect(d.groups).toEqual([{ id: group, name: 'Add-on', rule: 'zero-or-one', options: [{ id: option, name: 'Case' }] }])
  })
})

describe('part search for the line editor', () => {
  it('finds a part by words of its name', async () => {
    const id = await makePart({ kind: 'ic', name: `Searchable regulator ${tag}`, mounting: 'tht' })
    const kitId = await newKit(`Search ${tag}`)
    const rev = (await org.post(`/api/kits/${kitId}/revisions`, {})).body.id
    const res = await org.get(`/api/revisions/${rev}/part-search?q=${encodeURIComponent(`regulator ${tag}`)}`)
    expect(res.body.map((p: { id: number }) => p.id)).toEqual([id])
  })

  it('finds a part by its value written another way (IEC 60062 letter code 8k87 = 8.87 kΩ)', async () => {
    const id = await makePart({ kind: 'resistor', name: `Resistor eight point eight seven ${tag}`, value: 8870, unit: 'Ω', mounting: 'tht' })
    const kitId = await newKit(`Search value ${tag}`)
    const rev = (await org.post(`/api/kits/${kitId}/revisions`, {})).body.id
    const res = await org.get(`/api/revisions/${rev}/part-search?q=8k87`)
    expect(res.body.map((p: { id: number }) => p.id)).toContain(id)
  })
})
