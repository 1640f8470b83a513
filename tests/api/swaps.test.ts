import mysql from 'mysql2/promise'
import { drizzle } from 'drizzle-orm/mysql2'
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import * as schema from '../../server/db/schema'
import { loadSwapPairs, standInsForPart } from '../../server/utils/catalogue'
import { Client, DEMO, signedIn } from '../support/client'

const base = inject('baseUrl')
const dbUrl = inject('dbUrl')
const tag = `SW-${Date.now().toString(36)}`

let org: Client
let packer: Client
let pool: mysql.Pool
const part: Record<string, number> = {}
const groups: number[] = []

async function make(key: string, body: Record<string, unknown>) {
  const res = await org.post('/api/parts', { makerPartNumber: tag, ...body })
  expect(res.status, JSON.stringify(res.body)).toBe(201)
  part[key] = res.body.id
}
async function standIns(key: string, query = '') {
  const res = await org.get(`/api/parts/${part[key]}/stand-ins${query}`)
  expect(res.status, JSON.stringify(res.body)).toBe(200)
  return res.body as { noStandIns: boolean, standIns: { partId: number, reason: string, warning: string | null, source: string }[] }
}
const ids = (list: { partId: number }[]) => list.map(s => s.partId).sort((a, b) => a - b)
const sorted = (...keys: string[]) => keys.map(k => part[k]!).sort((a, b) => a - b)
async function group(body: Record<string, unknown>) {
  const res = await org.post('/api/swap-groups', body)
  if (res.status === 201) groups.push(res.body.id)
  return res
}
const member = (key: string, direction: string) => ({ partId: part[key], direction })

beforeAll(async () => {
  org = await signedIn(base, DEMO.organiser)
  packer = await signedIn(base, DEMO.packer)
  pool = mysql.createPool({ uri: dbUrl, connectionLimit: 2 })
  // 6.81 kΩ (E96) and 3.9 nF: values no demo part has, so the parametric rule sees only these.
  await make('r5', { kind: 'resistor', valueText: '6k81', tolerancePct: 5, powerW: 0.25, mounting: 'tht' })
  await make('r1', { kind: 'resistor', valueText: '6.81k', tolerancePct: 1, powerW: 0.5, mounting: 'tht' })
  await make('r10', { kind: 'resistor', valueText: '6810', tolerancePct: 10, powerW: 0.25, mounting: 'tht' })
  await make('rSmd', { kind: 'resistor', valueText: '6k81', tolerancePct: 1, powerW: 0.25, mounting: 'smd' })
  await make('cC0g', { kind: 'capacitor', valueText: '3n9', dielectric: 'C0G', voltageV: 50, mounting: 'tht' })
  await make('cNp0', { kind: 'capacitor', valueText: '3.9nF', dielectric: 'NP0', voltageV: 100, mounting: 'tht' })
  await make('cX7r', { kind: 'capacitor', valueText: '392', dielectric: 'X7R', voltageV: 100, mounting: 'tht' })
  await make('qEbc', { kind: 'transistor', name: `NPN EBC ${tag}`, pinoutNote: 'EBC' })
  await make('qCbe', { kind: 'transistor', name: `NPN CBE ${tag}`, pinoutNote: 'CBE' })
  await make('coreS', { kind: 'inductor', name: `Small core ${tag}` })
  await make('coreL', { kind: 'inductor', name: `Large core ${tag}` })
})
afterAll(async () => {
  for (const id of groups) await org.del(`/api/swap-groups/${id}`)
  await pool?.end()
})

