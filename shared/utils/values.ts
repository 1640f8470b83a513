/**
 * Component values: reading and writing them the ways the trade does (SI prefixes,
 * IEC 60062 letter-and-digit codes, colour bands, capacitor and SMD codes) and the
 * IEC 60063 preferred-value series. Pure: no imports, safe in client, server and tests.
 *
 * Conventions (decided here, relied on elsewhere):
 * - Values are numbers in base SI units; unit symbols are 'Ω', 'F', 'H', 'Hz', 'V', 'W', 'A'
 *   ('' when neither the text nor the kind tells).
 * - A letter straight after the number is a prefix, not a tolerance: `47K` is 47 kΩ, `47G` is
 *   47 GΩ. Tolerance letters are upper case and come last: `4K7J`, `47KJ`, `100nK`.
 * - An upper-case `F` after R k M G T, or after a bare number for a resistor, is the 1 %
 *   tolerance letter (`4K7F`, `470F`); after p n u m, or for a capacitor, it is farads (`100nF`).
 * - `R` as a decimal point means ohms, so `4R7` for a capacitor is refused rather than guessed.
 * - Tolerance letter Z (+80/−20 %) is reported as its wider side, 80.
 * - Letter codes (toLetterCode): the letter replaces the decimal point; ohms use R k M G T
 *   (lower-case k, as in SI), farads and henries p n u m and F/H, hertz k M G, volts, watts
 *   and amperes m, V/W/A, k. A one-digit whole mantissa gets a trailing 0 (`1k0`, `1u0`), a
 *   longer one ends with the letter (`10k`, `470R`, `100n`), one below 1 starts with it (`R47`).
 */

export type ValueKind = 'resistor' | 'capacitor' | 'inductor' | 'crystal'
export interface ParsedValue { value: number; unit: string; tolerance?: number }
export type SeriesName = 'E3' | 'E6' | 'E12' | 'E24' | 'E48' | 'E96' | 'E192'

const KIND_UNIT: Record<string, string> = { resistor: 'Ω', capacitor: 'F', inductor: 'H', crystal: 'Hz' }
const UNIT_WORD: Record<string, string> = { 'Ω': 'resistance', F: 'capacitance', H: 'inductance', Hz: 'frequency', V: 'voltage', W: 'power', A: 'current' }

/** The unit a kind's values are in ('Ω' for resistor …), or undefined for other kinds. */
export function unitForKind(kind?: string | null): string | undefined {
  return kind ? KIND_UNIT[kind] : undefined
}

/** Two values are the same part value when they differ by no more than 1e-9 relative. */
export function sameValue(a: number, b: number): boolean {
  if (a === b) return true
  return Math.abs(a - b) <= 1e-9 * Math.max(Math.abs(a), Math.abs(b))
}

/** IEC 60062 tolerance letters, in percent. */
export const TOLERANCE_LETTERS: Readonly<Record<string, { plus: number; minus: number }>> = {
  B: { plus: 0.1, minus: 0.1 },
  C: { plus: 0.25, minus: 0.25 },
  D: { plus: 0.5, minus: 0.5 },
  F: { plus: 1, minus: 1 },
  G: { plus: 2, minus: 2 },
  J: { plus: 5, minus: 5 },
  K: { plus: 10, minus: 10 },
  M: { plus: 20, minus: 20 },
  Z: { plus: 80, minus: 20 },
}

// ---------------------------------------------------------------------------------------
// Parsing

