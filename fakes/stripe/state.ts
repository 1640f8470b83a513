import { createSession, integer, metadata, str, type CheckoutSession, type SessionRecord } from './checkout'
import { ApiError, invalid, missingParam, noSuch } from './errors'
import type { FormObject } from './form'
import { newId } from './ids'
import { formatAmount } from './money'
import type { EventRecord, StripeEvent, WebhookDispatcher } from './webhooks'

export interface PaymentIntent {
  id: string
  object: 'payment_intent'
  amount: number
  amount_received: number
  created: number
  currency: string
  description: string | null
  latest_charge: string
  livemode: false
  metadata: Record<string, string>
  payment_method_types: string[]
  status: 'succeeded'
}

export interface Charge {
  id: string
  object: 'charge'
  amount: number
  amount_captured: number
  amount_refunded: number
  billing_details: { email: string | null; name: string | null }
  captured: true
  created: number
  currency: string
  livemode: false
  metadata: Record<string, string>
  paid: true
  payment_intent: string
  payment_method_details: { type: 'card'; card: { brand: string; last4: string } }
  refunded: boolean
  status: 'succeeded'
}

export interface Refund {
  id: string
  object: 'refund'
  amount: number
  charge: string
  created: number
  currency: string
  metadata: Record<string, string>
  payment_intent: string
  reason: string | null
  status: 'succeeded'
}

/** Who caused a change, for the event's `request` field and its api_version. */
export interface RequestInfo {
  requestId: string | null
  idempotencyKey: string | null
  apiVersion: string | null
}

// Card numbers with a fixed outcome in test mode (common practice for card test numbers; from memory).
const DECLINES: Record<string, { code: string; decline_code?: string; message: string }> = {
  '4000000000000002': { code: 'card_declined', decline_code: 'generic_decline', message: 'Your card was declined.' },
  '4000000000009995': { code: 'card_declined', decline_code: 'insufficient_funds', message: 'Your card has insufficient funds.' },
  '4000000000000069': { code: 'expired_card', message: 'Your card has expired.' },
  '4000000000000127': { code: 'incorrect_cvc', message: "Your card's security code is incorrect." },
}
export const SUCCESS_CARD = '4242424242424242'
export const DECLINED_CARD = '4000000000000002'

const REFUND_REASONS = new Set(['duplicate', 'fraudulent', 'requested_by_customer'])

export interface StateOptions {
  payUrl: (id: string) => string
  defaultApiVersion: string
  now: () => number
}

/** All objects of the fake and the rules that change them; HTTP lives in server.ts. */
export class FakeStripeState {
  sessions = new Map<string, SessionRecord>()
  paymentIntents = new Map<string, PaymentIntent>()
  charges = new Map<string, Charge>()
  refunds = new Map<string, Refund>()
  events = new Map<string, EventRecord>()
  clockOffsetMs = 0

  constructor(
    private readonly options: StateOptions,
    private readonly webhooks: WebhookDispatcher,
  ) {}

  nowS(): number {
    return Math.floor((this.options.now() + this.clockOffsetMs) / 1000)
  }

  reset(): void {
    this.sessions.clear()
    this.paymentIntents.clear()
    this.charges.clear()
    this.refunds.clear()
    this.events.clear()
    this.clockOffsetMs = 0
  }

  createCheckoutSession(params: FormObject, req: RequestInfo): CheckoutSession {
    const record = createSession(params, {
      nowS: this.nowS(),
      payUrl: this.options.payUrl,
      apiVersion: req.apiVersion ?? this.options.defaultApiVersion,
    })
    this.sessions.set(record.session.id, record)
    return record.session
  }

  getSession(id: string): SessionRecord {
    const record = this.sessions.get(id)
    if (!record) throw noSuch('checkout.session', id)
    return record
  }

  /** Pays an open session with a card number; declines throw a 402 card error and leave the session open. */
  pay(id: string, cardNumber: string, req: RequestInfo): { session: CheckoutSession; paymentIntent: PaymentIntent } {
    const record = this.getSession(id)
    this.requireOpen(record.session, 'paid')
    const card = cardNumber.replace(/[\s-]/g, '')
    checkCard(card)
    const { session } = record
    const now = this.nowS()
    const pi: PaymentIntent = {
      id: newId('pi'),
      object: 'payment_intent',
      amount: session.amount_total,
      amount_received: session.amount_total,
      created: now,
      currency: session.currency,
      description: record.paymentIntentData.description,
      latest_charge: newId('ch'),
      livemode: false,
      metadata: { ...record.paymentIntentData.metadata },
      payment_method_types: ['card'],
      status: 'succeeded',
    }
    const charge: Charge = {
      id: pi.latest_charge,
      object: 'charge',
      amount: pi.amount,
      amount_captured: pi.amount,
      amount_refunded: 0,
      billing_details: { email: session.customer_email, name: null },
      captured: true,
      created: now,
      currency: pi.currency,
      livemode: false,
      metadata: { ...pi.metadata },
      paid: true,
      payment_intent: pi.id,
      payment_method_details: { type: 'card', card: { brand: card.startsWith('5') ? 'mastercard' : 'visa', last4: card.slice(-4) } },
      refunded: false,
      status: 'succeeded',
    }
    this.paymentIntents.set(pi.id, pi)
    this.charges.set(charge.id, charge)
    Object.assign(session, {
      status: 'complete',
      payment_status: 'paid',
      payment_intent: pi.id,
      url: null,
      customer_details: { email: session.customer_email, name: null },
    } satisfies Partial<CheckoutSession>)
    this.emit('checkout.session.completed', session, req, record.apiVersion)
    return { session, paymentIntent: pi }
  }

