// The effective BOM of a kit for a choice of options, and the difference between two revisions.
//
// Options: a line with optionId null belongs to the base. A chosen option's lines are added to
// the base, and:
// - replacesLineId: the option line takes the place of that base line;
// - removesLineId: choosing the option takes that base line out. A line that only removes
//   something carries qty 0 (and usually no part); lines with qty 0 never appear in the
//   effective BOM, so a removal needs no separate kind of line.
// Two chosen options may not replace or remove the same base line.

import { compareDesignators, compressDesignators, expandDesignators } from './designators'

export interface BomLine {
  id: string
  designators: string
  qty: number
  partId: string | null
  valueText?: string | null
  stage: string
  stageOrder?: number
  noStandIns?: boolean
  notes?: string | null
  optionId?: string | null
  replacesLineId?: string | null
  removesLineId?: string | null
}

export interface OptionGroup {
  id: string
  name: string
  rule: 'one' | 'zero-or-one'
  options: { id: string; name: string }[]
}

export type BomDiffField = 'qty' | 'part' | 'designators' | 'stage' | 'noStandIns' | 'notes'

export interface BomChange { before: BomLine; after: BomLine; fields: BomDiffField[] }

export interface BomDiff {
  added: BomLine[]
  removed: BomLine[]
  changed: BomChange[]
  unchanged: number
}

/** Problems with a choice of options, as sentences; an empty list means the choice is valid. */
export function validateChoice(groups: OptionGroup[], chosen: string[]): string[] {
  const problems: string[] = []
  const groupOf = new Map<string, OptionGroup>()
  for (const g of groups) for (const o of g.options) groupOf.set(o.id, g)
  const seen = new Set<string>()
  for (const id of chosen) {
    if (!groupOf.has(id)) problems.push(`Unknown option "${id}".`)
    else if (seen.has(id)) problems.push(`Option "${id}" is chosen twice.`)
    seen.add(id)
  }
  for (const g of groups) {
    const picked = g.options.filter(o => seen.has(o.id))
    if (g.rule === 'one' && picked.length === 0) problems.push(`Choose one option from "${g.name}".`)
    if (picked.length > 1) {
      const names = picked.map(o => `"${o.name}"`).join(' and ')
      problems.push(`Choose only one option from "${g.name}" (chosen: ${names}).`)
    }
  }
  return problems
}

function lineDesignators(line: BomLine): string[] {
  try {
    return expandDesignators(line.designators)
  }
  catch (e) {
    throw new Error(`Line ${line.id}: ${(e as Error).message}`)
  }
}

function firstDesignator(list: string[]): string | null {
  return list.length === 0 ? null : [...list].sort(compareDesignators)[0]!
}

/** Orders designators first (by first designator), lines without designators after; null-safe. */
function compareFirst(a: string | null, b: string | null): number {
  if (a === null || b === null) return a === b ? 0 : a === null ? 1 : -1
  return compareDesignators(a, b)
}

// Infinity - Infinity is NaN, so compare rather than subtract.
const compareNumbers = (x: number, y: number) => (x < y ? -1 : x > y ? 1 : 0)
const compareText = (x: string, y: string) => (x < y ? -1 : x > y ? 1 : 0)

function sortByStageThenDesignator(lines: BomLine[]): BomLine[] {
  const keyed = lines.map((line, index) => ({
    line,
    index,
    order: line.stageOrder ?? Number.POSITIVE_INFINITY,
    first: firstDesignator(lineDesignators(line)),
  }))
  keyed.sort((a, b) => compareNumbers(a.order, b.order)
    || compareText(a.line.stage, b.line.stage)
    || compareFirst(a.first, b.first)
    || a.index - b.index)
  return keyed.map(k => k.line)
}

function takenBaseLines(lines: BomLine[], chosen: Set<string>, baseIds: Set<string>): Set<string> {
  const takenBy = new Map<string, string>()
  for (const line of lines) {
    if (!line.optionId || !chosen.has(line.optionId)) continue
    for (const target of [line.replacesLineId, line.removesLineId]) {
      if (!target) continue
      if (!baseIds.has(target)) throw new Error(`Line ${line.id} replaces or removes line ${target}, which is not a base line.`)
      const other = takenBy.get(target)
      if (other !== undefined && other !== line.optionId) {
        throw new Error(`Options "${other}" and "${line.optionId}" both replace or remove line ${target}.`)
      }
      takenBy.set(target, line.optionId)
    }
  }
  return new Set(takenBy.keys())
}

/**
 * The lines to pack for one choice of options: base lines minus those replaced or removed,
 * plus the chosen options' lines (qty 0 lines left out), ordered by stage then first designator.
 */
export function effectiveBom(lines: BomLine[], groups: OptionGroup[], chosen: string[]): BomLine[] {
  const problems = validateChoice(groups, chosen)
  if (problems.length > 0) throw new Error(problems.join(' '))
  const chosenSet = new Set(chosen)
  const baseIds = new Set(lines.filter(l => !l.optionId).map(l => l.id))
  const taken = takenBaseLines(lines, chosenSet, baseIds)
  const kept = lines.filter((l) => {
    if (!l.optionId) return !taken.has(l.id)
    return chosenSet.has(l.optionId) && l.qty > 0
  })
  return sortByStageThenDesignator(kept)
}

// ---- diff between revisions ----

interface Side { line: BomLine; designators: string[]; set: Set<string>; scope: string }

