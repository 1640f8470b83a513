// Records of the selling tests' own (unique names), written straight into the test database so the
// demo scenario that other test files rely on stays untouched.
import { randomBytes } from 'node:crypto'
import mysql from 'mysql2/promise'
import { Client } from '../support/client'

export type Conn = mysql.Connection

export async function connect(dbUrl: string) {
  return mysql.createConnection({ uri: dbUrl, timezone: 'Z', dateStrings: ['DATE'] })
}

export const uid = () => randomBytes(4).toString('hex')

async function insert(db: Conn, sql: string, values: unknown[]) {
  const [res] = await db.query<mysql.ResultSetHeader>(sql, values)
  return res.insertId
}

export interface LineSpec {
  qty: number
  /** on hand of the line's own part */
  stock: number
  /** a stand-in (interchangeable group) with this much on hand */
  standInStock?: number
  noStandIns?: boolean
}

export interface KitDay {
  dayId: number
  offeringId: number
  revisionId: number
  kitId: number
  lineIds: number[]
  /** per line: [own part, stand-in part?] */
  partIds: number[][]
  lotIds: number[]
  optionIds: number[]
}

/**
 * A build day selling one released kit revision whose lines have exactly the given stock, on sale
 * now. With `option`, the revision has one "choose one" group of two options each adding a line.
 */
export async function makeKitDay(db: Conn, opts: { seats: number, lines: LineSpec[], memberPrice?: number, nonMemberPrice?: number, holdMinutes?: number, option?: { qty: number, stock: number }[] }): Promise<KitDay> {
  const tag = uid()
  const [[organiser]] = await db.query<mysql.RowDataPacket[]>('select id from users where email = ?', ['olwen.hartley@club.invalid'])
  const binId = await insert(db, 'insert into bins (code, place) values (?, ?)', [`T-${tag}`, 'Selling test shelf'])
  const kitId = await insert(db, 'insert into kits (name, slug, description) values (?, ?, ?)', [`Test kit ${tag}`, `test-kit-${tag}`, 'A kit made by the selling tests'])
  const revisionId = await insert(db, 'insert into revisions (kit_id, label, state, released_at) values (?, ?, ?, now())', [kitId, 'A', 'released'])
  const stageId = await insert(db, 'insert into stages (revision_id, name, sort_order) values (?, ?, ?)', [revisionId, 'Main board', 1])
  const lotIds: number[] = []
  const part = async (name: string, stock: number) => {
    const partId = await insert(db, 'insert into parts (kind, name) values (?, ?)', ['hardware', `${name} ${tag}`])
    if (stock > 0) {
      const lotId = await insert(db, 'insert into lots (part_id, bin_id, qty_received, on_hand, unit_cost_minor, currency, received_on) values (?, ?, ?, ?, ?, ?, ?)', [partId, binId, stock, stock, 10, 'GBP', '2026-11-20'])
      await insert(db, 'insert into ledger (lot_id, part_id, bin_id, kind, qty, user_id, reason) values (?, ?, ?, ?, ?, ?, ?)', [lotId, partId, binId, 'receive', stock, organiser.id, 'Selling test stock'])
      lotIds.push(lotId)
    }
    return partId
  }
  const lineIds: number[] = []
  const partIds: number[][] = []
  for (const [i, l] of opts.lines.entries()) {
    const own = await part(`Test part ${i + 1}`, l.stock)
    const ids = [own]
    if (l.standInStock !== undefined) {
      const standIn = await part(`Test stand-in ${i + 1}`, l.standInStock)
      const groupId = await insert(db, 'insert into swap_groups (name) values (?)', [`Test swap ${i + 1} ${tag}`])
      await db.query('insert into swap_group_members (group_id, part_id, direction) values (?, ?, ?), (?, ?, ?)', [groupId, own, 'both', groupId, standIn, 'both'])
      ids.push(standIn)
    }
    partIds.push(ids)
    lineIds.push(await insert(db, 'insert into bom_lines (revision_id, designators, qty, part_id, stage_id, no_stand_ins, sort_order) values (?, ?, ?, ?, ?, ?, ?)', [revisionId, `X${i + 1}`, l.qty, own, stageId, l.noStandIns ? 1 : 0, i + 1]))
  }
  const optionIds: number[] = []
  if (opts.option) {
    const groupId = await insert(db, 'insert into option_groups (revision_id, name, rule, sort_order) values (?, ?, ?, ?)', [revisionId, 'Band', 'one', 1])
    for (const [i, o] of opts.option.entries()) {
      const optionId = await insert(db, 'insert into options (group_id, revision_id, name, sort_order) values (?, ?, ?, ?)', [groupId, revisionId, `Band ${i + 1}`, i + 1])
      const own = await part(`Test band part ${i + 1}`, o.stock)
      await insert(db, 'insert into bom_lines (revision_id, designators, qty, part_id, stage_id, option_id, sort_order) values (?, ?, ?, ?, ?, ?, ?)', [revisionId, `B${i + 1}`, o.qty, own, stageId, optionId, 100 + i])
      optionIds.push(optionId)
    }
  }
  const now = Date.now()
  const dayId = await insert(db, 'insert into build_days (name, date, venue, seats, sales_open_at, sales_close_at, currency, hold_minutes) values (?, ?, ?, ?, ?, ?, ?, ?)', [
    `Test day ${tag}`, '2027-03-20', 'Test hall', opts.seats, new Date(now - 86400_000), new Date(now + 30 * 86400_000), 'GBP', opts.holdMinutes ?? 30,
  ])
  const offeringId = await insert(db, 'insert into offerings (build_day_id, revision_id, allowed_option_ids, member_price_minor, non_member_price_minor) values (?, ?, ?, ?, ?)', [
    dayId, revisionId, JSON.stringify(optionIds), opts.memberPrice ?? 2500, opts.nonMemberPrice ?? 3000,
  ])
  return { dayId, offeringId, revisionId, kitId, lineIds, partIds, lotIds, optionIds }
}

