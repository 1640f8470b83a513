import { createHmac } from 'node:crypto'

export interface StripeEvent {
  id: string
  object: 'event'
  api_version: string
  created: number
  data: { object: unknown }
  livemode: false
  pending_webhooks: number
  request: { id: string | null; idempotency_key: string | null }
  type: string
}

export interface DeliveryAttempt {
  at: string
  url: string
  status: number | null
  error: string | null
  ms: number
}

export interface EventRecord {
  event: StripeEvent
  attempts: DeliveryAttempt[]
  /** pending: a try is due; delivered: a 2xx came back; failed: all tries used; off: no webhook URL set. */
  delivery: 'pending' | 'delivered' | 'failed' | 'off'
}

export interface WebhookConfig {
  url: string | null
  secret: string
}

export interface DeliveryOptions {
  /** Waits before the 2nd, 3rd, ... try; tries = length + 1. */
  retryDelaysMs: number[]
  timeoutMs: number
  log: (line: string) => void
}

/** `Stripe-Signature` value: t=<unix seconds>,v1=<hex HMAC-SHA256(secret, "<t>.<payload>")>. */
export function signatureHeader(payload: string, secret: string, timestampS: number): string {
  const v1 = createHmac('sha256', secret).update(`${timestampS}.${payload}`, 'utf8').digest('hex')
  return `t=${timestampS},v1=${v1}`
}

/** Sends events to the webhook URL and tries again with back-off until a 2xx answer or the tries run out. */
export class WebhookDispatcher {
  private readonly timers = new Map<string, NodeJS.Timeout>()
  private readonly inFlight = new Set<Promise<void>>()
  // A resend starts a new series; a reply from an older series must not schedule more tries.
  private readonly series = new Map<string, number>()
  private closed = false

  constructor(
    public config: WebhookConfig,
    private readonly options: DeliveryOptions,
  ) {}

  /** Starts a fresh series of tries for the event (also used for a manual resend). */
  dispatch(record: EventRecord): void {
    this.cancel(record.event.id)
    if (!this.config.url) {
      record.delivery = 'off'
      return
    }
    record.delivery = 'pending'
    const series = (this.series.get(record.event.id) ?? 0) + 1
    this.series.set(record.event.id, series)
    this.attempt(record, 0, series)
  }

  cancel(eventId: string): void {
    const timer = this.timers.get(eventId)
    if (timer) clearTimeout(timer)
    this.timers.delete(eventId)
  }

  cancelAll(): void {
    for (const timer of this.timers.values()) clearTimeout(timer)
    this.timers.clear()
    this.series.clear()
  }

  /** Resolves when no try is running or waiting (for tests and shutdown). */
  async idle(): Promise<void> {
    while (this.inFlight.size > 0 || this.timers.size > 0) {
      await Promise.race([...this.inFlight, new Promise((r) => setTimeout(r, 10))])
    }
  }

  async close(): Promise<void> {
    this.closed = true
    this.cancelAll()
    await Promise.allSettled([...this.inFlight])
  }

  private attempt(record: EventRecord, index: number, series: number): void {
    const run = this.send(record).then((ok) => {
      this.inFlight.delete(run)
      if (this.closed || this.series.get(record.event.id) !== series) return
      if (ok) {
        record.delivery = 'delivered'
        return
      }
      const delay = this.options.retryDelaysMs[index]
      if (delay === undefined) {
        record.delivery = 'failed'
        this.options.log(`webhook ${record.event.id} ${record.event.type}: gave up after ${index + 1} tries`)
        return
      }
      const timer = setTimeout(() => {
        this.timers.delete(record.event.id)
        if (!this.closed) this.attempt(record, index + 1, series)
      }, delay)
      timer.unref()
      this.timers.set(record.event.id, timer)
    })
    this.inFlight.add(run)
  }

  private async send(record: EventRecord): Promise<boolean> {
    const url = this.config.url
    if (!url) {
      record.delivery = 'off'
      return true
    }
    const payload = JSON.stringify(record.event, null, 2)
    const started = Date.now()
    const attempt: DeliveryAttempt = { at: new Date(started).toISOString(), url, status: null, error: null, ms: 0 }
    record.attempts.push(attempt)
    try {
      const res = await fetch(url, {
        method: 'POST',
        headers: {
          'Content-Type': 'application/json; charset=utf-8',
          'Stripe-Signature': signatureHeader(payload, this.config.secret, Math.floor(Date.now() / 1000)),
          'User-Agent': 'KitwrightFakeStripe/1.0',
        },
        body: payload,
        signal: AbortSignal.timeout(this.options.timeoutMs),
      })
      await res.arrayBuffer().catch(() => undefined)
      attempt.status = res.status
      if (res.status < 200 || res.status > 299) attempt.error = `answered HTTP ${res.status}`
    } catch (err) {
      attempt.error = describe(err)
    }
    attempt.ms = Date.now() - started
    this.options.log(`webhook ${record.event.id} ${record.event.type} try ${record.attempts.length}: ${attempt.error ?? attempt.status}`)
    return attempt.error === null
  }
}

function describe(err: unknown): string {
  if (err instanceof Error) {
    const cause = (err as Error & { cause?: { code?: string; message?: string } }).cause
    if (err.name === 'TimeoutError') return 'timed out'
    return cause?.code ? `${err.message} (${cause.code})` : err.message
  }
  return String(err)
}
