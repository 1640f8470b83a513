/**
 * Payment events from Stripe (the local fake in development). The signature is checked over the
 * raw body; each event id is acted on once; an event for an unknown session is acknowledged (200)
 * and logged so the sender stops retrying.
 */
export default defineEventHandler(async (event) => {
  const raw = await readRawBody(event, false)
  const signature = getRequestHeader(event, 'stripe-signature')
  if (!raw || !signature) throw createError({ statusCode: 400, statusMessage: 'Bad request', message: 'A signed event body is required' })
  let verified: ReturnType<typeof verifyStripeEvent>
  try {
    verified = verifyStripeEvent(raw, signature)
  }
  catch {
    console.warn('[stripe] webhook refused: the signature does not match')
    throw createError({ statusCode: 400, statusMessage: 'Bad signature', message: 'The webhook signature does not match' })
  }
  const result = await handleStripeEvent(verified)
  return { received: true, ...result }
})