const PREFIX_EXP: Record<string, number> = {
  p: -12, P: -12, n: -9, N: -9, u: -6, U: -6, m: -3, k: 3, K: 3, M: 6, G: 9, T: 12,
}
const UNIT_RE = '(Ω|[Oo][Hh][Mm][Ss]?|[Hh][Zz]|[FfHhVvWwAa])'
const TOL_RE = '([BCDFGJKMZ])'
const DECIMAL_RE = new RegExp(`^(\\d+(?:\\.\\d*)?|\\.\\d+)(?:[eE]([+-]?\\d+))?\\s*([pPnNuUmkKMGT])?${UNIT_RE}?\\s*${TOL_RE}?$`)
const RKM_RE = new RegExp(`^(\\d*)([RrpPnNuUmkKMGTFHVWA])(\\d+)\\s*${UNIT_RE}?\\s*${TOL_RE}?$`)
const RKM_R_END_RE = new RegExp(`^(\\d+)[Rr]\\s*${TOL_RE}?$`)
const FRACTION_RE = new RegExp(`^(\\d+)\\s*/\\s*(\\d+)\\s*${UNIT_RE}?$`)
const WHOLE_UNIT_MARKERS: Record<string, string> = { R: 'Ω', r: 'Ω', F: 'F', H: 'H', V: 'V', W: 'W', A: 'A' }
const RESISTANCE_MARKERS = new Set(['R', 'r', 'k', 'K', 'M', 'G', 'T'])

const canonicalCache = new Map<string, string>()
function canonicalUnit(token: string): string {
  let u = canonicalCache.get(token)
  if (u === undefined) {
    const t = token.toLowerCase()
    u = token === 'Ω' || t.startsWith('ohm') ? 'Ω' : t === 'hz' ? 'Hz' : t.toUpperCase()
    canonicalCache.set(token, u)
  }
  return u
}

const MICRO_OR_OHM_SIGN = /[\u00B5\u03BC\u2126]/
function normaliseText(text: string): string {
  const s = text.trim()
  return MICRO_OR_OHM_SIGN.test(s) ? s.replace(/[\u00B5\u03BC]/g, 'u').replace(/\u2126/g, 'Ω') : s
}

function fail(text: string, why: string): never {
  throw new Error(`"${text}" is not a value: ${why}`)
}

const GENERIC_HELP = 'write a number with an optional prefix and unit (4.7k, 100nF, 7.030 MHz) or a letter code (4k7, R47, 4n7)'

interface Pieces { mantissa: string; exp: number; unitToken?: string; marker?: string; tol?: string }

function splitPieces(s: string, text: string): Pieces | null {
  // The three shapes never overlap, so the commonest is tried first.
  let m = DECIMAL_RE.exec(s)
  if (m) {
    const [, num, e, prefix, unitToken, tol] = m
    return { mantissa: num!, exp: Number(e ?? 0) + (prefix ? PREFIX_EXP[prefix]! : 0), unitToken, marker: prefix, tol }
  }
  m = RKM_RE.exec(s)
  if (m) {
    const [, lead, marker, trail, unitToken, tol] = m
    if (!lead && WHOLE_UNIT_MARKERS[marker!] && marker !== 'R' && marker !== 'r') fail(text, `a code cannot start with ${marker}`)
    return { mantissa: `${lead || '0'}.${trail}`, exp: PREFIX_EXP[marker!] ?? 0, unitToken, marker, tol }
  }
  m = RKM_R_END_RE.exec(s)
  if (m) return { mantissa: m[1]!, exp: 0, marker: 'R', tol: m[2] }
  return null
}

/** An upper-case F after a number is farads or the 1 % tolerance letter; decide which. */
function fIsTolerance(marker: string | undefined, kind: string | undefined): boolean {
  if (kind === 'capacitor') return false
  if (marker !== undefined) return RESISTANCE_MARKERS.has(marker)
  return kind === 'resistor'
}

function resolveUnit(text: string, written: string | undefined, fromMarker: string | undefined, kind: string | undefined): string {
  const kindUnit = unitForKind(kind)
  const stated = written ?? fromMarker
  if (written && fromMarker && written !== fromMarker) fail(text, `the letter code says ${fromMarker} but the unit says ${written}`)
  if (stated && kindUnit && stated !== kindUnit) {
    fail(text, `it is a ${UNIT_WORD[stated] ?? stated} (${stated}) but a ${kind} needs ${kindUnit}`)
  }
  return stated ?? kindUnit ?? ''
}