describe('parametric stand-ins (the issue\'s rules: same value, equal or better ratings, same mounting)', () => {
  it('lets a tighter, stronger resistor of the same value stand in, with the reasons', async () => {
    const res = await standIns('r5')
    expect(ids(res.standIns)).toEqual(sorted('r1'))
    expect(res.standIns[0]).toMatchObject({ source: 'parametric', warning: null })
    expect(res.standIns[0]!.reason).toMatch(/same value 6.81 kΩ/)
    expect(res.standIns[0]!.reason).toMatch(/tolerance 1 % ≤ 5 %/)
    expect(res.standIns[0]!.reason).toMatch(/0.5 W ≥ 0.25 W/)
  })

  it('lets nothing of looser tolerance, lower power or other mounting stand in for the 1 % part', async () => {
    expect((await standIns('r1')).standIns).toEqual([])
  })

  it('keeps C0G/NP0 for C0G, and lets C0G replace X7R (3.9 nF: 392 is its code in pF, IEC 60062)', async () => {
    expect(ids((await standIns('cC0g')).standIns)).toEqual(sorted('cNp0'))
    expect(ids((await standIns('cX7r')).standIns)).toEqual(sorted('cNp0'))
  })

  it('switches a kind\'s rule off and on again', async () => {
    expect((await org.put('/api/swap-settings', { resistor: false })).body).toMatchObject({ resistor: false, capacitor: true })
    try {
      expect((await standIns('r5')).standIns).toEqual([])
      expect(ids((await standIns('cC0g')).standIns)).toEqual(sorted('cNp0'))
    }
    finally {
      await org.put('/api/swap-settings', { resistor: true })
    }
    expect(ids((await standIns('r5')).standIns)).toEqual(sorted('r1'))
  })

  it('refuses settings that switch nothing, or are not yes/no', async () => {
    expect((await org.put('/api/swap-settings', {})).status).toBe(400)
    const res = await org.put('/api/swap-settings', { capacitor: 'maybe' })
    expect(res.status).toBe(400)
    expect(res.body.data.fields).toHaveProperty('capacitor')
  })
})

describe('interchangeable groups', () => {
  it('makes a two-way group and shows its warning with the stand-in', async () => {
    const res = await group({ name: `Pinout ${tag}`, warning: 'pinout differs: turn 180°', members: [member('qEbc', 'both'), member('qCbe', 'both')] })
    expect(res.status, JSON.stringify(res.body)).toBe(201)
    const a = await standIns('qEbc')
    expect(a.standIns).toEqual([expect.objectContaining({ partId: part.qCbe, source: 'group', reason: `interchangeable group "Pinout ${tag}"`, warning: 'pinout differs: turn 180°' })])
    expect(ids((await standIns('qCbe')).standIns)).toEqual(sorted('qEbc'))
  })

  it('makes a one-way group: the large core may replace the small one, not the other way', async () => {
    const res = await group({ name: `Cores ${tag}`, members: [member('coreS', 'replaced'), member('coreL', 'replaces')] })
    expect(res.status, JSON.stringify(res.body)).toBe(201)
    expect(ids((await standIns('coreS')).standIns)).toEqual(sorted('coreL'))
    expect((await standIns('coreL')).standIns).toEqual([])
  })

  it('refuses a group that contradicts another, saying which', async () => {
    const res = await group({ name: `Cores backwards ${tag}`, members: [member('coreS', 'replaces'), member('coreL', 'replaced')] })
    expect(res.status).toBe(400)
    expect(res.body.message).toMatch(new RegExp(`Contradicts group "Cores ${tag}"`))
    expect(res.body.message).toContain(`Small core ${tag}`)
  })

  it('refuses a part standing in for itself, and a group of one', async () => {
    const self = await group({ name: `Self ${tag}`, members: [member('qEbc', 'replaced'), member('qEbc', 'replaces')] })
    expect(self.status).toBe(400)
    expect(self.body.data.problems.join(' ')).toMatch(/would stand in for itself/)
    const one = await group({ name: `One ${tag}`, members: [member('qEbc', 'both')] })
    expect(one.status).toBe(400)
    expect(one.body.data.fields.members).toMatch(/at least two/)
  })

  it('refuses a group with an unknown part or no name', async () => {
    const res = await group({ name: '', members: [member('qEbc', 'both'), { partId: 987654, direction: 'both' }] })
    expect(res.status).toBe(400)
    expect(res.body.data.fields).toHaveProperty('name')
    const unknown = await group({ name: `Unknown ${tag}`, members: [member('qEbc', 'both'), { partId: 987654, direction: 'both' }] })
    expect(unknown.status).toBe(400)
    expect(unknown.body.message).toMatch(/Not in the catalogue: part 987654/)
  })

  it('puts group stand-ins before parametric ones and keeps one entry per part', async () => {
    const res = await group({ name: `Resistors ${tag}`, warning: 'longer leads', members: [member('r5', 'replaced'), member('r10', 'replaces')] })
    expect(res.status, JSON.stringify(res.body)).toBe(201)
    const list = (await standIns('r5')).standIns
    expect(list.map(s => [s.partId, s.source])).toEqual([[part.r10, 'group'], [part.r1, 'parametric']])
  })

  it('changes and deletes a group', async () => {
    const id = groups.at(-1)!
    const put = await org.put(`/api/swap-groups/${id}`, { name: `Resistors ${tag}`, warning: 'check the colour bands', members: [member('r5', 'replaced'), member('r10', 'replaces')] })
    expect(put.status, JSON.stringify(put.body)).toBe(200)
    expect((await standIns('r5')).standIns[0]!.warning).toBe('check the colour bands')
    const listed = (await org.get('/api/swap-groups')).body.find((g: { id: number }) => g.id === id)
    expect(listed.members.map((m: { partId: number, direction: string }) => [m.partId, m.direction])).toEqual([[part.r5, 'replaced'], [part.r10, 'replaces']])
    expect((await org.del(`/api/swap-groups/${id}`)).status).toBe(200)
    groups.pop()
    expect(ids((await standIns('r5')).standIns)).toEqual(sorted('r1'))
    expect((await org.del(`/api/swap-groups/${id}`)).status).toBe(404)
  })

  it('refuses to delete a part that is in a group (409)', async () => {
    const res = await org.del(`/api/parts/${part.qCbe}`)
    expect(res.status).toBe(409)
    expect(res.body.message).toContain(`swap group "Pinout ${tag}"`)
  })
})

