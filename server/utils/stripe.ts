import Stripe from 'stripe'

let client: Stripe | undefined

/** The process-wide Stripe client, pointed at the configured host (the local fake in development and tests). */
export function useStripe(): Stripe {
  if (!client) {
    const { stripe } = useRuntimeConfig()
    client = new Stripe(String(stripe.secretKey), {
      host: String(stripe.host),
      port: Number(stripe.port),
      protocol: String(stripe.protocol) === 'https' ? 'https' : 'http',
      telemetry: false,
      maxNetworkRetries: 0,
    })
  }
  return client
}

/** Verifies a webhook's signature over its raw body; throws when it does not match. */
export function verifyStripeEvent(rawBody: string | Buffer, signature: string) {
  return useStripe().webhooks.constructEvent(rawBody, signature, String(useRuntimeConfig().stripe.webhookSecret))
}

/** A 503 (service unreachable) or 502 (service refused) whose message says what did not happen. */
export function paymentServiceError(err: unknown, doing: string, consequence: string) {
  const e = err as { type?: string, message?: string, statusCode?: number }
  console.error(`[stripe] ${doing} failed:`, e?.type ?? '', e?.message ?? err)
  const unreachable = e?.type === 'StripeConnectionError' || e?.type === 'StripeAPIError' || !e?.statusCode || e.statusCode >= 500
  return createError({
    statusCode: unreachable ? 503 : 502,
    statusMessage: unreachable ? 'Payment service unavailable' : 'Payment service error',
    message: unreachable
      ? `${doing}: the card payment service is not answering just now, so ${consequence}. Please try again in a few minutes.`
      : `${doing}: the card payment service refused (${e?.message ?? 'no reason given'}), so ${consequence}.`,
  })
}
