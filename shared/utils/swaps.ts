/**
 * Swap rules: which parts may stand in for a part on a line. A stand-in comes either from an
 * interchangeable group (carrying the group's warning, e.g. a different pinout) or from a
 * parametric rule for resistors, capacitors and inductors. Rules are not transitive.
 *
 * Decisions:
 * - A rating the original does not state is not checked; one the original states but the
 *   candidate does not is a refusal ("unknown"), since nobody can vouch for it.
 * - Mounting is checked for all three parametric kinds (an SMD part does not fit a through-hole kit).
 * - Polarity: a polarised original needs a polarised candidate; a non-polarised original
 *   refuses a polarised one, and an electrolytic or tantalum candidate of unknown polarity.
 * - When a pair is allowed by several rules the first group wins and every group's warning is kept.
 */
import { formatValue, sameValue } from './values'

export type PartKind = 'resistor' | 'capacitor' | 'inductor' | 'crystal' | 'diode' | 'transistor' | 'ic' | 'connector' | 'hardware' | 'board' | 'other'
export interface SwapPart {
  id: string
  kind: PartKind
  value?: number | null
  tolerancePct?: number | null
  powerW?: number | null
  voltageV?: number | null
  currentA?: number | null
  dielectric?: string | null
  mounting?: 'tht' | 'smd' | null
  polarised?: boolean | null
  package?: string | null
}
/** 'both' stands in and is replaced; 'replaces' only stands in; 'replaced' is only replaced. */
export type SwapDirection = 'both' | 'replaces' | 'replaced'
export interface SwapGroup {
  id: string
  name: string
  members: { partId: string; direction: SwapDirection }[]
  warning?: string | null
}
export interface ParametricSettings { resistor: boolean; capacitor: boolean; inductor: boolean }
export interface StandIn { partId: string; reason: string; warning: string | null; source: 'group' | 'parametric'; groupId?: string }
export interface SwapPair { from: string; to: string; reason: string; warning: string | null }

export const DEFAULT_PARAMETRIC: Readonly<ParametricSettings> = { resistor: true, capacitor: true, inductor: true }

type Verdict = { ok: boolean; text: string } | null
const UNIT: Record<string, string> = { resistor: 'Ω', capacitor: 'F', inductor: 'H' }
const MOUNTING_WORD: Record<string, string> = { tht: 'through-hole', smd: 'surface-mount' }
const EPS = 1e-9

function stated(x: number | null | undefined): x is number {
  return typeof x === 'number' && Number.isFinite(x)
}
function num(x: number): string {
  return String(Number(x.toPrecision(6)))
}

function checkValue(kind: string, o: SwapPart, c: SwapPart): Verdict {
  const unit = UNIT[kind]!
  if (!stated(o.value)) return { ok: false, text: 'the original has no value to match' }
  if (!stated(c.value)) return { ok: false, text: `the candidate's value is unknown (needs ${formatValue(o.value, unit)})` }
  if (!sameValue(o.value, c.value)) return { ok: false, text: `value ${formatValue(c.value, unit)} differs from ${formatValue(o.value, unit)}` }
  return { ok: true, text: `same value ${formatValue(o.value, unit)}` }
}

function checkTolerance(o: SwapPart, c: SwapPart): Verdict {
  if (!stated(o.tolerancePct)) return null
  if (!stated(c.tolerancePct)) return { ok: false, text: `the candidate's tolerance is unknown (needs ${num(o.tolerancePct)} % or tighter)` }
  if (c.tolerancePct > o.tolerancePct * (1 + EPS)) {
    return { ok: false, text: `tolerance ${num(c.tolerancePct)} % is looser than ${num(o.tolerancePct)} %` }
  }
  return { ok: true, text: `tolerance ${num(c.tolerancePct)} % ≤ ${num(o.tolerancePct)} %` }
}

function checkRating(what: string, unit: string, o: number | null | undefined, c: number | null | undefined): Verdict {
  if (!stated(o)) return null
  if (!stated(c)) return { ok: false, text: `the candidate's ${what} rating is unknown (needs ${num(o)} ${unit} or more)` }
  if (c < o * (1 - EPS)) return { ok: false, text: `${what} rating ${num(c)} ${unit} is below ${num(o)} ${unit}` }
  return { ok: true, text: `${num(c)} ${unit} ≥ ${num(o)} ${unit}` }
}