/**
 * Reads a value as people write it: `4.7k`, `4.7 kΩ`, `4700`, `100nF`, `0.1uF`, `10µH`,
 * `7.030 MHz`, `1/4W`, and IEC 60062 letter codes `4k7`, `R47`, `4R7`, `2M2`, `4n7`, `1u0`
 * with an optional tolerance letter (`4K7J`). The kind gives the unit when none is written.
 * Throws an Error saying what is wrong for anything else.
 */
export function parseValue(text: string, kind?: ValueKind | string): ParsedValue {
  if (typeof text !== 'string') throw new Error('A value must be text')
  const s = normaliseText(text)
  if (!s) throw new Error('The value is empty')
  if (s[0] === '-' || s[0] === '\u2212') fail(text, 'values cannot be negative')
  if (s.includes(',')) fail(text, 'use a point for decimals (4.7k) or a letter code (4k7)')

  const frac = s.includes('/') ? FRACTION_RE.exec(s) : null
  if (frac) {
    const [num, den] = [Number(frac[1]), Number(frac[2])]
    if (den === 0) fail(text, 'division by zero')
    const unit = resolveUnit(text, frac[3] ? canonicalUnit(frac[3]) : undefined, undefined, kind)
    return { value: num / den, unit }
  }

  const p = splitPieces(s, text)
  if (!p) fail(text, GENERIC_HELP)

  let unitToken = p.unitToken
  let tol = p.tol
  if (unitToken === 'F' && !tol && fIsTolerance(p.marker, kind)) {
    unitToken = undefined
    tol = 'F'
  }
  if (unitToken && unitToken !== 'Hz' && canonicalUnit(unitToken) === 'Hz' && p.marker === 'm') {
    fail(text, 'write MHz for megahertz (mHz would be millihertz)')
  }
  const fromMarker = p.marker && p.exp === 0 ? WHOLE_UNIT_MARKERS[p.marker] : undefined
  const unit = resolveUnit(text, unitToken ? canonicalUnit(unitToken) : undefined, fromMarker, kind)

  const value = Number(`${p.mantissa}e${p.exp}`)
  if (!Number.isFinite(value)) fail(text, 'the number is too large')
  if (value === 0 && /[1-9]/.test(p.mantissa)) fail(text, 'the number is too small')

  const out: ParsedValue = { value, unit }
  if (tol) out.tolerance = TOLERANCE_LETTERS[tol]!.plus
  return out
}

// ---------------------------------------------------------------------------------------
// Writing

const ENG_PREFIXES: [number, string][] = [
  [-12, 'p'], [-9, 'n'], [-6, 'µ'], [-3, 'm'], [0, ''], [3, 'k'], [6, 'M'], [9, 'G'], [12, 'T'],
]

function roundSig(x: number, digits = 12): number {
  return Number(x.toPrecision(digits))
}

function scale(x: number, exp: number): number {
  return exp >= 0 ? x / 10 ** exp : x * 10 ** -exp
}

/** `4700, 'Ω'` → `"4.7 kΩ"`; engineering prefixes, no padding zeros, as many digits as the value needs. */
export function formatValue(value: number, unit: string): string {
  if (!Number.isFinite(value)) throw new Error(`Cannot format ${value} as a value`)
  if (value === 0) return unit ? `0 ${unit}` : '0'
  const sign = value < 0 ? '-' : ''
  // Rounding first keeps 0.99999999999995 from landing between two prefixes.
  const abs = roundSig(Math.abs(value))
  let i = Math.floor(Math.log10(abs) / 3) + 4
  i = Math.min(Math.max(i, 0), ENG_PREFIXES.length - 1)
  let m = roundSig(scale(abs, ENG_PREFIXES[i]![0]))
  if (m >= 1000 && i < ENG_PREFIXES.length - 1) m = roundSig(scale(abs, ENG_PREFIXES[++i]![0]))
  else if (m < 1 && i > 0) {
    const lower = roundSig(scale(abs, ENG_PREFIXES[i - 1]![0]))
    if (lower < 1000) { m = lower; i-- }
  }
  const suffix = `${ENG_PREFIXES[i]![1]}${unit}`
  return suffix ? `${sign}${m} ${suffix}` : `${sign}${m}`
}

