import { z } from 'zod'

const query = z.object({ state: z.enum(['active', 'resolved', 'declined', 'all']).default('active') })
const STATES = { active: ['open', 'handling'], resolved: ['resolved'], declined: ['declined'], all: ['open', 'handling', 'resolved', 'declined'] } as const

/** The spares desk's queue, oldest first, with bins holding spares and allowed stand-ins per line. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser', 'packer')
  const { state } = parseQuery(event, query)
  return loadSparesQueue(useDb(), { states: [...STATES[state]], limit: state === 'active' ? 200 : 100 })
})
