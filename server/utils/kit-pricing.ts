// Pricing a kit revision: the inputs the organiser sets (kept in settings), the lots' unit costs of
// each part, and priceKit from shared/utils/pricing.ts for every option choice.
import { z } from 'zod'

const money = z.number().int('Whole minor units (pence)').min(0, 'Must be 0 or more').max(10_000_000, 'Too large')
const percent = (max: number) => z.number().min(0, 'Must be 0 or more').max(max, `Must be below ${max}`)

export const pricingInputsSchema = z.object({
  method: z.enum(['average', 'fifo']),
  currency: z.string().regex(/^[A-Z]{3}$/, 'A three-letter currency code, e.g. GBP'),
  extras: z.object({ boardMinor: money, enclosureMinor: money, bagMinor: money, labelMinor: money }),
  sparesPercent: percent(100),
  overheadMinor: money,
  marginPercent: percent(500),
  fee: z.object({ percent: percent(50), fixedMinor: money }),
  stepMinor: z.number().int().min(1, 'At least 1').max(100_000, 'Too large'),
  memberDiscountPercent: percent(99),
  nonMemberSurchargeMinor: money,
  nonMemberSurchargePercent: percent(500),
})

export type PricingInputs = z.infer<typeof pricingInputsSchema>

export const DEFAULT_PRICING_INPUTS: PricingInputs = {
  method: 'average',
  currency: 'GBP',
  extras: { boardMinor: 0, enclosureMinor: 0, bagMinor: 15, labelMinor: 5 },
  sparesPercent: 5,
  overheadMinor: 100,
  marginPercent: 10,
  fee: { percent: 1.5, fixedMinor: 20 },
  stepMinor: 50,
  memberDiscountPercent: 0,
  nonMemberSurchargeMinor: 300,
  nonMemberSurchargePercent: 0,
}

const SETTINGS_KEY = 'pricing.defaults'

/** The saved pricing inputs over the defaults. */
export async function loadPricingInputs(db: Db): Promise<PricingInputs> {
  const [row] = await db.select().from(tables.settings).where(eq(tables.settings.key, SETTINGS_KEY))
  const parsed = pricingInputsSchema.safeParse({ ...DEFAULT_PRICING_INPUTS, ...(row?.value as object ?? {}) })
  return parsed.success ? parsed.data : DEFAULT_PRICING_INPUTS
}

export async function savePricingInputs(db: Db, inputs: PricingInputs) {
  await db.insert(tables.settings).values({ key: SETTINGS_KEY, value: inputs, note: 'Pricing page defaults' })
    .onDuplicateKeyUpdate({ set: { value: inputs } })
}

/** Prices every option choice of a revision with the given inputs, with the cost of each part. */
export async function priceRevision(db: Db, revisionId: number, inputs: PricingInputs) {
  const [rev] = await db.select({ rev: tables.revisions, kit: tables.kits }).from(tables.revisions)
    .innerJoin(tables.kits, eq(tables.kits.id, tables.revisions.kitId)).where(eq(tables.revisions.id, revisionId))
  if (!rev) throw createError({ statusCode: 404, statusMessage: 'Not found', message: 'There is no such revision' })
  const groups = (await optionGroupsOf(db, [revisionId])).get(revisionId) ?? []
  const allOptions = groups.flatMap(g => g.options).map(o => Number(o.id))
  const choices = optionChoices(groups, allOptions)
  const priced = []
  for (const optionIds of choices) {
    const { effective } = await loadEffectiveBom(db, revisionId, optionIds)
    const unassigned = effective.filter(l => !l.partId)
    const lines = effective.filter(l => l.partId).map(l => ({ partId: l.partId!, qtyPerKit: l.qty }))
    const partIds = [...new Set(lines.map(l => Number(l.partId)))]
    const lots = partIds.length ? await db.select().from(tables.lots).where(inArray(tables.lots.partId, partIds)) : []
    const names = partIds.length ? await db.select({ id: tables.parts.id, name: tables.parts.name }).from(tables.parts).where(inArray(tables.parts.id, partIds)) : []
    const lotsByPart: Record<string, CostLot[]> = {}
    for (const l of lots) (lotsByPart[String(l.partId)] ??= []).push({ qty: l.onHand, unitCostMinor: l.unitCostMinor, receivedAt: l.receivedOn })
    const price = priceKit({ ...inputs, lines, lotsByPart })
    const parts = partIds.map((id) => {
      const qty = lines.filter(l => l.partId === String(id)).reduce((s, l) => s + l.qtyPerKit, 0)
      const c = unitCost(lotsByPart[String(id)] ?? [], qty, inputs.method)
      return { partId: id, name: names.find(n => n.id === id)?.name ?? `part ${id}`, qty, costMinor: c.totalMinor, covered: c.covered }
    })
    const optionNames = optionIds.map(id => groups.flatMap(g => g.options).find(o => o.id === String(id))?.name ?? String(id))
    const warnings = [...price.warnings, ...(unassigned.length ? [`Line ${unassigned.map(l => l.designators).join(', ')} has no catalogue part and is not costed.`] : [])]
    priced.push({ optionIds, optionNames, price: { ...price, warnings }, parts })
  }
  return { revision: { id: rev.rev.id, label: rev.rev.label, state: rev.rev.state }, kit: { id: rev.kit.id, name: rev.kit.name }, groups, choices: priced }
}