const LETTER_MARKERS: Record<string, [number, string][]> = {
  'Ω': [[0, 'R'], [3, 'k'], [6, 'M'], [9, 'G'], [12, 'T']],
  F: [[-12, 'p'], [-9, 'n'], [-6, 'u'], [-3, 'm'], [0, 'F']],
  H: [[-12, 'p'], [-9, 'n'], [-6, 'u'], [-3, 'm'], [0, 'H']],
  Hz: [[3, 'k'], [6, 'M'], [9, 'G']],
  V: [[-3, 'm'], [0, 'V'], [3, 'k']],
  W: [[-3, 'm'], [0, 'W'], [3, 'k']],
  A: [[-3, 'm'], [0, 'A'], [3, 'k']],
}

/** The IEC 60062 letter-and-digit code: `4700, 'Ω'` → `"4k7"`, `4.7e-9, 'F'` → `"4n7"` (see the conventions above). */
export function toLetterCode(value: number, unit: string): string {
  const markers = LETTER_MARKERS[unit]
  if (!markers) throw new Error(`No letter code for unit "${unit}"`)
  if (!Number.isFinite(value) || value < 0) throw new Error(`Cannot write ${value} as a letter code`)
  if (value === 0) return `0${markers[0]![1]}`
  value = roundSig(value)
  let i = 0
  while (i + 1 < markers.length && value >= 10 ** markers[i + 1]![0]) i++
  let m = roundSig(scale(value, markers[i]![0]))
  if (m >= 1000 && i + 1 < markers.length) m = roundSig(scale(value, markers[++i]![0]))
  const digits = String(m)
  if (digits.includes('e')) throw new Error(`${formatValue(value, unit)} is out of range for a letter code`)
  const letter = markers[i]![1]
  const [whole, frac] = digits.split('.') as [string, string | undefined]
  if (!frac) return whole.length === 1 ? `${whole}${letter}0` : `${whole}${letter}`
  return `${whole === '0' ? '' : whole}${letter}${frac}`
}

// ---------------------------------------------------------------------------------------
// Colour bands (IEC 60062)

const DIGIT_COLOURS = ['black', 'brown', 'red', 'orange', 'yellow', 'green', 'blue', 'violet', 'grey', 'white']
const MULTIPLIER_EXP: Record<string, number> = { pink: -3, silver: -2, gold: -1 }
DIGIT_COLOURS.forEach((c, i) => { MULTIPLIER_EXP[c] = i })
/** Tolerance band colours in percent; where two colours share a tolerance the first is written. */
const TOLERANCE_COLOURS: [string, number][] = [
  ['brown', 1], ['red', 2], ['green', 0.5], ['blue', 0.25], ['violet', 0.1], ['grey', 0.05],
  ['orange', 0.05], ['yellow', 0.02], ['gold', 5], ['silver', 10],
]
const COLOUR_ALIASES: Record<string, string> = { gray: 'grey', purple: 'violet' }

function colourName(band: string): string {
  const c = String(band).trim().toLowerCase()
  return COLOUR_ALIASES[c] ?? c
}

/** True when the word names a colour used on resistor bands (grey/gray, any case). */
export function isColourName(word: string): boolean {
  const c = colourName(word)
  return DIGIT_COLOURS.includes(c) || c in MULTIPLIER_EXP
}

/** Reads 3-band (±20 %), 4-band and 5-band resistor colour codes, first band first. */
export function decodeColourBands(bands: string[]): { value: number; tolerance: number } {
  if (!Array.isArray(bands) || bands.length < 3 || bands.length > 5) {
    throw new Error('Give 3, 4 or 5 colour bands')
  }
  const names = bands.map(colourName)
  const unknown = names.find((c) => !isColourName(c))
  if (unknown !== undefined) throw new Error(`"${unknown}" is not a resistor band colour`)
  const nDigits = names.length === 5 ? 3 : 2
  const digits = names.slice(0, nDigits).map((c, i) => {
    const d = DIGIT_COLOURS.indexOf(c)
    if (d < 0) throw new Error(`Band ${i + 1} is ${c}, which is not a digit colour`)
    return d
  })
  if (digits[0] === 0) throw new Error('The first band cannot be black: read the resistor from the other end')
  const multiplier = names[nDigits]!
  const exp = MULTIPLIER_EXP[multiplier]
  if (exp === undefined) throw new Error(`Band ${nDigits + 1} is ${multiplier}, which is not a multiplier colour`)
  let tolerance = 20
  if (names.length > 3) {
    const tc = names[names.length - 1]!
    const hit = TOLERANCE_COLOURS.find(([c]) => c === tc)
    if (!hit) throw new Error(`The last band is ${tc}, which is not a tolerance colour`)
    tolerance = hit[1]
  }
  return { value: Number(`${digits.join('')}e${exp}`), tolerance }
}