function checkMounting(o: SwapPart, c: SwapPart): Verdict {
  if (!o.mounting) return null
  const want = MOUNTING_WORD[o.mounting] ?? o.mounting
  if (!c.mounting) return { ok: false, text: `the candidate's mounting is unknown (needs ${want})` }
  if (c.mounting !== o.mounting) return { ok: false, text: `${MOUNTING_WORD[c.mounting] ?? c.mounting} does not fit ${want}` }
  return { ok: true, text: `both ${want}` }
}

const CERAMIC_RANK: Record<string, number> = { Y5V: 0, X5R: 1, X7R: 2, C0G: 3 }

/** A dielectric's family name: C0G (= NP0), X7R, X5R, Y5V, electrolytic, tantalum, film, or the text itself. */
export function dielectricFamily(d: string | null | undefined): string | null {
  if (!d || !d.trim()) return null
  const t = d.trim().toUpperCase().replace(/\s+/g, ' ')
  if (/^(C0G|COG|NP0|NPO)(\/(C0G|COG|NP0|NPO))?$/.test(t)) return 'C0G'
  if (t in CERAMIC_RANK) return t
  if (/ELECTROLYTIC|^ELKO$|^ALU/.test(t)) return 'electrolytic'
  if (/TANTAL/.test(t)) return 'tantalum'
  if (/FILM/.test(t)) return 'film'
  return t
}

function checkDielectric(o: SwapPart, c: SwapPart): Verdict {
  const of = dielectricFamily(o.dielectric)
  if (!of) return null
  const cf = dielectricFamily(c.dielectric)
  if (!cf) return { ok: false, text: `the candidate's dielectric is unknown (needs one that can replace ${of})` }
  if (of in CERAMIC_RANK && cf in CERAMIC_RANK) {
    if (CERAMIC_RANK[cf]! < CERAMIC_RANK[of]!) {
      const allowed = Object.keys(CERAMIC_RANK).filter((k) => CERAMIC_RANK[k]! >= CERAMIC_RANK[of]!).join(', ').replace('C0G', 'C0G/NP0')
      return { ok: false, text: `${cf} cannot replace ${of} (only ${allowed})` }
    }
    return { ok: true, text: cf === of ? `both ${of}` : `${cf} can replace ${of}` }
  }
  if (cf !== of) return { ok: false, text: `${cf} cannot replace ${of}` }
  return { ok: true, text: `both ${of}` }
}

function checkPolarity(o: SwapPart, c: SwapPart): Verdict {
  const cf = dielectricFamily(c.dielectric)
  if (o.polarised === true) {
    if (c.polarised === true) return { ok: true, text: 'both polarised' }
    if (c.polarised == null) return { ok: false, text: "the candidate's polarity is unknown (needs a polarised part)" }
    return { ok: false, text: 'a non-polarised part cannot replace a polarised one' }
  }
  if (o.polarised === false) {
    if (c.polarised === true) return { ok: false, text: 'a polarised part cannot replace a non-polarised one' }
    if (c.polarised == null && (cf === 'electrolytic' || cf === 'tantalum')) {
      return { ok: false, text: "the candidate's polarity is unknown (needs a non-polarised part)" }
    }
  }
  return null
}

function verdicts(o: SwapPart, c: SwapPart): Verdict[] {
  const v = [checkValue(o.kind, o, c)]
  if (o.kind === 'resistor') v.push(checkTolerance(o, c), checkRating('power', 'W', o.powerW, c.powerW))
  if (o.kind === 'capacitor') v.push(checkRating('voltage', 'V', o.voltageV, c.voltageV), checkTolerance(o, c), checkDielectric(o, c), checkPolarity(o, c))
  if (o.kind === 'inductor') v.push(checkRating('current', 'A', o.currentA, c.currentA), checkTolerance(o, c))
  v.push(checkMounting(o, c))
  return v
}

/**
 * Whether `candidate` may stand in for `original` by the parametric rule of their kind, with
 * the reasons in plain English (all refusals when refused, all checks passed when allowed).
 */
export function parametricStandIn(original: SwapPart, candidate: SwapPart): { ok: boolean; reason: string } {
  if (original.id === candidate.id) return { ok: false, reason: 'a part does not stand in for itself' }
  if (!(original.kind in UNIT)) return { ok: false, reason: `no parametric rule for ${original.kind} parts: use an interchangeable group` }
  if (candidate.kind !== original.kind) return { ok: false, reason: `a ${candidate.kind} cannot replace a ${original.kind}` }
  const list = verdicts(original, candidate).filter((v): v is NonNullable<Verdict> => v !== null)
  const refused = list.filter((v) => !v.ok)
  if (refused.length) return { ok: false, reason: refused.map((v) => v.text).join('; ') }
  return { ok: true, reason: list.map((v) => v.text).join(', ') }
}

