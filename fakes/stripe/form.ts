/** Nested form values as Stripe's API reads them: strings at the leaves. */
export type FormValue = string | FormValue[] | { [key: string]: FormValue }
export type FormObject = { [key: string]: FormValue }

/** Thrown when a key mixes shapes (e.g. `a=1&a[b]=2`); the server answers 400. */
export class FormShapeError extends Error {
  constructor(public readonly param: string) {
    super(`Invalid value for ${param}: it is used both as a single value and as a nested object or list.`)
  }
}

/** Splits `line_items[0][price_data][currency]` into ['line_items', '0', 'price_data', 'currency']. */
export function splitKey(key: string): string[] {
  const open = key.indexOf('[')
  if (open <= 0) return [key]
  const parts = [key.slice(0, open)]
  let pos = open
  while (pos < key.length) {
    const close = key.indexOf(']', pos)
    // Anything that is not a run of [..] groups is not bracket syntax: keep the whole key flat.
    if (key[pos] !== '[' || close < 0) return [key]
    parts.push(key.slice(pos + 1, close))
    pos = close + 1
  }
  return parts
}

/**
 * Parses an application/x-www-form-urlencoded body (or query string) with bracket keys into
 * nested objects. Numeric or empty brackets become arrays (`a[0]=x`, `a[]=x`); sparse indexes
 * are compacted in index order, as the SDK only ever sends dense lists.
 */
export function parseForm(body: string): FormObject {
  const root: FormObject = {}
  for (const [rawKey, value] of new URLSearchParams(body)) {
    const path = splitKey(rawKey)
    setPath(root, path, value, rawKey)
  }
  return compactArrays(root) as FormObject
}

type Node = { [key: string]: unknown }
const ARRAY_MARK = Symbol('array')

function setPath(root: Node, path: string[], value: string, rawKey: string): void {
  let node: Node = root
  for (let i = 0; i < path.length; i++) {
    let seg = path[i]!
    const last = i === path.length - 1
    if (seg === '' && (node as Record<symbol, unknown>)[ARRAY_MARK]) seg = String(nextIndex(node))
    if (last) {
      if (node[seg] !== undefined && typeof node[seg] === 'object') throw new FormShapeError(rawKey)
      node[seg] = value
      return
    }
    const childIsArray = path[i + 1] === '' || /^\d+$/.test(path[i + 1]!)
    let child = node[seg]
    if (child === undefined) {
      child = {}
      if (childIsArray) (child as Record<symbol, unknown>)[ARRAY_MARK] = true
      node[seg] = child
    } else if (typeof child !== 'object') {
      throw new FormShapeError(rawKey)
    }
    node = child as Node
  }
}

function nextIndex(node: Node): number {
  const keys = Object.keys(node).filter((k) => /^\d+$/.test(k)).map(Number)
  return keys.length ? Math.max(...keys) + 1 : 0
}

function compactArrays(node: unknown): FormValue {
  if (typeof node === 'string') return node
  const obj = node as Node
  const keys = Object.keys(obj)
  const isArray = (obj as Record<symbol, unknown>)[ARRAY_MARK] && keys.every((k) => /^\d+$/.test(k))
  if (isArray) {
    return keys.map(Number).sort((a, b) => a - b).map((k) => compactArrays(obj[String(k)]))
  }
  const out: FormObject = {}
  for (const k of keys) out[k] = compactArrays(obj[k])
  return out
}
