import { z } from 'zod'

const price = z.number().int('Whole pence').min(0, 'Must be 0 or more').max(10_000_000, 'Too large')

export const offeringBody = z.object({
  buildDayId: z.number().int().positive(),
  revisionId: z.number().int().positive('Choose a kit revision'),
  allowedOptionIds: z.array(z.number().int().positive()).max(200),
  memberPriceMinor: price,
  nonMemberPriceMinor: price,
})

/**
 * 400 unless the revision is released and the allowed options belong to it and leave every
 * "choose one" group at least one option.
 */
export async function checkOffering(db: Db, revisionId: number, allowed: number[]) {
  const bad = (message: string, field: string): never => {
    throw createError({ statusCode: 400, statusMessage: 'Invalid input', message, data: { fields: { [field]: message } } })
  }
  const [rev] = await db.select().from(tables.revisions).where(eq(tables.revisions.id, revisionId))
  if (!rev) bad('There is no such kit revision', 'revisionId')
  if (rev!.state !== 'released') bad(`Revision ${rev!.label} is ${rev!.state}: only a released revision can be sold`, 'revisionId')
  const groups = (await optionGroupsOf(db, [revisionId])).get(revisionId) ?? []
  const known = new Set(groups.flatMap(g => g.options.map(o => Number(o.id))))
  if (allowed.some(id => !known.has(id))) bad('An allowed option does not belong to this revision', 'allowedOptionIds')
  for (const g of groups) {
    if (g.rule === 'one' && !g.options.some(o => allowed.includes(Number(o.id)))) bad(`Allow at least one option of "${g.name}": members must choose one`, 'allowedOptionIds')
  }
}
