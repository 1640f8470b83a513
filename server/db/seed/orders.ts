// Demo orders: a dozen builders have paid, so the packing station has bags to pack.
import { eq, inArray } from 'drizzle-orm'
import type { MySql2Database } from 'drizzle-orm/mysql2'
import * as schema from '../schema'
import { loadEffectiveBom } from '../../utils/revision-bom'
import { createBagForOrder } from '../../utils/bags'
import { PEOPLE } from './data'

const PLAN: { slug: string, option?: string }[] = [
  { slug: 'wren-40', option: '40 m (7.030 MHz)' }, { slug: 'wren-40', option: '40 m (7.030 MHz)' }, { slug: 'wren-40', option: '80 m (3.560 MHz)' },
  { slug: 'wren-40', option: '40 m (7.030 MHz)' }, { slug: 'wren-40', option: '80 m (3.560 MHz)' }, { slug: 'wren-40', option: '40 m (7.030 MHz)' },
  { slug: 'linnet-20' }, { slug: 'linnet-20', option: 'Dummy load and indicator' }, { slug: 'linnet-20' },
  { slug: 'tern-atu' }, { slug: 'wren-40', option: '40 m (7.030 MHz)' }, { slug: 'tern-atu' },
]

export async function seedOrders(db: MySql2Database<typeof schema>) {
  const builders = PEOPLE.filter(p => p.roles.length === 1 && p.roles[0] === 'builder').slice(0, PLAN.length)
  const users = await db.select().from(schema.users).where(inArray(schema.users.email, builders.map(b => b.email)))
  const [day] = await db.select().from(schema.buildDays).limit(1)
  const offerings = await db.select({ o: schema.offerings, kit: schema.kits }).from(schema.offerings)
    .innerJoin(schema.revisions, eq(schema.revisions.id, schema.offerings.revisionId))
    .innerJoin(schema.kits, eq(schema.kits.id, schema.revisions.kitId))
  const allOptions = await db.select().from(schema.options)
  for (const [i, plan] of PLAN.entries()) {
    const user = users.find(u => u.email === builders[i]!.email)!
    const { o: offering } = offerings.find(x => x.kit.slug === plan.slug)!
    const optionIds = plan.option ? [allOptions.find(op => op.revisionId === offering.revisionId && op.name === plan.option)!.id] : []
    const { effective } = await loadEffectiveBom(db, offering.revisionId, optionIds)
    await db.transaction(async (tx) => {
      const amount = user.member ? offering.memberPriceMinor : offering.nonMemberPriceMinor
      const [order] = await tx.insert(schema.orders).values({
        buildDayId: day!.id, offeringId: offering.id, userId: user.id, optionIds, state: 'paid', amountMinor: amount, currency: day!.currency,
        memberPrice: user.member, seat: i + 1, stripeSessionId: `cs_demo_${i + 1}`, stripePaymentIntent: `pi_demo_${i + 1}`, paidAt: new Date('2026-11-25T19:00:00Z'),
      }).$returningId()
      await tx.insert(schema.reservations).values(effective.map(l => ({ orderId: order!.id, lineId: Number(l.id), partId: Number(l.partId), qty: l.qty, state: 'confirmed' as const })))
      await createBagForOrder(tx, order!.id)
    })
  }
}
