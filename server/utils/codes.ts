import { createHmac, randomInt, timingSafeEqual } from 'node:crypto'

/**
 * Signed label codes.
 *
 * A label carries a token `CODE-SIG`: the bag's or bin's code, a dash, and an 8-character signature.
 *   bag  B7K3QX-9F2KD8A3   code = 'B' + 5 characters of CODE_ALPHABET (crypto random)
 *   bin  A-03-7KQ2M9XH     code = the organiser's own bin code (letters, digits, inner dashes)
 * SIG = HMAC-SHA256(secret, `${kind}:${CODE}`), its first 8 bytes written as 8 base-31 digits of
 * CODE_ALPHABET (about 39 bits). The kind is inside the HMAC, so a bag token never verifies as a bin.
 * The QR holds a URL `${baseUrl}/b/<token>` for a bag and `${baseUrl}/n/<token>` for a bin; the token
 * alone is printed under the QR for typing. Reading is case-insensitive.
 */

export type CodeKind = 'bag' | 'bin'
export type ScanResult = { kind: CodeKind; code: string } | { error: string }

/** No 0/O, 1/I/L: nothing a person can misread on a label. */
export const CODE_ALPHABET = '23456789ABCDEFGHJKMNPQRSTUVWXYZ'
export const BAG_PREFIX = 'B'
export const SIG_LENGTH = 8
export const MAX_SCAN_LENGTH = 200
const MIN_SECRET_LENGTH = 16

const BAG_CODE = new RegExp(`^${BAG_PREFIX}[${CODE_ALPHABET}]{5}$`)
const BIN_CODE = /^[A-Z0-9](?:[A-Z0-9-]{0,14}[A-Z0-9])?$/
const KIND_SEGMENT: Record<CodeKind, string> = { bag: 'b', bin: 'n' }

export const SIGNATURE_MISMATCH = "this label's signature does not match: it may be mistyped or forged"

/** A new random bag code such as `B7K3QX`; uniqueness is the database's job (retry on a duplicate). */
export function newBagCode(): string {
  let code = BAG_PREFIX
  for (let i = 0; i < 5; i++) code += CODE_ALPHABET[randomInt(CODE_ALPHABET.length)]
  return code
}

export function isBagCode(code: string): boolean {
  return BAG_CODE.test(code)
}

/** Bin codes are 1–16 letters, digits and inner dashes, upper-cased: `A-03`, `SHELF2-B`. */
export function isBinCode(code: string): boolean {
  return BIN_CODE.test(code)
}

/** The token printed on a label: `CODE-SIG`. Throws on a code of the wrong shape or a missing secret. */
export function signCode(kind: CodeKind, code: string, secret: string): string {
  const normal = normaliseCode(kind, code)
  return `${normal}-${signature(kind, normal, secret)}`
}

/** The URL put in the QR code: `${baseUrl}/b/<token>` or `${baseUrl}/n/<token>` (baseUrl '' gives a path). */
export function labelUrl(baseUrl: string, kind: CodeKind, code: string, secret: string): string {
  const base = baseUrl.trim().replace(/\/+$/, '')
  if (base !== '' && !/^https?:\/\/[^/\s]+(\/\S*)?$/i.test(base))
    throw new Error(`the label base URL must start with http:// or https:// (got "${baseUrl}")`)
  return `${base}/${KIND_SEGMENT[kind]}/${signCode(kind, code, secret)}`
}

/**
 * Reads what a scanner or a camera gives: a full URL (any host, any path before /b/ or /n/),
 * a path, or the bare token. Only a verified signature yields a code.
 */
export function readScan(text: string, secret: string): ScanResult {
  checkSecret(secret)
  if (typeof text !== 'string') return { error: 'nothing was scanned' }
  if (text.length > MAX_SCAN_LENGTH)
    return { error: `the scanned text is too long (over ${MAX_SCAN_LENGTH} characters): this is not a Kitwright label` }
  const input = text.trim()
  if (input === '') return { error: 'nothing was scanned' }

  const located = locateToken(input)
  if (!located) return { error: 'this is not a Kitwright label code' }
  const token = parseToken(located.token)
  if (!token) return { error: 'this is not a Kitwright label code' }

  const kinds: CodeKind[] = located.kind ? [located.kind] : ['bag', 'bin']
  const shaped = kinds.filter(k => (k === 'bag' ? isBagCode(token.code) : isBinCode(token.code)))
  if (shaped.length === 0) return { error: 'this is not a Kitwright label code' }
  for (const kind of shaped) {
    if (sameText(signature(kind, token.code, secret), token.sig)) return { kind, code: token.code }
  }
  return { error: SIGNATURE_MISMATCH }
}

/** True when someone typed only the code (e.g. `B7K3QX`, `A-03`) without the signature after it. */
export function looksLikeBareCode(text: string): boolean {
  const code = text.trim().toUpperCase()
  if (isBagCode(code)) return true
  return isBinCode(code) && parseToken(code) === null
}

function normaliseCode(kind: CodeKind, code: string): string {
  const normal = code.trim().toUpperCase()
  if (kind === 'bag' && !isBagCode(normal))
    throw new Error(`"${code}" is not a bag code (expected ${BAG_PREFIX} and 5 characters, e.g. B7K3QX)`)
  if (kind === 'bin' && !isBinCode(normal))
    throw new Error(`"${code}" is not a bin code (1–16 letters, digits and inner dashes, e.g. A-03)`)
  return normal
}

function checkSecret(secret: string): void {
  if (typeof secret !== 'string' || secret.length < MIN_SECRET_LENGTH)
    throw new Error(`the label signing secret must be at least ${MIN_SECRET_LENGTH} characters`)
}

function signature(kind: CodeKind, code: string, secret: string): string {
  checkSecret(secret)
  const mac = createHmac('sha256', secret).update(`${kind}:${code}`).digest()
  let n = mac.readBigUInt64BE(0)
  const base = BigInt(CODE_ALPHABET.length)
  let sig = ''
  for (let i = 0; i < SIG_LENGTH; i++) {
    sig = CODE_ALPHABET[Number(n % base)] + sig
    n /= base
  }
  return sig
}

function sameText(a: string, b: string): boolean {
  const x = Buffer.from(a)
  const y = Buffer.from(b)
  return x.length === y.length && timingSafeEqual(x, y)
}

/** Finds the token and, in a URL or path, the kind segment before it. */
function locateToken(input: string): { kind?: CodeKind; token: string } | null {
  const path = input.replace(/^[a-z][a-z0-9+.-]*:\/\/[^/?#]*/i, '').replace(/[?#].*$/s, '')
  const match = /(?:^|\/)([bn])\/([^/]+)\/?$/i.exec(path)
  if (match) {
    let token: string
    try {
      token = decodeURIComponent(match[2]!)
    }
    catch {
      return null
    }
    return { kind: match[1]!.toLowerCase() === 'b' ? 'bag' : 'bin', token }
  }
  if (path.includes('/') || path !== input) return null
  return { token: input }
}

function parseToken(token: string): { code: string; sig: string } | null {
  const match = /^(.+?)(?:[-.]|\s+)([A-Z0-9]{8})$/.exec(token.trim().toUpperCase())
  return match ? { code: match[1]!, sig: match[2]! } : null
}
