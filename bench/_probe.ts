import { readFileSync } from 'node:fs'
import { Client, DEMO } from '../tests/support/client'
import { startStack } from '../tests/support/stack'
function cpu(pid: number) { const f = readFileSync(`/proc/${pid}/stat`, 'utf8').split(') ')[1]!.split(' '); return (Number(f[11]) + Number(f[12])) * 10 }
const N = Number(process.env.PROBE_N || 400)
const stack = await startStack('probe')
try {
  const c = await new Client(stack.baseUrl).login(DEMO.builder)
  const pid = stack.app.child.pid!
  for (const path of (process.env.PROBE_PATHS || '/api/health,/api/_auth/session,/api/my/orders,/api/health,/api/_auth/session,/api/my/orders').split(',')) {
    const lat: number[] = []
    const c0 = cpu(pid)
    for (let i = 0; i < N; i++) {
      const t = performance.now()
      const r = await fetch(stack.baseUrl + path, { headers: { cookie: c.cookie, accept: 'application/json' } })
      await r.arrayBuffer()
      lat.push(performance.now() - t)
    }
    lat.sort((a, b) => a - b)
    console.log(path.padEnd(22), 'median', lat[N >> 1]!.toFixed(2), 'p95', lat[Math.floor(N * 0.95)]!.toFixed(2), 'app cpu/req', ((cpu(pid) - c0) / N).toFixed(2), 'ms')
  }
}
finally { await stack.stop() }
process.exit(0)