export interface BomDiffOptions {
  /**
   * Lines are only matched within the same scope. By default the scope is the line's optionId
   * (base with base); pass a function (e.g. option name) when option ids differ between revisions.
   */
  scopeOf?: (line: BomLine) => string
}

function sides(lines: BomLine[], scopeOf: (l: BomLine) => string): Side[] {
  return lines.map((line) => {
    const designators = lineDesignators(line)
    return { line, designators, set: new Set(designators), scope: scopeOf(line) }
  })
}

function hardwareKey(s: Side): string {
  return JSON.stringify([s.scope, s.line.partId ?? `value:${(s.line.valueText ?? '').trim().toLowerCase()}`, s.line.stage])
}

/** Pairs lines sharing designators, the largest overlap first; ties broken by designator order. */
function matchByDesignators(a: Side[], b: Side[]): [number, number][] {
  const candidates: { i: number; j: number; overlap: number; first: string }[] = []
  for (let i = 0; i < a.length; i++) {
    if (a[i]!.set.size === 0) continue
    for (let j = 0; j < b.length; j++) {
      if (b[j]!.set.size === 0 || a[i]!.scope !== b[j]!.scope) continue
      const shared = a[i]!.designators.filter(d => b[j]!.set.has(d))
      if (shared.length > 0) candidates.push({ i, j, overlap: shared.length, first: firstDesignator(shared)! })
    }
  }
  candidates.sort((x, y) => (y.overlap - x.overlap) || compareDesignators(x.first, y.first) || (x.i - y.i) || (x.j - y.j))
  return pickPairs(candidates)
}

function pickPairs(candidates: { i: number; j: number }[]): [number, number][] {
  const usedA = new Set<number>()
  const usedB = new Set<number>()
  const pairs: [number, number][] = []
  for (const { i, j } of candidates) {
    if (usedA.has(i) || usedB.has(j)) continue
    usedA.add(i)
    usedB.add(j)
    pairs.push([i, j])
  }
  return pairs
}

/** Lines without designators (screws, wire, knobs) pair by part (or value text) and stage, in order. */
function matchHardware(a: Side[], b: Side[]): [number, number][] {
  const waiting = new Map<string, number[]>()
  b.forEach((s, j) => {
    if (s.set.size > 0) return
    const k = hardwareKey(s)
    waiting.set(k, [...(waiting.get(k) ?? []), j])
  })
  const pairs: [number, number][] = []
  a.forEach((s, i) => {
    if (s.set.size > 0) return
    const j = waiting.get(hardwareKey(s))?.shift()
    if (j !== undefined) pairs.push([i, j])
  })
  return pairs
}

const blank = (s: string | null | undefined) => (s ?? '').trim()

function changedFields(x: Side, y: Side): BomDiffField[] {
  const fields: BomDiffField[] = []
  if (x.line.qty !== y.line.qty) fields.push('qty')
  if (x.line.partId !== y.line.partId || blank(x.line.valueText) !== blank(y.line.valueText)) fields.push('part')
  if (compressDesignators(x.designators) !== compressDesignators(y.designators)) fields.push('designators')
  if (x.line.stage !== y.line.stage) fields.push('stage')
  if (Boolean(x.line.noStandIns) !== Boolean(y.line.noStandIns)) fields.push('noStandIns')
  if (blank(x.line.notes) !== blank(y.line.notes)) fields.push('notes')
  return fields
}

function sortKey(s: Side[]): { first: string | null; text: string } {
  const all = s.flatMap(x => x.designators)
  return { first: firstDesignator(all), text: s.map(hardwareKey).join('|') }
}

function sortSides<T>(items: T[], sidesOf: (t: T) => Side[]): T[] {
  const keyed = items.map((item, index) => ({ item, index, ...sortKey(sidesOf(item)) }))
  keyed.sort((x, y) => compareFirst(x.first, y.first) || compareText(x.text, y.text) || x.index - y.index)
  return keyed.map(k => k.item)
}

/**
 * What changed from revision a to revision b. Lines are the same line when they share
 * designators (largest overlap first); a designator moving between lines shows as changed
 * designators on both. Each list is sorted by first designator; lines without designators last.
 */
export function diffRevisions(a: BomLine[], b: BomLine[], options: BomDiffOptions = {}): BomDiff {
  const scopeOf = options.scopeOf ?? ((l: BomLine) => l.optionId ?? '')
  const sa = sides(a, scopeOf)
  const sb = sides(b, scopeOf)
  const pairs = [...matchByDesignators(sa, sb), ...matchHardware(sa, sb)]
  const matchedA = new Set(pairs.map(p => p[0]))
  const matchedB = new Set(pairs.map(p => p[1]))
  const changed: { x: Side; y: Side; fields: BomDiffField[] }[] = []
  let unchanged = 0
  for (const [i, j] of pairs) {
    const fields = changedFields(sa[i]!, sb[j]!)
    if (fields.length === 0) unchanged++
    else changed.push({ x: sa[i]!, y: sb[j]!, fields })
  }
  return {
    added: sortSides(sb.filter((_, j) => !matchedB.has(j)), s => [s]).map(s => s.line),
    removed: sortSides(sa.filter((_, i) => !matchedA.has(i)), s => [s]).map(s => s.line),
    changed: sortSides(changed, c => [c.x, c.y]).map(c => ({ before: c.x.line, after: c.y.line, fields: c.fields })),
    unchanged,
  }
}
