/** Minor units per major unit for a currency, as Intl knows it (e.g. gbp 2, jpy 0). */
export function fractionDigits(currency: string): number {
  try {
    return new Intl.NumberFormat('en', { style: 'currency', currency }).resolvedOptions().maximumFractionDigits ?? 2
  } catch {
    return 2
  }
}

/** Formats an amount in minor units for people, e.g. (1250, 'gbp') → '£12.50'. */
export function formatAmount(amount: number, currency: string): string {
  const digits = fractionDigits(currency)
  try {
    return new Intl.NumberFormat('en-GB', { style: 'currency', currency: currency.toUpperCase() }).format(amount / 10 ** digits)
  } catch {
    return `${(amount / 10 ** digits).toFixed(digits)} ${currency.toUpperCase()}`
  }
}

const KNOWN_CURRENCIES = new Set(Intl.supportedValuesOf('currency').map((c) => c.toLowerCase()))

export function isKnownCurrency(currency: string): boolean {
  return /^[a-z]{3}$/.test(currency) && KNOWN_CURRENCIES.has(currency)
}

// Smallest charge Stripe accepts in a few settlement currencies (minor units; from memory of
// Stripe's published minimums). Other currencies fall back to 50 minor units.
const MINIMUM_CHARGE: Record<string, number> = { gbp: 30, usd: 50, eur: 50, cad: 50, aud: 50, chf: 50, jpy: 50 }

export function minimumCharge(currency: string): number {
  return MINIMUM_CHARGE[currency] ?? 50
}

/** Stripe's ceiling for one charge: eight digits of minor units (from memory). */
export const MAXIMUM_CHARGE = 99_999_999