/** Builders of the tests' own (demo password), signed in, `concurrency` sign-ins at a time. */
export async function makeBuilders(db: Conn, base: string, n: number, opts: { member?: boolean, concurrency?: number } = {}) {
  const tag = uid()
  const [[demo]] = await db.query<mysql.RowDataPacket[]>('select password_hash from users where email = ?', ['bea.marchetti@club.invalid'])
  const emails: string[] = []
  for (let i = 0; i < n; i++) {
    const email = `buyer-${tag}-${i}@club.invalid`
    const id = await insert(db, 'insert into users (email, name, password_hash, member) values (?, ?, ?, ?)', [email, `Test Buyer ${tag} ${i}`, demo.password_hash, opts.member === false ? 0 : 1])
    await db.query('insert into user_roles (user_id, role) values (?, ?)', [id, 'builder'])
    emails.push(email)
  }
  const clients: Client[] = new Array(n)
  const width = opts.concurrency ?? 8
  for (let i = 0; i < n; i += width) {
    await Promise.all(emails.slice(i, i + width).map(async (email, j) => { clients[i + j] = await new Client(base).login(email) }))
  }
  return clients.map((client, i) => ({ client, email: emails[i]! }))
}

/** Reservations of the test's parts by state, and each lot's on-hand against its ledger sum. */
export async function stockState(db: Conn, partIds: number[]) {
  const [res] = await db.query<mysql.RowDataPacket[]>('select part_id, state, cast(sum(qty) as signed) as qty, count(*) as n from reservations where part_id in (?) group by part_id, state', [partIds])
  const [lots] = await db.query<mysql.RowDataPacket[]>('select l.id, l.part_id, l.on_hand, cast(coalesce(sum(g.qty), 0) as signed) as ledger from lots l left join ledger g on g.lot_id = l.id where l.part_id in (?) group by l.id', [partIds])
  const reserved = (partId: number, state: string) => Number(res.find(r => r.part_id === partId && r.state === state)?.qty ?? 0)
  return { reservations: res, lots: lots.map(l => ({ id: l.id, partId: l.part_id, onHand: Number(l.on_hand), ledger: Number(l.ledger) })), reserved }
}

export async function ordersOfDay(db: Conn, dayId: number) {
  const [rows] = await db.query<mysql.RowDataPacket[]>('select * from orders where build_day_id = ? order by id', [dayId])
  return rows
}

export async function waitUntil<T>(what: string, fn: () => Promise<T | undefined | null | false>, ms = 10_000): Promise<T> {
  const until = Date.now() + ms
  for (;;) {
    const v = await fn()
    if (v) return v
    if (Date.now() > until) throw new Error(`timed out waiting for ${what}`)
    await new Promise(r => setTimeout(r, 100))
  }
}

/** Pays a session through the fake's test control (as the pay page would) and waits for the webhook to mark the order paid. */
export async function payAndWait(db: Conn, stripeUrl: string, sessionId: string, orderId: number, card?: string) {
  const res = await fetch(`${stripeUrl}/_test/sessions/${sessionId}/pay`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify(card ? { card } : {}) })
  if (!res.ok) throw new Error(`the fake refused to pay: ${res.status} ${await res.text()}`)
  return waitUntil(`order ${orderId} paid`, async () => {
    const [[o]] = await db.query<mysql.RowDataPacket[]>('select * from orders where id = ?', [orderId])
    return o?.state === 'paid' ? o : null
  })
}

export function sessionIdOf(url: string) {
  return decodeURIComponent(new URL(url).pathname.split('/').pop()!)
}
