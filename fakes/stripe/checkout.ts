import { invalid, missingParam } from './errors'
import type { FormObject, FormValue } from './form'
import { newId } from './ids'
import { formatAmount, isKnownCurrency, MAXIMUM_CHARGE, minimumCharge } from './money'

export interface LineItem {
  id: string
  object: 'item'
  amount_discount: number
  amount_subtotal: number
  amount_tax: number
  amount_total: number
  currency: string
  description: string
  price: {
    id: string
    object: 'price'
    active: boolean
    currency: string
    product: string
    type: 'one_time'
    unit_amount: number
    unit_amount_decimal: string
  }
  quantity: number
}

/** The fields of a Checkout Session object that the fake fills in (Stripe's JSON names). */
export interface CheckoutSession {
  id: string
  object: 'checkout.session'
  amount_subtotal: number
  amount_total: number
  cancel_url: string | null
  client_reference_id: string | null
  created: number
  currency: string
  customer: null
  customer_details: { email: string | null; name: string | null } | null
  customer_email: string | null
  expires_at: number
  livemode: false
  locale: string | null
  metadata: Record<string, string>
  mode: 'payment'
  payment_intent: string | null
  payment_method_types: string[]
  payment_status: 'unpaid' | 'paid'
  status: 'open' | 'complete' | 'expired'
  success_url: string
  total_details: { amount_discount: number; amount_shipping: number; amount_tax: number }
  ui_mode: 'hosted'
  url: string | null
}

/** What the fake keeps beside a session: its line items and options for the payment intent. */
export interface SessionRecord {
  session: CheckoutSession
  lineItems: LineItem[]
  paymentIntentData: { metadata: Record<string, string>; description: string | null }
  apiVersion: string
}

// Parameters a Kitwright-sized integration may send that change nothing in the fake.
const ACCEPTED_WITHOUT_EFFECT = new Set([
  'locale', 'submit_type', 'billing_address_collection', 'allow_promotion_codes', 'payment_method_types',
  'customer_creation', 'phone_number_collection', 'custom_text', 'consent_collection', 'automatic_tax',
  'invoice_creation', 'ui_mode', 'expand',
])
const SUPPORTED = new Set([
  'mode', 'line_items', 'success_url', 'cancel_url', 'client_reference_id', 'customer_email', 'metadata',
  'expires_at', 'payment_intent_data',
])

const MIN_EXPIRY_S = 30 * 60
const MAX_EXPIRY_S = 24 * 60 * 60

export interface CreateSessionContext {
  nowS: number
  payUrl: (id: string) => string
  apiVersion: string
}

/** Validates `POST /v1/checkout/sessions` parameters the way Stripe does for the parts used, and builds the record. */
export function createSession(params: FormObject, ctx: CreateSessionContext): SessionRecord {
  for (const key of Object.keys(params)) {
    if (!SUPPORTED.has(key) && !ACCEPTED_WITHOUT_EFFECT.has(key)) {
      throw invalid(`Received unknown parameter: ${key}`, key, 'parameter_unknown')
    }
  }
  const mode = str(params, 'mode')
  if (mode === undefined) throw missingParam('mode')
  if (mode !== 'payment') throw invalid(`The local fake supports mode=payment only, not '${mode}'.`, 'mode', 'parameter_invalid')
  if (params.ui_mode !== undefined && params.ui_mode !== 'hosted') {
    throw invalid('The local fake supports ui_mode=hosted only.', 'ui_mode', 'parameter_invalid')
  }
  const successUrl = url(params, 'success_url', true)!
  const cancelUrl = url(params, 'cancel_url', false)
  const lineItems = parseLineItems(params.line_items)
  const currency = lineItems[0]!.currency
  const total = lineItems.reduce((sum, li) => sum + li.amount_total, 0)
  if (total < minimumCharge(currency)) {
    throw invalid(
      `The Checkout Session's total amount due must add up to at least ${formatAmount(minimumCharge(currency), currency)}.`,
      'line_items', 'amount_too_small',
    )
  }
  if (total > MAXIMUM_CHARGE) {
    throw invalid(`The Checkout Session's total amount due must be no more than ${MAXIMUM_CHARGE} minor units.`, 'line_items', 'amount_too_large')
  }
  const id = newId('cs_test', 58)
  return {
    session: {
      id,
      object: 'checkout.session',
      amount_subtotal: total,
      amount_total: total,
      cancel_url: cancelUrl ?? null,
      client_reference_id: shortString(params, 'client_reference_id', 200) ?? null,
      created: ctx.nowS,
      currency,
      customer: null,
      customer_details: null,
      customer_email: email(params, 'customer_email') ?? null,
      expires_at: expiresAt(params, ctx.nowS),
      livemode: false,
      locale: str(params, 'locale') ?? null,
      metadata: metadata(params.metadata, 'metadata'),
      mode: 'payment',
      payment_intent: null,
      payment_method_types: ['card'],
      payment_status: 'unpaid',
      status: 'open',
      success_url: successUrl,
      total_details: { amount_discount: 0, amount_shipping: 0, amount_tax: 0 },
      ui_mode: 'hosted',
      url: ctx.payUrl(id),
    },
    lineItems,
    paymentIntentData: paymentIntentData(params.payment_intent_data),
    apiVersion: ctx.apiVersion,
  }
}