describe('stand-ins on a BOM line', () => {
  it('offers none on a line marked "no stand-ins"', async () => {
    const [rows] = await pool.query<mysql.RowDataPacket[]>('select id, part_id from bom_lines where no_stand_ins = 1 limit 1')
    const line = rows[0]!
    const res = await org.get(`/api/parts/${line.part_id}/stand-ins?line=${line.id}`)
    expect(res.status).toBe(200)
    expect(res.body).toMatchObject({ noStandIns: true, standIns: [] })
  })

  it('answers 404 for a line that does not exist', async () => {
    expect((await org.get(`/api/parts/${part.r5}/stand-ins?line=987654`)).status).toBe(404)
  })
})

describe('the server functions other areas call', () => {
  it('standInsForPart and loadSwapPairs agree with the endpoint', async () => {
    const db = drizzle(pool, { schema, mode: 'default' })
    const direct = await standInsForPart(db, part.qEbc!)
    expect(direct.map(s => [s.partId, s.warning])).toEqual([[part.qCbe, 'pinout differs: turn 180°']])
    expect(await standInsForPart(db, part.qEbc!, { noStandIns: true })).toEqual([])
    const pairs = await loadSwapPairs(db)
    const mine = (from: string) => pairs.filter(p => p.from === String(part[from])).map(p => Number(p.to)).sort((a, b) => a - b)
    expect(mine('r5')).toEqual(sorted('r1'))
    expect(mine('coreS')).toEqual(sorted('coreL'))
    expect(mine('coreL')).toEqual([])
    expect(pairs.find(p => p.from === String(part.qCbe) && p.to === String(part.qEbc))?.warning).toBe('pinout differs: turn 180°')
  })
})

describe('who may change swap rules', () => {
  it('lets packers read groups, settings and stand-ins, not change them', async () => {
    expect((await packer.get('/api/swap-groups')).status).toBe(200)
    expect((await packer.get('/api/swap-settings')).status).toBe(200)
    expect((await packer.get(`/api/parts/${part.r5}/stand-ins`)).status).toBe(200)
    expect((await packer.post('/api/swap-groups', { name: 'x', members: [] })).status).toBe(403)
    expect((await packer.put('/api/swap-settings', { resistor: false })).status).toBe(403)
    expect((await packer.del(`/api/swap-groups/${groups[0]}`)).status).toBe(403)
  })
})