function canBeReplaced(d: string): boolean { return d === 'both' || d === 'replaced' }
function canReplace(d: string): boolean { return d === 'both' || d === 'replaces' }

/** Every (from, to) a group allows: `to` may stand in for `from`. */
function groupPairs(group: SwapGroup): [string, string][] {
  const out: [string, string][] = []
  const seen = new Set<string>()
  for (const f of group.members) {
    if (!canBeReplaced(f.direction)) continue
    for (const t of group.members) {
      const key = `${f.partId}\u0000${t.partId}`
      if (f.partId === t.partId || !canReplace(t.direction) || seen.has(key)) continue
      seen.add(key)
      out.push([f.partId, t.partId])
    }
  }
  return out
}

function groupReason(g: SwapGroup): string {
  return `interchangeable group "${g.name}"`
}

function mergeWarning(a: string | null, b: string | null | undefined): string | null {
  if (!b || a === b || a?.split('; ').includes(b)) return a
  return a ? `${a}; ${b}` : b
}

function parametricEnabled(kind: string, settings: ParametricSettings): boolean {
  return (kind === 'resistor' || kind === 'capacitor' || kind === 'inductor') && settings[kind] === true
}

/**
 * The stand-ins for one part on a line: group stand-ins first (in group order, with their
 * warnings), then parametric ones (in catalogue order). None when the line says "no stand-ins".
 */
export function standInsFor(
  partId: string,
  parts: SwapPart[],
  groups: SwapGroup[],
  settings: ParametricSettings,
  line?: { noStandIns?: boolean },
): StandIn[] {
  if (line?.noStandIns) return []
  const out: StandIn[] = []
  const byId = new Map<string, StandIn>()
  for (const g of groups) {
    for (const [from, to] of groupPairs(g)) {
      if (from !== partId) continue
      const had = byId.get(to)
      if (had) { had.warning = mergeWarning(had.warning, g.warning); continue }
      const s: StandIn = { partId: to, reason: groupReason(g), warning: g.warning || null, source: 'group', groupId: g.id }
      byId.set(to, s)
      out.push(s)
    }
  }
  const original = parts.find((p) => p.id === partId)
  if (original && parametricEnabled(original.kind, settings)) {
    for (const c of parts) {
      if (c.kind !== original.kind || c.id === partId || byId.has(c.id)) continue
      if (stated(original.value) && stated(c.value) && !sameValue(original.value, c.value)) continue
      const v = parametricStandIn(original, c)
      if (!v.ok) continue
      const s: StandIn = { partId: c.id, reason: v.reason, warning: null, source: 'parametric' }
      byId.set(c.id, s)
      out.push(s)
    }
  }
  return out
}

/**
 * All allowed (from, to) pairs, `to` standing in for `from`, for reconciliation (not
 * transitive). Parametric pairs are looked for only within runs of parts of one kind and
 * the same value, so 2,000 parts cost a sort, not 4,000,000 comparisons.
 */
