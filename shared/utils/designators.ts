// Reference designators: "R1-R4, R7" <-> ["R1", "R2", "R3", "R4", "R7"].
//
// Rules (each has a test):
// - items are separated by commas, semicolons or white space; spaces around "-" are allowed
// - an item is letters then a whole number (R7, SW1, TP12); letters are upper-cased and
//   leading zeros dropped, so "r07" reads as "R7"
// - a range is "R1-R4" or "R1-4"; it must go upwards and stay within one prefix
// - a designator may appear only once; at most MAX_DESIGNATORS items in one text
// - compressDesignators sorts by prefix, then number, and writes runs of three or more
//   consecutive numbers as a range ("R1-R3"); a pair stays as two items ("R1, R2"),
//   because "R1-R2" saves nothing and is easy to misread as a range of many

export const MAX_DESIGNATORS = 10_000

export interface ParsedDesignator { prefix: string; number: number }

const ITEM = /^([A-Z]+)(\d+)$/
const RANGE = /^([A-Z]+)(\d+)-([A-Z]+)?(\d+)$/

function toNumber(digits: string, item: string): number {
  const n = Number(digits)
  if (!Number.isSafeInteger(n)) throw new Error(`"${item}" has a number too large to be a designator`)
  return n
}

/** Splits one designator ("SW3") into its letters and number; throws on anything else. */
export function parseDesignator(d: string): ParsedDesignator {
  const item = d.trim().toUpperCase()
  const m = ITEM.exec(item)
  if (!m) throw new Error(`"${d.trim()}" is not a designator: expected letters then a number, such as R1 or SW2`)
  return { prefix: m[1]!, number: toNumber(m[2]!, item) }
}

/** The letters of a designator: "TP3" -> "TP". */
export function designatorPrefix(d: string): string {
  return parseDesignator(d).prefix
}

/** Order by prefix, then by number (R2 before R10). */
export function compareDesignators(a: string, b: string): number {
  const pa = parseDesignator(a)
  const pb = parseDesignator(b)
  if (pa.prefix !== pb.prefix) return pa.prefix < pb.prefix ? -1 : 1
  return pa.number - pb.number
}

function splitItems(text: string): string[] {
  return text
    .toUpperCase()
    .replace(/\s*-\s*/g, '-')
    .split(/[\s,;]+/)
    .filter(s => s.length > 0)
}

function expandItem(item: string): ParsedDesignator[] {
  if (ITEM.test(item)) return [parseDesignator(item)]
  const m = RANGE.exec(item)
  if (!m) throw new Error(`"${item}" is not a designator or range: expected something like R1, R1-R4 or R1-4`)
  const prefix = m[1]!
  const endPrefix = m[3] ?? prefix
  if (endPrefix !== prefix) throw new Error(`"${item}" runs across two prefixes (${prefix} and ${endPrefix}); a range must keep one prefix`)
  const from = toNumber(m[2]!, item)
  const to = toNumber(m[4]!, item)
  if (to < from) throw new Error(`"${item}" is reversed: write ${prefix}${to}-${prefix}${from}`)
  if (to - from + 1 > MAX_DESIGNATORS) throw new Error(`"${item}" holds more than ${MAX_DESIGNATORS} designators`)
  const out: ParsedDesignator[] = []
  for (let n = from; n <= to; n++) out.push({ prefix, number: n })
  return out
}

/** Reads a designator text into a list, in the order written. Empty text gives []. */
export function expandDesignators(text: string): string[] {
  const out: string[] = []
  const seen = new Set<string>()
  for (const item of splitItems(text)) {
    for (const { prefix, number } of expandItem(item)) {
      const d = `${prefix}${number}`
      if (seen.has(d)) throw new Error(`${d} appears more than once`)
      seen.add(d)
      out.push(d)
      if (out.length > MAX_DESIGNATORS) throw new Error(`more than ${MAX_DESIGNATORS} designators in one text`)
    }
  }
  return out
}

/** Writes a list as short text: sorted, runs of three or more as ranges, ", " between items. */
export function compressDesignators(list: string[]): string {
  const parsed = list.map(parseDesignator)
  const seen = new Set<string>()
  for (const p of parsed) {
    const d = `${p.prefix}${p.number}`
    if (seen.has(d)) throw new Error(`${d} appears more than once`)
    seen.add(d)
  }
  parsed.sort((a, b) => (a.prefix === b.prefix ? a.number - b.number : a.prefix < b.prefix ? -1 : 1))
  const parts: string[] = []
  let i = 0
  while (i < parsed.length) {
    let j = i
    while (j + 1 < parsed.length && parsed[j + 1]!.prefix === parsed[i]!.prefix && parsed[j + 1]!.number === parsed[j]!.number + 1) j++
    const first = parsed[i]!
    const last = parsed[j]!
    if (j - i + 1 >= 3) parts.push(`${first.prefix}${first.number}-${last.prefix}${last.number}`)
    else for (let k = i; k <= j; k++) parts.push(`${parsed[k]!.prefix}${parsed[k]!.number}`)
    i = j + 1
  }
  return parts.join(', ')
}
