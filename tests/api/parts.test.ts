import mysql from 'mysql2/promise'
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import { Client, DEMO, signedIn } from '../support/client'

const base = inject('baseUrl')
const dbUrl = inject('dbUrl')
// Every part made here carries this maker's number, so searches can be narrowed to them.
const tag = `PT-${Date.now().toString(36)}`

let org: Client
let packer: Client
let builder: Client
let conn: mysql.Connection
const made: Record<string, number> = {}

async function create(key: string, body: Record<string, unknown>) {
  const res = await org.post('/api/parts', { makerPartNumber: tag, ...body })
  expect(res.status, JSON.stringify(res.body)).toBe(201)
  made[key] = res.body.id
  return res.body
}
async function search(query: Record<string, string | number>) {
  const res = await org.get(`/api/parts?${new URLSearchParams(Object.entries(query).map(([k, v]) => [k, String(v)]))}`)
  expect(res.status, JSON.stringify(res.body)).toBe(200)
  return res.body as { rows: { id: number, name: string, value: number | null, onHand: number }[], total: number, readings: string[], valueProblem: string | null }
}
const ids = (rows: { id: number }[]) => rows.map(r => r.id)

beforeAll(async () => {
  org = await signedIn(base, DEMO.organiser)
  packer = await signedIn(base, DEMO.packer)
  builder = await signedIn(base, DEMO.builder)
  conn = await mysql.createConnection({ uri: dbUrl })
  await create('r4k7', { kind: 'resistor', valueText: '4K7J', powerW: '1/4 W', mounting: 'tht', package: 'axial' })
  await create('r100k', { kind: 'resistor', valueText: '100k', powerW: 0.25 })
  await create('c104', { kind: 'capacitor', valueText: '104', dielectric: 'X7R', voltageV: '50 V' })
  await create('l10u', { kind: 'inductor', valueText: '10µH', currentA: '300m', name: `Choke ${tag}` })
  await create('ic', { kind: 'ic', name: `Timer IC ${tag}`, package: 'DIP-8', pinoutNote: 'Notch to the left' })
})
afterAll(async () => { await conn?.end() })

describe('creating parts', () => {
  it('reads the value on the server and names the part by it (IEC 60062: 4K7J = 4.7 kΩ ±5 %)', async () => {
    const res = await org.get(`/api/parts/${made.r4k7}`)
    expect(res.status).toBe(200)
    expect(res.body.part).toMatchObject({ kind: 'resistor', name: 'Resistor 4.7 kΩ', value: 4700, unit: 'Ω', valueText: '4K7J', tolerancePct: 5, powerW: 0.25 })
    expect(res.body.part.display).toBe('4.7 kΩ')
  })

  it('reads a capacitor\'s three-digit code in pF (IEC 60062: 104 = 10 × 10⁴ pF = 100 nF)', async () => {
    const res = await org.get(`/api/parts/${made.c104}`)
    expect(res.body.part.value).toBeCloseTo(100e-9, 20)
    expect(res.body.part).toMatchObject({ unit: 'F', name: 'Capacitor 100 nF X7R', voltageV: 50 })
  })

  it('reads ratings with SI prefixes (300m A = 0.3 A, SI prefix milli)', async () => {
    const res = await org.get(`/api/parts/${made.l10u}`)
    expect(res.body.part.currentA).toBeCloseTo(0.3, 12)
    expect(res.body.part.value).toBeCloseTo(10e-6, 18)
  })

  it('answers 400 with a message per field for values that do not parse', async () => {
    const res = await org.post('/api/parts', { kind: 'resistor', valueText: '4k7k', powerW: '5V', tolerancePct: 'Q', mounting: 'glued' })
    expect(res.status).toBe(400)
    expect(Object.keys(res.body.data.fields).sort()).toEqual(['mounting', 'powerW', 'tolerancePct', 'valueText'])
    expect(res.body.data.fields.valueText).toMatch(/"4k7k" is not a value/)
    expect(res.body.data.fields.powerW).toMatch(/in V; this rating is in W/)
  })

  it('refuses a kind it does not know, a value in the wrong unit, and a part with neither name nor value', async () => {
    expect((await org.post('/api/parts', { kind: 'flux-capacitor', name: 'x' })).body.data.fields).toHaveProperty('kind')
    expect((await org.post('/api/parts', { kind: 'resistor', valueText: '100nF' })).body.data.fields.valueText).toMatch(/resistor needs Ω/)
    expect((await org.post('/api/parts', { kind: 'capacitor', valueText: '4k7' })).body.data.fields.valueText).toMatch(/prefix/)
    const res = await org.post('/api/parts', { kind: 'diode' })
    expect(res.status).toBe(400)
    expect(res.body.data.fields).toEqual({ name: 'Give the part a name (or a value to name it by)' })
    expect((await org.post('/api/parts', { kind: 'other', name: 'x'.repeat(161) })).body.data.fields).toHaveProperty('name')
  })
})