/** Writes a resistance as 4 bands (2 digits) or 5 bands (3 digits) with a tolerance band. */
export function encodeColourBands(ohms: number, tolerancePct: number, bands: 4 | 5): string[] {
  if (bands !== 4 && bands !== 5) throw new Error('Colour codes are written with 4 or 5 bands')
  if (!Number.isFinite(ohms) || ohms <= 0) throw new Error(`Cannot write ${ohms} Ω in colour bands`)
  const tol = TOLERANCE_COLOURS.find(([, t]) => sameValue(t, tolerancePct))
  if (!tol) throw new Error(`No tolerance band colour for ${tolerancePct} %`)
  const n = bands - 2
  let exp = Math.floor(Math.log10(ohms)) - (n - 1)
  let digits = Math.round(scale(ohms, exp))
  if (digits >= 10 ** n) digits = Math.round(scale(ohms, ++exp))
  if (digits < 10 ** (n - 1)) digits = Math.round(scale(ohms, --exp))
  if (!sameValue(Number(`${digits}e${exp}`), ohms)) {
    throw new Error(`${formatValue(ohms, 'Ω')} needs more than ${n} digits: use ${bands === 4 ? '5 bands' : 'a printed value'}`)
  }
  if (exp < -3 || exp > 9) throw new Error(`${formatValue(ohms, 'Ω')} is out of the colour code's range`)
  const multiplier = Object.entries(MULTIPLIER_EXP).find(([, e]) => e === exp)![0]
  return [...String(digits)].map((d) => DIGIT_COLOURS[Number(d)]!).concat(multiplier, tol[0])
}

// ---------------------------------------------------------------------------------------
// Capacitor and SMD codes

const CAP_MULTIPLIER_EXP: Record<string, number> = { 0: 0, 1: 1, 2: 2, 3: 3, 4: 4, 5: 5, 6: 6, 8: -2, 9: -1 }

/** IEC 60062 three-digit capacitor code in pF (`104` → 100 nF), returned in farads; 8 and 9 mean ×0.01 and ×0.1. */
export function decodeCapCode(code: string): number {
  const m = /^(\d\d)(\d)\s*[BCDFGJKMZ]?$/.exec(String(code).trim())
  if (!m) throw new Error(`"${code}" is not a capacitor code: expected three digits such as 104`)
  const exp = CAP_MULTIPLIER_EXP[m[2]!]
  if (exp === undefined) throw new Error(`"${code}" is not a capacitor code: ${m[2]} is not a multiplier digit`)
  return Number(`${m[1]}e${exp - 12}`)
}

/** The three-digit capacitor code for a capacitance in farads (`1e-7` → `"104"`); throws when two digits cannot hold it. */
export function encodeCapCode(farads: number): string {
  if (!Number.isFinite(farads) || farads <= 0) throw new Error(`Cannot write ${farads} F as a capacitor code`)
  const pf = farads * 1e12
  let exp = Math.floor(Math.log10(pf)) - 1
  let digits = Math.round(scale(pf, exp))
  if (digits >= 100) digits = Math.round(scale(pf, ++exp))
  if (!sameValue(Number(`${digits}e${exp - 12}`), farads)) {
    throw new Error(`${formatValue(farads, 'F')} needs more than two digits for a capacitor code`)
  }
  const mult = Object.entries(CAP_MULTIPLIER_EXP).find(([, e]) => e === exp)
  if (!mult) throw new Error(`${formatValue(farads, 'F')} is out of the capacitor code's range`)
  return `${String(digits).padStart(2, '0')}${mult[0]}`
}

