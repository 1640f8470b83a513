import { readdirSync, statSync } from 'node:fs'
import { join, relative } from 'node:path'
import { beforeAll, describe, expect, inject, it } from 'vitest'
import { Client, DEMO, signedIn } from '../support/client'
import { ROOT } from '../support/stack'
import { ROUTES } from './routes'

// Demo people holding exactly one role each (the demo organiser also packs and builds, so use
// accounts made here for the single-role columns).
const base = inject('baseUrl')

function routeFiles(dir: string): string[] {
  return readdirSync(dir).flatMap((name) => {
    const full = join(dir, name)
    return statSync(full).isDirectory() ? routeFiles(full) : [relative(join(ROOT, 'server/api'), full)]
  })
}

describe('role matrix', () => {
  it('has an entry for every API route file (a new route without one fails here)', () => {
    const files = routeFiles(join(ROOT, 'server/api')).sort()
    const listed = ROUTES.map(r => r.file).sort()
    expect(files.filter(f => !listed.includes(f)), 'route files missing from tests/api/routes.ts').toEqual([])
    expect(listed.filter(f => !files.includes(f)), 'matrix entries without a route file').toEqual([])
  })

  const clients: Record<string, Client> = {}
  beforeAll(async () => {
    clients.organiser = await signedIn(base, 'des.okonkwo@club.invalid') // organiser + builder
    clients.packer = await signedIn(base, DEMO.packer) // packer only
    clients.builder = await signedIn(base, DEMO.builder) // builder only
  })

  for (const r of ROUTES) {
    it(`${r.method} ${r.path}: signed out → ${r.roles.includes('public') ? 'allowed' : '401'}`, async () => {
      const res = await new Client(base).req(r.method, r.path, r.method === 'GET' ? undefined : (r.body ?? {}))
      if (r.roles.includes('public')) expect([401, 403]).not.toContain(res.status)
      else expect(res.status).toBe(401)
    })
    for (const role of ['packer', 'builder', 'organiser'] as const) {
      const allowed = r.roles.includes('public') || r.roles.includes('signed-in') || r.roles.includes(role)
        || (role === 'organiser' && r.roles.includes('builder')) // the organiser account here also builds
      it(`${r.method} ${r.path}: ${role} → ${allowed ? 'allowed' : '403'}`, async () => {
        if (r.path === '/api/auth/logout') return expect(r.roles).toContain('public')
        const res = await clients[role]!.req(r.method, r.path, r.method === 'GET' ? undefined : (r.body ?? {}))
        if (allowed) expect([401, 403]).not.toContain(res.status)
        else expect(res.status).toBe(403)
      })
    }
  }
})
