// Loads the demo scenario once (idempotent: a marker row in settings says it is there).
import { Hash } from '@adonisjs/hash'
import { Scrypt } from '@adonisjs/hash/drivers/scrypt'
import { eq } from 'drizzle-orm'
import { drizzle } from 'drizzle-orm/mysql2'
import mysql from 'mysql2/promise'
import * as schema from '../schema'
import { BIN_PLACES, CLUB, DEMO_PASSWORD, KITS, PARTS, PEOPLE, SUPPLIERS, SWAP_GROUPS } from './data'
import { seedOrders } from './orders'

const MARKER = 'demo-scenario'

export async function seedDemo(url: string, opts: { orders?: boolean } = {}) {
  const conn = await mysql.createConnection({ uri: url, timezone: 'Z', dateStrings: ['DATE'] })
  const db = drizzle(conn, { schema, mode: 'default' })
  try {
    const done = await db.select().from(schema.settings).where(eq(schema.settings.key, MARKER))
    if (done.length) return { seeded: false }
    const hash = new Hash(new Scrypt({}))
    const passwordHash = await hash.make(DEMO_PASSWORD)
    await db.transaction(async (tx) => {
      const userIds: Record<string, number> = {}
      for (const p of PEOPLE) {
        const [row] = await tx.insert(schema.users).values({ email: p.email, name: p.name, passwordHash, member: p.member ?? true, callsign: p.callsign ?? null }).$returningId()
        userIds[p.email] = row!.id
        await tx.insert(schema.userRoles).values(p.roles.map(role => ({ userId: row!.id, role })))
      }
      const organiserId = userIds[PEOPLE[0]!.email]!

      const binIds: Record<string, number> = {}
      const binCodes = [...new Set(PARTS.map(p => p.bin))].sort()
      for (const [i, code] of binCodes.entries()) {
        const [row] = await tx.insert(schema.bins).values({ code, place: BIN_PLACES[code[0]!] ?? '', walkOrder: (i + 1) * 10 }).$returningId()
        binIds[code] = row!.id
      }
      for (const code of ['S-01', 'S-02']) {
        const [row] = await tx.insert(schema.bins).values({ code, place: 'Spares desk crate', walkOrder: 900 }).$returningId()
        binIds[code] = row!.id
      }

      const partIds: Record<string, number> = {}
      for (const [i, p] of PARTS.entries()) {
        const [row] = await tx.insert(schema.parts).values({
          kind: p.kind, name: p.name, value: p.value ?? null, unit: p.unit ?? null, valueText: p.valueText ?? null,
          tolerancePct: p.tolerancePct ?? null, powerW: p.powerW ?? null, voltageV: p.voltageV ?? null, currentA: p.currentA ?? null,
          dielectric: p.dielectric ?? null, mounting: p.mounting ?? null, polarised: p.polarised ?? false, package: p.package ?? null,
          pinoutNote: p.pinoutNote ?? null, description: p.description ?? null,
        }).$returningId()
        partIds[p.key] = row!.id
        const supplier = SUPPLIERS[i % SUPPLIERS.length]!
        const [lot] = await tx.insert(schema.lots).values({
          partId: row!.id, binId: binIds[p.bin]!, qtyReceived: p.qty, onHand: p.qty, unitCostMinor: p.costMinor, currency: 'GBP',
          supplier, supplierRef: `${supplier.slice(0, 2).toUpperCase()}-${1000 + i}`, receivedOn: '2026-11-14', note: 'Opening stock',
        }).$returningId()
        await tx.insert(schema.ledger).values({ lotId: lot!.id, partId: row!.id, binId: binIds[p.bin]!, kind: 'receive', qty: p.qty, userId: organiserId, reason: 'Opening stock' })
        await tx.insert(schema.supplierOffers).values({
          partId: row!.id, supplier, supplierRef: `${supplier.slice(0, 2).toUpperCase()}-${1000 + i}`, currency: 'GBP',
          minQty: p.costMinor < 10 ? 10 : 1, packSize: p.costMinor < 10 ? 10 : 1,
          breaks: [{ qty: 1, unitPriceMinor: Math.max(1, Math.round(p.costMinor * 1.4)) }, { qty: 100, unitPriceMinor: p.costMinor }, { qty: 1000, unitPriceMinor: Math.max(1, Math.round(p.costMinor * 0.7)) }],
        })
      }
      // A few spares in the spares-desk crate, as a second lot of the most-lost parts.
      for (const [key, qty] of [['r10k', 40], ['c100n', 60], ['r4k7', 30]] as const) {
        const p = PARTS.find(x => x.key === key)!
        const [lot] = await tx.insert(schema.lots).values({ partId: partIds[key]!, binId: binIds['S-01']!, qtyReceived: qty, onHand: qty, unitCostMinor: p.costMinor, currency: 'GBP', supplier: SUPPLIERS[0], receivedOn: '2026-11-20', note: 'Spares for the day' }).$returningId()
        await tx.insert(schema.ledger).values({ lotId: lot!.id, partId: partIds[key]!, binId: binIds['S-01']!, kind: 'receive', qty, userId: organiserId, reason: 'Spares for the day' })
      }

      for (const g of SWAP_GROUPS) {
        const [row] = await tx.insert(schema.swapGroups).values({ name: g.name, warning: g.warning ?? null }).$returningId()
        await tx.insert(schema.swapGroupMembers).values(g.members.map(m => ({ groupId: row!.id, partId: partIds[m.key]!, direction: m.direction })))
      }
      await tx.insert(schema.swapSettings).values([{ kind: 'resistor', enabled: true }, { kind: 'capacitor', enabled: true }, { kind: 'inductor', enabled: true }])

      const revisionIds: Record<string, number> = {}
      for (const k of KITS) {
        const [kit] = await tx.insert(schema.kits).values({ slug: k.slug, name: k.name, description: k.description, designerCredit: k.designerCredit, transmits: k.transmits }).$returningId()
        for (const r of k.revisions) {
          const [rev] = await tx.insert(schema.revisions).values({ kitId: kit!.id, label: r.label, state: r.state, releasedAt: r.state === 'released' ? new Date('2026-11-10T12:00:00Z') : null }).$returningId()
          revisionIds[`${k.slug}/${r.label}`] = rev!.id
          const stageIds: Record<string, number> = {}
          for (const [i, s] of k.stages.entries()) {
            const [st] = await tx.insert(schema.stages).values({ revisionId: rev!.id, name: s, sortOrder: i + 1 }).$returningId()
            stageIds[s] = st!.id
          }
          const lineRow = (l: (typeof r.lines)[number], sortOrder: number, optionId: number | null) => ({
            revisionId: rev!.id, designators: l.d, qty: l.qty ?? l.d.split(',').reduce((n, item) => {
              const m = item.trim().match(/^([A-Z]+)(\d+)-[A-Z]*(\d+)$/)
              return n + (m ? Number(m[3]) - Number(m[2]) + 1 : 1)
            }, 0),
            partId: partIds[l.part]!, stageId: stageIds[l.stage]!, noStandIns: l.noStandIns ?? false, notes: l.notes ?? null, optionId, sortOrder,
          })
          await tx.insert(schema.bomLines).values(r.lines.map((l, i) => lineRow(l, i + 1, null)))
          for (const [gi, g] of (r.options ?? []).entries()) {
            const [grp] = await tx.insert(schema.optionGroups).values({ revisionId: rev!.id, name: g.group, rule: g.rule, sortOrder: gi + 1 }).$returningId()
            for (const [oi, o] of g.options.entries()) {
              const [opt] = await tx.insert(schema.options).values({ groupId: grp!.id, revisionId: rev!.id, name: o.name, sortOrder: oi + 1 }).$returningId()
              await tx.insert(schema.bomLines).values(o.lines.map((l, i) => lineRow(l, 100 + i, opt!.id)))
            }
          }
        }
      }

      const [day] = await tx.insert(schema.buildDays).values({
        name: CLUB.buildDay.name, date: CLUB.buildDay.date, venue: CLUB.buildDay.venue, seats: CLUB.buildDay.seats,
        salesOpenAt: new Date('2026-11-01T09:00:00Z'), salesCloseAt: new Date('2027-02-06T18:00:00Z'), currency: CLUB.buildDay.currency, holdMinutes: 30,
      }).$returningId()
      const prices: Record<string, [number, number]> = { 'wren-40/A': [2400, 2800], 'linnet-20/A': [2950, 3400], 'tern-atu/A': [3500, 4000] }
      for (const [key, [member, nonMember]] of Object.entries(prices)) {
        const revisionId = revisionIds[key]!
        const optionRows = await tx.select().from(schema.options).where(eq(schema.options.revisionId, revisionId))
        await tx.insert(schema.offerings).values({ buildDayId: day!.id, revisionId, allowedOptionIds: optionRows.map(o => o.id), memberPriceMinor: member, nonMemberPriceMinor: nonMember })
      }
      await tx.insert(schema.settings).values({ key: MARKER, value: { at: new Date().toISOString() }, note: 'The demo scenario has been loaded' })
    })
    if (opts.orders !== false) await seedOrders(db)
    return { seeded: true }
  }
  finally {
    await conn.end()
  }
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const url = process.env.NUXT_DATABASE_URL
  if (!url) {
    console.error('NUXT_DATABASE_URL is not set')
    process.exit(1)
  }
  seedDemo(url).then(r => console.log(r.seeded ? 'demo scenario loaded' : 'demo scenario already present'), (err) => {
    console.error('seeding failed:', err)
    process.exit(1)
  })
}