export function swapPairs(parts: SwapPart[], groups: SwapGroup[], settings: ParametricSettings): SwapPair[] {
  const out: SwapPair[] = []
  const index = new Map<string, SwapPair>()
  for (const g of groups) {
    for (const [from, to] of groupPairs(g)) {
      const key = `${from}\u0000${to}`
      const had = index.get(key)
      if (had) { had.warning = mergeWarning(had.warning, g.warning); continue }
      const pair: SwapPair = { from, to, reason: groupReason(g), warning: g.warning || null }
      index.set(key, pair)
      out.push(pair)
    }
  }
  const groupFrom = new Set(out.map((p) => p.from))
  const byKind = new Map<string, SwapPart[]>()
  const seenIds = new Set<string>()
  for (const p of parts) {
    if (!parametricEnabled(p.kind, settings) || !stated(p.value) || seenIds.has(p.id)) continue
    seenIds.add(p.id)
    const list = byKind.get(p.kind) ?? []
    list.push(p)
    byKind.set(p.kind, list)
  }
  // Parts with the same ratings get the same verdict: judge each pair of rating sets once.
  const sigIds = new Map<string, number>()
  const sigOf = new Map<SwapPart, number>()
  for (const list of byKind.values()) {
    for (const p of list) {
      const sig = ratingSignature(p)
      if (!sigIds.has(sig)) sigIds.set(sig, sigIds.size)
      sigOf.set(p, sigIds.get(sig)!)
    }
  }
  const verdictCache = new Map<number, { ok: boolean; reason: string }>()
  for (const list of byKind.values()) {
    list.sort((a, b) => a.value! - b.value!)
    for (let start = 0; start < list.length;) {
      let end = start + 1
      while (end < list.length && sameValue(list[start]!.value!, list[end]!.value!)) end++
      for (let i = start; i < end; i++) {
        const from = list[i]!
        for (let j = start; j < end; j++) {
          const to = list[j]!
          if (i === j) continue
          if (groupFrom.has(from.id) && index.has(`${from.id}\u0000${to.id}`)) continue
          const cacheKey = sigOf.get(from)! * sigIds.size + sigOf.get(to)!
          let v = verdictCache.get(cacheKey)
          if (!v) verdictCache.set(cacheKey, (v = parametricStandIn({ ...from, id: '' }, { ...to, id: ' ' })))
          if (!v.ok) continue
          out.push({ from: from.id, to: to.id, reason: v.reason, warning: null })
        }
      }
      start = end
    }
  }
  return out
}

function ratingSignature(p: SwapPart): string {
  return [p.kind, p.value, p.tolerancePct, p.powerW, p.voltageV, p.currentA, p.dielectric, p.mounting, p.polarised].join('|')
}

function pairSet(g: SwapGroup): Set<string> {
  return new Set(groupPairs(g).map(([f, t]) => `${f}\u0000${t}`))
}

/** True when the pair set lets b stand in for a but not a for b. */
function oneWayOnly(set: Set<string>, a: string, b: string): boolean {
  return set.has(`${a}\u0000${b}`) && !set.has(`${b}\u0000${a}`)
}

/**
 * Problems that keep a group from being saved (empty when it is fine): too few members, a
 * member listed twice, a part standing in for itself, no member able to replace another,
 * and contradictions with existing groups (one says b may stand in for a, another lets a
 * and b swap only the other way). `existing` may include the group itself; it is skipped.
 */
export function checkGroup(group: SwapGroup, existing: SwapGroup[]): string[] {
  const problems: string[] = []
  const members = group.members ?? []
  if (!group.name?.trim()) problems.push('The group needs a name')
  if (new Set(members.map((m) => m.partId)).size < 2) problems.push('A group needs at least two different parts')
  for (const m of members) {
    if (!m.partId) problems.push('A member has no part')
    else if (m.direction !== 'both' && m.direction !== 'replaces' && m.direction !== 'replaced') {
      problems.push(`Part ${m.partId} has an unknown direction "${m.direction}"`)
    }
  }
  const seen = new Map<string, SwapDirection[]>()
  for (const m of members) seen.set(m.partId, [...(seen.get(m.partId) ?? []), m.direction])
  for (const [id, dirs] of seen) {
    if (dirs.length < 2) continue
    problems.push(`Part ${id} is listed ${dirs.length} times`)
    if (dirs.some(canReplace) && dirs.some(canBeReplaced)) problems.push(`Part ${id} would stand in for itself`)
  }
  const pairs = groupPairs(group)
  if (members.length >= 2 && pairs.length === 0) {
    problems.push('No member can stand in for another: mark at least one part "both" or "replaces" and another "both" or "replaced"')
  }
  const mine = pairSet(group)
  for (const other of existing) {
    if (other.id === group.id) continue
    const theirs = pairSet(other)
    const reported = new Set<string>()
    for (const [from, to] of pairs) {
      // Here `to` stands in for `from`; there only the other way round.
      if (!oneWayOnly(theirs, to, from)) continue
      reported.add([from, to].sort().join('\u0000'))
      problems.push(`Contradicts group "${other.name}": there only ${from} stands in for ${to}, here ${to} may stand in for ${from}`)
    }
    for (const [from, to] of groupPairs(other)) {
      if (!oneWayOnly(mine, to, from) || reported.has([from, to].sort().join('\u0000'))) continue
      problems.push(`Contradicts group "${other.name}": there ${to} may stand in for ${from}, here only ${from} stands in for ${to}`)
    }
  }
  return problems
}