/** EIA-96 letter multipliers (R and S are alternative letters for Y and X, H for B). */
export const EIA96_MULTIPLIERS: Readonly<Record<string, number>> = {
  Z: 0.001, Y: 0.01, R: 0.01, X: 0.1, S: 0.1, A: 1, B: 10, H: 10, C: 100, D: 1000, E: 10000, F: 100000,
}
const EIA96_EXP: Record<string, number> = { Z: -3, Y: -2, R: -2, X: -1, S: -1, A: 0, B: 1, H: 1, C: 2, D: 3, E: 4, F: 5 }

/**
 * SMD resistor marking in ohms: 3-digit `472`, 4-digit `4701`, `R` as the decimal point
 * (`4R7`, `R10`), and EIA-96 `NNL` (`01C` = 10 kΩ). Two digits and a letter are always
 * read as EIA-96, so `47R` is 3.01 Ω, not 47 Ω.
 */
export function decodeSmdCode(code: string): number {
  const c = String(code).trim().toUpperCase()
  if (/^0{1,4}$/.test(c)) return 0
  let m = /^(\d\d)([ZYRXSABHCDEF])$/.exec(c)
  if (m) {
    const n = Number(m[1])
    if (n < 1 || n > 96) throw new Error(`"${code}" is not an EIA-96 code: the number must be 01 to 96`)
    // The code number n stands for the n-th E96 value written with three digits (01 → 100).
    return Number(`${seriesValues('E96')[n - 1]}e${EIA96_EXP[m[2]!]! + 2}`)
  }
  if (/^\d*R\d*$/.test(c) && c.length >= 2 && c.length <= 4) return Number(c.replace('R', '.'))
  m = /^(\d{2,3})(\d)$/.exec(c)
  if (m) return Number(`${m[1]}e${m[2]}`)
  throw new Error(`"${code}" is not an SMD resistor code: expected 472, 4701, 4R7 or an EIA-96 code like 01C`)
}

// ---------------------------------------------------------------------------------------
// IEC 60063 preferred-value series

export const SERIES_NAMES: readonly SeriesName[] = ['E3', 'E6', 'E12', 'E24', 'E48', 'E96', 'E192']
const SERIES_COUNT: Record<SeriesName, number> = { E3: 3, E6: 6, E12: 12, E24: 24, E48: 48, E96: 96, E192: 192 }
/** Nominal tolerance of each series in percent (IEC 60063). */
export const SERIES_TOLERANCE: Readonly<Record<SeriesName, number>> = { E3: 40, E6: 20, E12: 10, E24: 5, E48: 2, E96: 1, E192: 0.5 }
const PUBLISHED: Partial<Record<SeriesName, number[]>> = {
  E3: [1.0, 2.2, 4.7],
  E6: [1.0, 1.5, 2.2, 3.3, 4.7, 6.8],
  E12: [1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2],
  E24: [1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6, 6.2, 6.8, 7.5, 8.2, 9.1],
}
const seriesCache = new Map<SeriesName, readonly number[]>()

function seriesValues(name: SeriesName): readonly number[] {
  let list = seriesCache.get(name)
  if (list) return list
  const n = SERIES_COUNT[name]
  if (n === undefined) throw new Error(`Unknown E-series "${name}": use one of ${SERIES_NAMES.join(', ')}`)
  // The published E192 has 9.20 where round(10^(185/192)) gives 9.19.
  list = PUBLISHED[name] ?? Array.from({ length: n }, (_, i) => (name === 'E192' && i === 185 ? 9.2 : roundSig(10 ** (i / n), 3)))
  seriesCache.set(name, list)
  return list
}

/** The mantissas of an E-series in [1, 10), as published in IEC 60063:2015. */
export function eSeries(name: SeriesName): number[] {
  return [...seriesValues(name)]
}

