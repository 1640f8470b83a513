// Drizzle builds a query's SQL text anew on every call, which for a wide select with joins costs about
// half a millisecond of CPU. The hottest reads (packing station, builders' pages) are built once per
// database handle with placeholders: prepared in Drizzle's sense, the text kept and the values filled in.

/** Makes `make(db)` once per database handle (the pool's, or a transaction's) and returns it after. */
export function preparedPer<D extends object, P>(make: (db: D) => P) {
  const cache = new WeakMap<D, P>()
  return (db: D) => {
    let p = cache.get(db)
    if (!p) cache.set(db, p = make(db))
    return p
  }
}