  expire(id: string, req: RequestInfo): CheckoutSession {
    const record = this.getSession(id)
    this.requireOpen(record.session, 'expired')
    record.session.status = 'expired'
    record.session.url = null
    this.emit('checkout.session.expired', record.session, req, record.apiVersion)
    return record.session
  }

  /** Expires open sessions whose expires_at has passed (called on a timer). */
  expireDue(): number {
    const now = this.nowS()
    let count = 0
    for (const record of this.sessions.values()) {
      if (record.session.status === 'open' && record.session.expires_at <= now) {
        this.expire(record.session.id, { requestId: null, idempotencyKey: null, apiVersion: null })
        count++
      }
    }
    return count
  }

  createRefund(params: FormObject, req: RequestInfo): Refund {
    for (const key of Object.keys(params)) {
      if (!['payment_intent', 'charge', 'amount', 'reason', 'metadata', 'expand'].includes(key)) {
        throw invalid(`Received unknown parameter: ${key}`, key, 'parameter_unknown')
      }
    }
    const charge = this.chargeForRefund(params)
    const remaining = charge.amount - charge.amount_refunded
    if (remaining === 0) {
      throw invalid(`Charge ${charge.id} has already been refunded.`, undefined, 'charge_already_refunded')
    }
    const amount = integer(params, 'amount', undefined, 1) ?? remaining
    if (amount > remaining) {
      throw invalid(
        `Refund amount (${formatAmount(amount, charge.currency)}) is greater than unrefunded amount on charge (${formatAmount(remaining, charge.currency)})`,
        'amount', 'amount_too_large',
      )
    }
    const reason = str(params, 'reason') || null
    if (reason !== null && !REFUND_REASONS.has(reason)) {
      throw invalid(`Invalid reason: must be one of ${[...REFUND_REASONS].join(', ')}`, 'reason', 'parameter_invalid')
    }
    const refund: Refund = {
      id: newId('re'),
      object: 'refund',
      amount,
      charge: charge.id,
      created: this.nowS(),
      currency: charge.currency,
      metadata: metadata(params.metadata, 'metadata'),
      payment_intent: charge.payment_intent,
      reason,
      status: 'succeeded',
    }
    this.refunds.set(refund.id, refund)
    charge.amount_refunded += amount
    charge.refunded = charge.amount_refunded === charge.amount
    const apiVersion = req.apiVersion ?? this.options.defaultApiVersion
    this.emit('refund.created', refund, req, apiVersion)
    this.emit('charge.refunded', charge, req, apiVersion)
    return refund
  }

  getRefund(id: string): Refund {
    return found(this.refunds.get(id), 'refund', id)
  }

  getPaymentIntent(id: string): PaymentIntent {
    return found(this.paymentIntents.get(id), 'payment_intent', id)
  }

  getCharge(id: string): Charge {
    return found(this.charges.get(id), 'charge', id)
  }

  getEvent(id: string): EventRecord {
    return found(this.events.get(id), 'event', id)
  }

  private chargeForRefund(params: FormObject): Charge {
    const piId = str(params, 'payment_intent')
    const chargeId = str(params, 'charge')
    if (!piId && !chargeId) throw missingParam('payment_intent')
    if (piId && chargeId) throw invalid('Pass either charge or payment_intent, not both.', 'payment_intent', 'parameter_invalid')
    if (chargeId) {
      const charge = this.charges.get(chargeId)
      if (!charge) throw noSuch('charge', chargeId, 400, 'charge')
      return charge
    }
    const pi = this.paymentIntents.get(piId!)
    if (!pi) {
      // The fake makes a PaymentIntent only when a session is paid, so an unknown id is also an unpaid one.
      throw noSuch('payment_intent', piId!, 400, 'payment_intent')
    }
    return this.charges.get(pi.latest_charge)!
  }

  private requireOpen(session: CheckoutSession, wanted: string): void {
    if (session.status !== 'open') {
      throw invalid(
        `This Checkout Session cannot be ${wanted}: only sessions with status 'open' can, and it has status '${session.status}'.`,
        undefined, 'checkout_session_not_open',
      )
    }
  }

  private emit(type: string, object: unknown, req: RequestInfo, apiVersion: string): void {
    const event: StripeEvent = {
      id: newId('evt'),
      object: 'event',
      api_version: apiVersion,
      created: this.nowS(),
      // A snapshot, so later changes to the object do not rewrite what was sent.
      data: { object: structuredClone(object) },
      livemode: false,
      pending_webhooks: this.webhooks.config.url ? 1 : 0,
      request: { id: req.requestId, idempotency_key: req.idempotencyKey },
      type,
    }
    const record: EventRecord = { event, attempts: [], delivery: 'pending' }
    this.events.set(event.id, record)
    this.webhooks.dispatch(record)
  }
}

function found<T>(value: T | undefined, kind: string, id: string): T {
  if (value === undefined) throw noSuch(kind, id)
  return value
}

function checkCard(card: string): void {
  if (!/^\d{12,19}$/.test(card) || !luhn(card)) {
    throw new ApiError(402, { type: 'card_error', code: 'incorrect_number', message: 'Your card number is incorrect.', param: 'number' })
  }
  const decline = DECLINES[card]
  if (decline) {
    throw new ApiError(402, { type: 'card_error', code: decline.code, message: decline.message, ...(decline.decline_code && { decline_code: decline.decline_code }) })
  }
}

/** The Luhn check digit test (ISO/IEC 7812-1). */
export function luhn(digits: string): boolean {
  let sum = 0
  for (let i = 0; i < digits.length; i++) {
    let d = Number(digits[digits.length - 1 - i])
    if (i % 2 === 1) {
      d *= 2
      if (d > 9) d -= 9
    }
    sum += d
  }
  return sum % 10 === 0
}