function decade(value: number): { m: number; d: number } {
  let d = Math.floor(Math.log10(value))
  let m = scale(value, d)
  if (m >= 10) { m /= 10; d++ } else if (m < 1) { m *= 10; d-- }
  return { m, d }
}

/** True when the value (any decade) is a member of the series, allowing for float error. */
export function inSeries(value: number, name: SeriesName): boolean {
  if (!Number.isFinite(value) || value <= 0) return false
  const { m } = decade(value)
  return seriesValues(name).some((s) => Math.abs(m / s - 1) < 1e-6 || Math.abs(m / (s * 10) - 1) < 1e-6)
}

/** The series member nearest the value on a log scale, in the value's decade or the next. */
export function nearestInSeries(value: number, name: SeriesName): number {
  if (!Number.isFinite(value) || value <= 0) throw new Error(`No preferred value near ${value}`)
  const { m, d } = decade(value)
  let best = 1
  let bestDist = Infinity
  for (const s of [...seriesValues(name), 10]) {
    const dist = Math.abs(Math.log(m / s))
    if (dist < bestDist) { best = s; bestDist = dist }
  }
  return Number(`${best}e${d}`)
}

/** The smallest E-series that holds the value, or undefined. */
export function smallestSeries(value: number): SeriesName | undefined {
  return SERIES_NAMES.find((name) => inSeries(value, name))
}

// ---------------------------------------------------------------------------------------
// Making a missing value from stocked ones

export interface Combination {
  parts: number[]
  arrangement: 'single' | 'series' | 'parallel'
  value: number
  errorPct: number
}

function lowerBound(sorted: number[], x: number, from = 0): number {
  let lo = from
  let hi = sorted.length
  while (lo < hi) {
    const mid = (lo + hi) >> 1
    if (sorted[mid]! < x) lo = mid + 1
    else hi = mid
  }
  return lo
}

/**
 * The ways to make `target` from one stocked value or two in series or parallel, within
 * ±tolerancePct, best first (smallest |error|, then fewer parts). Resistors add in series,
 * capacitors in parallel. A pair may use the same value twice. O(n log n + results).
 */
export function findCombination(
  target: number,
  kind: 'resistor' | 'capacitor',
  stocked: number[],
  tolerancePct: number,
  limit = 20,
): Combination[] {
  if (!Number.isFinite(target) || target <= 0) throw new Error('The target value must be above zero')
  if (!Number.isFinite(tolerancePct) || tolerancePct < 0) throw new Error('The tolerance must be zero or more')
  if (kind !== 'resistor' && kind !== 'capacitor') throw new Error(`Cannot combine ${kind}s`)
  const values = [...new Set(stocked.filter((v) => Number.isFinite(v) && v > 0))].sort((a, b) => a - b)
  const p = tolerancePct / 100
  const lo = target * (1 - p) * (1 - 1e-12)
  const hi = target * (1 + p) * (1 + 1e-12)
  const addName = kind === 'resistor' ? 'series' : 'parallel'
  const recipName = kind === 'resistor' ? 'parallel' : 'series'
  const out: Combination[] = []
  const push = (parts: number[], arrangement: Combination['arrangement'], value: number) => {
    const errorPct = ((value - target) / target) * 100
    if (Math.abs(errorPct) <= tolerancePct * (1 + 1e-9) + 1e-12) out.push({ parts, arrangement, value, errorPct })
  }

  for (let i = lowerBound(values, lo); i < values.length && values[i]! <= hi; i++) push([values[i]!], 'single', values[i]!)
  for (let i = 0; i < values.length; i++) {
    const a = values[i]!
    // Adding: b in [lo − a, hi − a], b ≥ a so each pair is seen once.
    for (let j = lowerBound(values, lo - a, i); j < values.length && values[j]! <= hi - a; j++) {
      push([a, values[j]!], addName, a + values[j]!)
    }
    // Reciprocal adding: 1/b in [1/hi − 1/a, 1/lo − 1/a].
    const maxInv = 1 / lo - 1 / a
    if (maxInv <= 0) continue
    const minInv = 1 / hi - 1 / a
    const bMin = Math.max(a, 1 / maxInv)
    const bMax = minInv > 0 ? 1 / minInv : Infinity
    for (let j = lowerBound(values, bMin * (1 - 1e-12), i); j < values.length && values[j]! <= bMax * (1 + 1e-12); j++) {
      const b = values[j]!
      push([a, b], recipName, (a * b) / (a + b))
    }
  }
  const key = (c: Combination) => Math.round(Math.abs(c.errorPct) * 1e9)
  out.sort((x, y) => key(x) - key(y) || x.parts.length - y.parts.length || x.parts[0]! - y.parts[0]!)
  return out.slice(0, limit)
}