describe('searching the catalogue by value', () => {
  // 4.7 kΩ written as the IEC 60062 letter code, with an SI prefix, and as colour bands
  // (yellow 4, violet 7, red ×100: IEC 60062 colour code table).
  for (const q of ['4k7', '4.7k', '4.7 kΩ', '4700', 'yellow violet red', '472']) {
    it(`finds the 4.7 kΩ resistor from "${q}"`, async () => {
      const body = await search({ q, name: tag })
      expect(ids(body.rows)).toContain(made.r4k7)
      expect(ids(body.rows)).not.toContain(made.c104)
    })
  }

  it('finds the 100 nF capacitor from the code 104, and 0.1u and 100n (same value, SI prefixes)', async () => {
    for (const q of ['104', '0.1u', '100n', '100 nF']) {
      expect(ids((await search({ q, name: tag })).rows), q).toContain(made.c104)
    }
    // 104 is also the 3-digit resistor code for 100 kΩ (10 × 10⁴ Ω, common practice for SMD marking).
    expect(ids((await search({ q: '104', name: tag })).rows)).toContain(made.r100k)
    const caps = await search({ q: '104', kind: 'capacitor', name: tag })
    expect(ids(caps.rows)).toEqual([made.c104])
  })

  it('says which values it searched for', async () => {
    const body = await search({ q: '104', name: tag })
    expect(body.readings).toEqual(expect.arrayContaining(['100 kΩ', '100 nF']))
  })

  it('matches words in name, package and pinout note as well', async () => {
    expect(ids((await search({ q: 'DIP-8 timer', name: tag })).rows)).toEqual([made.ic])
    expect(ids((await search({ q: 'notch', name: tag })).rows)).toEqual([made.ic])
  })

  it('filters by column: value, kind and package', async () => {
    expect(ids((await search({ value: '4k7', name: tag })).rows)).toEqual([made.r4k7])
    expect(ids((await search({ kind: 'inductor', name: tag })).rows)).toEqual([made.l10u])
    expect(ids((await search({ package: 'axial', name: tag })).rows)).toEqual([made.r4k7])
    const bad = await search({ value: 'blue moon', name: tag })
    expect(bad.rows).toEqual([])
    expect(bad.valueProblem).toMatch(/does not read as a value/)
  })

  it('sorts and pages', async () => {
    const byValue = await search({ name: tag, kind: 'resistor', sort: 'value', dir: 'desc' })
    expect(ids(byValue.rows)).toEqual([made.r100k, made.r4k7])
    const page2 = await search({ name: tag, sort: 'name', pageSize: 2, page: 2 })
    expect(page2.total).toBe(5)
    const all = await search({ name: tag, sort: 'name', pageSize: 5 })
    expect(ids(page2.rows)).toEqual(ids(all.rows).slice(2, 4))
    expect(all.rows.map(r => r.name)).toEqual([...all.rows.map(r => r.name)].sort((a, b) => a.localeCompare(b)))
  })

  it('refuses a bad page size or sort with 400 by field', async () => {
    const res = await org.get('/api/parts?pageSize=1000&sort=colour')
    expect(res.status).toBe(400)
    expect(Object.keys(res.body.data.fields).sort()).toEqual(['pageSize', 'sort'])
  })
})

describe('one part: where it is used and stock on hand', () => {
  it('shows the demo 4.7 kΩ resistor\'s BOM lines and stock', async () => {
    const demo = (await search({ q: '4k7', kind: 'resistor', name: 'Resistor 4.7' })).rows.find(r => r.onHand > 0)!
    const res = await packer.get(`/api/parts/${demo.id}`)
    expect(res.status).toBe(200)
    expect(res.body.usedIn.length).toBeGreaterThan(0)
    expect(res.body.usedIn[0]).toHaveProperty('kit')
    expect(res.body.stock.onHand).toBe(demo.onHand)
    expect(res.body.lots.reduce((s: number, l: { onHand: number }) => s + l.onHand, 0)).toBe(demo.onHand)
    expect(res.body.deletable).toBe(false)
  })

  it('answers 404 for a part that does not exist', async () => {
    expect((await org.get('/api/parts/987654')).status).toBe(404)
  })
})

