/** Stock health: every lot's on-hand equals its ledger sum and never went below zero. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const problems = await checkStockInvariants(useDb())
  return { ok: problems.length === 0, problems }
})
