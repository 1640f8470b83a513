import { sql } from 'drizzle-orm'
import type { MySql2Database } from 'drizzle-orm/mysql2'
import type * as schema from '../db/schema'

type AnyDb = MySql2Database<typeof schema>

interface Check { name: string, query: string, explain: (row: Record<string, unknown>) => string }

// Each query returns the rows that break one rule; an empty result means the rule holds.
const CHECKS: Check[] = [
  {
    name: 'lot on hand equals its ledger sum',
    query: `select l.id, l.on_hand, coalesce(sum(g.qty), 0) as ledger_sum from lots l left join ledger g on g.lot_id = l.id
            group by l.id, l.on_hand having l.on_hand <> coalesce(sum(g.qty), 0)`,
    explain: r => `lot ${r.id}: on hand ${r.on_hand} but the ledger sums to ${r.ledger_sum}`,
  },
  {
    name: 'no lot below zero',
    query: 'select id, on_hand from lots where on_hand < 0',
    explain: r => `lot ${r.id} holds ${r.on_hand}`,
  },
  {
    name: 'reservations never exceed stock on hand',
    query: `select p.part_id, p.on_hand, coalesce(r.reserved, 0) as reserved from
              (select part_id, sum(on_hand) as on_hand from lots group by part_id) p
              left join (select part_id, sum(qty) as reserved from reservations where state in ('held', 'confirmed') group by part_id) r on r.part_id = p.part_id
            where coalesce(r.reserved, 0) > p.on_hand
            union
            select r.part_id, 0, sum(r.qty) from reservations r where r.state in ('held', 'confirmed') and not exists (select 1 from lots l where l.part_id = r.part_id) group by r.part_id`,
    explain: r => `part ${r.part_id}: ${r.reserved} reserved but only ${r.on_hand} on hand`,
  },
  {
    name: 'reservations follow their order',
    query: `select r.id, r.state, o.id as order_id, o.state as order_state from reservations r join orders o on o.id = r.order_id
            where (o.state in ('cancelled', 'expired', 'refunded') and r.state in ('held', 'confirmed'))
               or (o.state = 'paid' and r.state = 'held')
               or (o.state = 'pending' and r.state in ('confirmed', 'consumed'))`,
    explain: r => `reservation ${r.id} is ${r.state} but order ${r.order_id} is ${r.order_state}`,
  },
  {
    name: 'seats sold never exceed seats',
    query: `select d.id, d.seats, count(o.id) as taken from build_days d join orders o on o.build_day_id = d.id
            where o.state = 'paid' or (o.state = 'pending' and o.hold_expires_at > now())
            group by d.id, d.seats having count(o.id) > d.seats`,
    explain: r => `build day ${r.id}: ${r.taken} seats taken of ${r.seats}`,
  },
  {
    name: 'a sealed bag is complete',
    query: `select b.id, b.code from bags b join bag_items i on i.bag_id = b.id
            where b.state in ('sealed', 'collected') group by b.id, b.code having sum(i.qty_packed <> i.qty_needed) > 0`,
    explain: r => `bag ${r.code} is sealed with lines not fully packed`,
  },
  {
    name: 'a sealed bag\'s picks match what it holds',
    query: `select b.id, b.code, packed.n as packed, coalesce(-picked.n, 0) as picked from bags b
            join (select bag_id, sum(qty_packed) as n from bag_items group by bag_id) packed on packed.bag_id = b.id
            left join (select bag_id, sum(qty) as n from ledger where bag_id is not null and kind in ('pick', 'return', 'rework') group by bag_id) picked on picked.bag_id = b.id
            where b.state in ('sealed', 'collected') and packed.n <> coalesce(-picked.n, 0)`,
    explain: r => `bag ${r.code}: ${r.packed} parts packed but ${r.picked} picked from stock`,
  },
  {
    name: 'a bag belongs to a paid order',
    query: `select b.code, o.state from bags b join orders o on o.id = b.order_id where b.state in ('packing', 'sealed', 'collected') and o.state not in ('paid', 'refunded', 'cancelled')`,
    explain: r => `bag ${r.code} is being packed for an order that is ${r.state}`,
  },
]

/** Checks the rules that tie stock, ledger, reservations, orders and bags together; returns the problems found. */
export async function checkInvariants(db: AnyDb) {
  const problems: { check: string, detail: string }[] = []
  for (const c of CHECKS) {
    const [rows] = await db.execute(sql.raw(c.query)) as unknown as [Record<string, unknown>[]]
    for (const row of rows) problems.push({ check: c.name, detail: c.explain(row) })
  }
  return { checks: CHECKS.map(c => c.name), problems }
}