function parseLineItems(value: FormValue | undefined): LineItem[] {
  if (value === undefined) throw missingParam('line_items')
  if (!Array.isArray(value) || value.length === 0) {
    throw invalid('line_items must be a non-empty list.', 'line_items', 'parameter_invalid_empty')
  }
  if (value.length > 100) throw invalid('line_items can hold at most 100 items.', 'line_items', 'parameter_invalid')
  const items = value.map((raw, i) => parseLineItem(raw, `line_items[${i}]`))
  const currency = items[0]!.currency
  const other = items.find((li) => li.currency !== currency)
  if (other) {
    throw invalid(`All line_items must use the same currency; found '${currency}' and '${other.currency}'.`, 'line_items', 'parameter_invalid')
  }
  return items
}

function parseLineItem(raw: FormValue, at: string): LineItem {
  if (typeof raw !== 'object' || Array.isArray(raw)) throw invalid(`Invalid object for ${at}.`, at, 'parameter_invalid')
  if (raw.price !== undefined) {
    throw invalid(`The local fake does not keep Price objects: send ${at}[price_data] instead of ${at}[price].`, `${at}[price]`, 'parameter_invalid')
  }
  const pd = raw.price_data
  if (pd === undefined) throw missingParam(`${at}[price_data]`)
  if (typeof pd !== 'object' || Array.isArray(pd)) throw invalid(`Invalid object for ${at}[price_data].`, `${at}[price_data]`)
  const currency = str(pd, 'currency', `${at}[price_data]`)?.toLowerCase()
  if (currency === undefined) throw missingParam(`${at}[price_data][currency]`)
  if (!isKnownCurrency(currency)) throw invalid(`Invalid currency: ${currency}.`, `${at}[price_data][currency]`, 'parameter_invalid')
  const unitAmount = integer(pd, 'unit_amount', `${at}[price_data]`, 0)
  if (unitAmount === undefined) throw missingParam(`${at}[price_data][unit_amount]`)
  const product = pd.product_data
  if (product === undefined) throw missingParam(`${at}[price_data][product_data]`)
  if (typeof product !== 'object' || Array.isArray(product)) throw invalid(`Invalid object for ${at}[price_data][product_data].`, `${at}[price_data][product_data]`)
  const name = str(product, 'name', `${at}[price_data][product_data]`)
  if (!name) throw missingParam(`${at}[price_data][product_data][name]`)
  const quantity = integer(raw, 'quantity', at, 1)
  if (quantity === undefined) throw missingParam(`${at}[quantity]`)
  if (quantity > 999_999) throw invalid(`${at}[quantity] must be at most 999999.`, `${at}[quantity]`, 'parameter_invalid_integer')
  const amount = unitAmount * quantity
  return {
    id: newId('li'),
    object: 'item',
    amount_discount: 0,
    amount_subtotal: amount,
    amount_tax: 0,
    amount_total: amount,
    currency,
    description: name,
    price: {
      id: newId('price'),
      object: 'price',
      active: false,
      currency,
      product: newId('prod', 14),
      type: 'one_time',
      unit_amount: unitAmount,
      unit_amount_decimal: String(unitAmount),
    },
    quantity,
  }
}