describe('updating parts', () => {
  it('re-reads a changed value and keeps the rest', async () => {
    const res = await org.patch(`/api/parts/${made.r100k}`, { valueText: '2M2' })
    expect(res.status).toBe(200)
    const got = (await org.get(`/api/parts/${made.r100k}`)).body.part
    // A name made from the value follows it (IEC 60062: 2M2 = 2.2 MΩ); a name someone chose stays.
    expect(got).toMatchObject({ value: 2.2e6, valueText: '2M2', powerW: 0.25, name: 'Resistor 2.2 MΩ' })
    expect((await org.patch(`/api/parts/${made.l10u}`, { valueText: '22u' })).status).toBe(200)
    expect((await org.get(`/api/parts/${made.l10u}`)).body.part).toMatchObject({ name: `Choke ${tag}`, value: expect.closeTo(22e-6, 18) })
  })

  it('answers 400 by field for a value that does not parse', async () => {
    const res = await org.patch(`/api/parts/${made.r100k}`, { valueText: 'lots', voltageV: 'high' })
    expect(res.status).toBe(400)
    expect(Object.keys(res.body.data.fields).sort()).toEqual(['valueText', 'voltageV'])
  })

  it('keeps a stored value whose text predates the reader when other fields change', async () => {
    const [r] = await conn.query<mysql.ResultSetHeader>(
      'insert into parts (kind, name, value, unit, value_text, maker_part_number) values (?, ?, ?, ?, ?, ?)',
      ['resistor', `Pot ${tag}`, 10000, 'Ω', '10 kΩ log', tag],
    )
    made.pot = r.insertId
    const res = await org.patch(`/api/parts/${made.pot}`, { description: 'Volume' })
    expect(res.status, JSON.stringify(res.body)).toBe(200)
    expect((await org.get(`/api/parts/${made.pot}`)).body.part).toMatchObject({ value: 10000, valueText: '10 kΩ log', description: 'Volume' })
  })

  it('answers 404 for a part that does not exist', async () => {
    expect((await org.patch('/api/parts/987654', { name: 'x' })).status).toBe(404)
  })
})

describe('deleting parts', () => {
  it('refuses with 409 while a BOM line uses the part', async () => {
    const demo = (await search({ q: '4k7', kind: 'resistor', name: 'Resistor 4.7' })).rows.find(r => r.onHand > 0)!
    const res = await org.del(`/api/parts/${demo.id}`)
    expect(res.status).toBe(409)
    expect(res.body.message).toMatch(/BOM line/)
  })

  it('refuses with 409 while a lot holds the part', async () => {
    const [bin] = await conn.query<mysql.ResultSetHeader>('insert into bins (code, place) values (?, ?)', [`T${Date.now().toString(36)}`.slice(0, 24), 'parts test'])
    await conn.query('insert into lots (part_id, bin_id, qty_received, on_hand, received_on) values (?, ?, 5, 0, ?)', [made.ic, bin.insertId, '2026-11-01'])
    const res = await org.del(`/api/parts/${made.ic}`)
    expect(res.status).toBe(409)
    expect(res.body.message).toMatch(/1 lot of stock/)
  })

  it('deletes an unused part', async () => {
    const res = await org.del(`/api/parts/${made.l10u}`)
    expect(res.status).toBe(200)
    expect((await org.get(`/api/parts/${made.l10u}`)).status).toBe(404)
  })
})

describe('who may use the catalogue', () => {
  it('lets packers read but not write', async () => {
    expect((await packer.get(`/api/parts?q=4k7`)).status).toBe(200)
    expect((await packer.get(`/api/parts/${made.r4k7}`)).status).toBe(200)
    expect((await packer.post('/api/parts', { kind: 'resistor', valueText: '1k' })).status).toBe(403)
    expect((await packer.patch(`/api/parts/${made.r4k7}`, { name: 'x' })).status).toBe(403)
    expect((await packer.del(`/api/parts/${made.r4k7}`)).status).toBe(403)
  })

  it('keeps builders and signed-out callers out', async () => {
    expect((await builder.get('/api/parts')).status).toBe(403)
    expect((await new Client(base).get('/api/parts')).status).toBe(401)
    // Signed-out is checked before the body: 401, not 400.
    expect((await new Client(base).post('/api/parts', { kind: 'nope' })).status).toBe(401)
  })
})
