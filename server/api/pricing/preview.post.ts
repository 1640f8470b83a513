import { z } from 'zod'

const body = z.object({ revisionId: z.number().int().positive('Choose a kit revision'), inputs: pricingInputsSchema })

/** The cost roll-up and prices of every option choice of a revision, for the given inputs. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const { revisionId, inputs } = await parseBody(event, body)
  try {
    return await priceRevision(useDb(), revisionId, inputs)
  }
  catch (err) {
    if ((err as { statusCode?: number }).statusCode) throw err
    throw createError({ statusCode: 400, statusMessage: 'Invalid input', message: (err as Error).message })
  }
})
