import { copyFileSync, existsSync, readFileSync, readdirSync, statSync } from 'node:fs'
import { join } from 'node:path'

type Exports = string | null | Exports[] | { [key: string]: Exports }

function syncTargets(e: Exports, acc: string[] = [], sync = false): string[] {
  if (typeof e === 'string') {
    if (sync) acc.push(e)
  }
  else if (Array.isArray(e)) e.forEach(x => syncTargets(x, acc, sync))
  else if (e && typeof e === 'object') Object.entries(e).forEach(([k, x]) => syncTargets(x, acc, sync || k === 'module-sync'))
  return acc
}

/**
 * Node 20.19+ resolves `require()` through a package's "module-sync" export condition, which Nitro's file
 * tracer does not follow; a few small packages (pulled in by exceljs and form-data) then miss their
 * require.mjs in .output and the server fails at start. Copy every such file from the source node_modules.
 */
export function copyModuleSyncTargets(outputModules: string, sourceModules: string) {
  if (!existsSync(outputModules)) return 0
  const pkgs = readdirSync(outputModules).flatMap(n => n.startsWith('@') ? readdirSync(join(outputModules, n)).map(m => `${n}/${m}`) : [n])
  let copied = 0
  for (const p of pkgs) {
    const pj = join(outputModules, p, 'package.json')
    if (!existsSync(pj)) continue
    const pkg = JSON.parse(readFileSync(pj, 'utf8')) as { exports?: Exports }
    for (const t of syncTargets(pkg.exports ?? null)) {
      if (!t.startsWith('./') || t.includes('*')) continue
      const dest = join(outputModules, p, t)
      const from = join(sourceModules, p, t)
      if (!existsSync(dest) && existsSync(from) && statSync(from).isFile()) {
        copyFileSync(from, dest)
        copied++
      }
    }
  }
  return copied
}