function paymentIntentData(value: FormValue | undefined): SessionRecord['paymentIntentData'] {
  if (value === undefined) return { metadata: {}, description: null }
  if (typeof value !== 'object' || Array.isArray(value)) throw invalid('Invalid object for payment_intent_data.', 'payment_intent_data')
  for (const key of Object.keys(value)) {
    if (key !== 'metadata' && key !== 'description') {
      throw invalid(`Received unknown parameter: payment_intent_data[${key}]`, `payment_intent_data[${key}]`, 'parameter_unknown')
    }
  }
  return {
    metadata: metadata(value.metadata, 'payment_intent_data[metadata]'),
    description: shortString(value, 'description', 1000, 'payment_intent_data') ?? null,
  }
}

function expiresAt(params: FormObject, nowS: number): number {
  const value = integer(params, 'expires_at', undefined, 0)
  if (value === undefined) return nowS + MAX_EXPIRY_S
  if (value < nowS + MIN_EXPIRY_S || value > nowS + MAX_EXPIRY_S) {
    throw invalid(
      'The `expires_at` timestamp must be between 30 minutes and 24 hours after the Checkout Session is created.',
      'expires_at', 'parameter_invalid_integer',
    )
  }
  return value
}

/** Metadata as Stripe limits it: at most 50 keys, keys up to 40 characters, values up to 500; '' unsets. */
export function metadata(value: FormValue | undefined, param: string): Record<string, string> {
  if (value === undefined || value === '') return {}
  if (typeof value !== 'object' || Array.isArray(value)) throw invalid(`Invalid object for ${param}.`, param, 'parameter_invalid')
  const out: Record<string, string> = {}
  for (const [key, v] of Object.entries(value)) {
    if (typeof v !== 'string') throw invalid(`Metadata values must be strings: ${param}[${key}].`, `${param}[${key}]`)
    if (key.length > 40) throw invalid(`Metadata keys can be at most 40 characters: '${key}'.`, `${param}[${key}]`)
    if (v.length > 500) throw invalid(`Metadata values can be at most 500 characters: ${param}[${key}].`, `${param}[${key}]`)
    if (v !== '') out[key] = v
  }
  if (Object.keys(out).length > 50) throw invalid('Metadata can hold at most 50 keys.', param)
  return out
}

function name(key: string, parent?: string): string {
  return parent ? `${parent}[${key}]` : key
}

export function str(obj: FormObject, key: string, parent?: string): string | undefined {
  const v = obj[key]
  if (v === undefined) return undefined
  if (typeof v !== 'string') throw invalid(`Invalid string: ${name(key, parent)} must be a single value.`, name(key, parent), 'parameter_invalid_string')
  return v
}

/** An integer parameter (sent as text by the SDK), at least `min`. */
export function integer(obj: FormObject, key: string, parent: string | undefined, min: number): number | undefined {
  const v = str(obj, key, parent)
  if (v === undefined) return undefined
  const param = name(key, parent)
  if (!/^-?\d+$/.test(v.trim())) throw invalid(`Invalid integer: ${v}`, param, 'parameter_invalid_integer')
  const n = Number(v.trim())
  if (!Number.isSafeInteger(n)) throw invalid(`Invalid integer: ${v}`, param, 'parameter_invalid_integer')
  if (n < min) throw invalid(`This value must be greater than or equal to ${min}.`, param, 'parameter_invalid_integer')
  return n
}

function shortString(obj: FormObject, key: string, max: number, parent?: string): string | undefined {
  const v = str(obj, key, parent)
  if (v === undefined || v === '') return undefined
  if (v.length > max) throw invalid(`${name(key, parent)} can be at most ${max} characters.`, name(key, parent), 'parameter_invalid_string')
  return v
}

function url(obj: FormObject, key: string, required: boolean): string | undefined {
  const v = str(obj, key)
  if (v === undefined || v === '') {
    if (required) throw missingParam(key)
    return undefined
  }
  let parsed: URL
  try {
    parsed = new URL(v.replaceAll('{CHECKOUT_SESSION_ID}', 'x'))
  } catch {
    throw invalid('Not a valid URL', key, 'url_invalid')
  }
  if (parsed.protocol !== 'http:' && parsed.protocol !== 'https:') throw invalid('Not a valid URL', key, 'url_invalid')
  return v
}

function email(obj: FormObject, key: string): string | undefined {
  const v = str(obj, key)
  if (v === undefined || v === '') return undefined
  if (!/^[^\s@]+@[^\s@]+\.[^\s@]+$/.test(v)) throw invalid(`Invalid email address: ${v}`, key, 'email_invalid')
  return v
}
