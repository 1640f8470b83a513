import { pathToFileURL } from 'node:url'
import { DEFAULTS, startFakeStripe, type FakeStripeOptions } from './server'

export { startFakeStripe, DEFAULTS, DEFAULT_API_VERSION, type FakeStripe, type FakeStripeOptions } from './server'
export { signatureHeader, type StripeEvent, type EventRecord, type DeliveryAttempt } from './webhooks'
export { SUCCESS_CARD, DECLINED_CARD } from './state'

/** Options from STRIPE_FAKE_PORT, STRIPE_FAKE_PUBLIC_URL, STRIPE_WEBHOOK_URL and STRIPE_WEBHOOK_SECRET. */
export function optionsFromEnv(env: NodeJS.ProcessEnv = process.env): FakeStripeOptions {
  const port = env.STRIPE_FAKE_PORT ? Number(env.STRIPE_FAKE_PORT) : DEFAULTS.port
  if (!Number.isInteger(port) || port < 0 || port > 65535) throw new Error(`STRIPE_FAKE_PORT must be a port number, not '${env.STRIPE_FAKE_PORT}'.`)
  return {
    port,
    publicUrl: env.STRIPE_FAKE_PUBLIC_URL || undefined,
    webhookUrl: env.STRIPE_WEBHOOK_URL ?? DEFAULTS.webhookUrl,
    webhookSecret: env.STRIPE_WEBHOOK_SECRET || DEFAULTS.webhookSecret,
  }
}

async function main(): Promise<void> {
  const options = optionsFromEnv()
  const fake = await startFakeStripe({ ...options, log: (line) => console.log(`[fake-stripe] ${line}`) })
  console.log(`[fake-stripe] API on ${fake.url} (pay pages under ${options.publicUrl ?? fake.url}/pay/)`)
  console.log(`[fake-stripe] webhooks to ${options.webhookUrl || '(none)'}`)
  const stop = () => {
    fake.close().then(() => process.exit(0))
  }
  process.on('SIGINT', stop)
  process.on('SIGTERM', stop)
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) {
  main().catch((err) => {
    console.error(`[fake-stripe] could not start: ${err instanceof Error ? err.message : String(err)}`)
    process.exit(1)
  })
}