// ---------------------------------------------------------------------------------------
// Helpers for forms and search

export interface ValueDescription extends ParsedValue {
  formatted: string
  letterCode?: string
  bands?: string[]
  capCode?: string
  series?: SeriesName
}

function attempt<T>(f: () => T): T | undefined {
  try { return f() } catch { return undefined }
}

/** The live reading of a part form's value field; throws like parseValue. */
export function describeValue(text: string, kind?: ValueKind | string): ValueDescription {
  const parsed = parseValue(text, kind)
  const { value, unit } = parsed
  const d: ValueDescription = { ...parsed, formatted: formatValue(value, unit) }
  const letterCode = attempt(() => toLetterCode(value, unit))
  if (letterCode) d.letterCode = letterCode
  if (unit === 'Ω') {
    const bands = attempt(() => encodeColourBands(value, parsed.tolerance ?? 5, 4))
    if (bands) d.bands = bands
  }
  if (unit === 'F') {
    const capCode = attempt(() => encodeCapCode(value))
    if (capCode) d.capCode = capCode
  }
  if (unit === 'Ω' || unit === 'F' || unit === 'H') {
    const series = smallestSeries(value)
    if (series) d.series = series
  }
  return d
}

export interface ValueReading { value: number; unit?: string }

/**
 * Every plausible reading of a catalogue search text: a value (`4k7`, `4.7k`, `4700`), colour
 * bands (`yellow violet red`, three or more colour words), and for bare digit strings the SMD
 * code (`472` → 4.7 kΩ, and a four-digit code not ending in 0) and the capacitor code
 * (`472` → 4.7 nF). A kind keeps only readings in its unit. Returns [] when nothing reads.
 */
export function valueQueries(text: string, kind?: ValueKind | string): ValueReading[] {
  const s = normaliseText(String(text ?? ''))
  if (!s) return []
  const readings: ValueReading[] = []
  const add = (r: ValueReading | undefined) => {
    if (!r) return
    if (readings.some((x) => x.unit === r.unit && sameValue(x.value, r.value))) return
    readings.push(r)
  }
  const words = s.split(/[\s,;/-]+/).filter(Boolean)
  if (words.length >= 3 && words.every(isColourName)) {
    add(attempt(() => ({ value: decodeColourBands(words).value, unit: 'Ω' })))
  } else {
    const smd = () => add(attempt(() => ({ value: decodeSmdCode(s), unit: 'Ω' })))
    // `01C` is far likelier an EIA-96 marking than 1 with tolerance letter C; `10R` and `10F` read both ways.
    const eia96First = /^\d\d[ZYXSABHCDE]$/i.test(s)
    if (eia96First) smd()
    add(attempt(() => {
      const p = parseValue(s)
      return p.unit ? { value: p.value, unit: p.unit } : { value: p.value }
    }))
    if (!eia96First && (/^\d{3}$/.test(s) || /^\d{3}[1-9]$/.test(s) || /^\d\d[RrFf]$/.test(s) || /^\d*[Rr]\d*$/.test(s))) smd()
    if (/^\d{3}$/.test(s)) add(attempt(() => ({ value: decodeCapCode(s), unit: 'F' })))
  }
  const kindUnit = unitForKind(kind)
  return kindUnit ? readings.filter((r) => r.unit === undefined || r.unit === kindUnit) : readings
}

/** The first reading of valueQueries, or null. */
export function valueQuery(text: string, kind?: ValueKind | string): ValueReading | null {
  return valueQueries(text, kind)[0] ?? null
}
