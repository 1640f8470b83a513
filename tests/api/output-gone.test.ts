// A server whose output nobody reads any more (the process that started it died) must not spin writing
// errors about its own log: it exits, so a supervisor can start it afresh.
import { spawn } from 'node:child_process'
import { join } from 'node:path'
import { expect, inject, it } from 'vitest'
import { freePort, OUTPUT_DIR } from '../support/stack'

it('exits when its output pipe is gone and it has something to log', async () => {
  const port = await freePort()
  const closedDbPort = await freePort() // nothing listens there: every database call fails and is logged
  const env = { ...process.env, ...inject('appEnv'), NUXT_DATABASE_URL: `mysql://nobody:x@127.0.0.1:${closedDbPort}/none`, PORT: String(port), HOST: '127.0.0.1', NODE_ENV: 'production' }
  const child = spawn(process.execPath, [join(OUTPUT_DIR, 'server/index.mjs')], { env, stdio: ['ignore', 'pipe', 'pipe'] })
  const exited = new Promise<number | null>(ok => child.once('exit', code => ok(code)))
  try {
    let up = false
    for (let i = 0; i < 120 && !up; i++) {
      up = await fetch(`http://127.0.0.1:${port}/api/health`).then(() => true, () => false)
      if (!up) await new Promise(r => setTimeout(r, 250))
    }
    expect(up).toBe(true)
    // Whoever read the output is gone.
    child.stdout!.destroy()
    child.stderr!.destroy()
    // A sign-in needs the database, which cannot be reached: the server logs it (and answers 503).
    const res = await fetch(`http://127.0.0.1:${port}/api/auth/login`, { method: 'POST', headers: { 'content-type': 'application/json', 'origin': `http://127.0.0.1:${port}` }, body: JSON.stringify({ email: 'a@club.invalid', password: 'whatever-long' }) }).catch(() => null)
    if (res) expect(res.status).toBe(503)
    const code = await Promise.race([exited, new Promise<'still running'>(ok => setTimeout(() => ok('still running'), 10_000))])
    expect(code).toBe(0)
  }
  finally {
    if (child.exitCode === null && !child.signalCode) child.kill('SIGKILL')
  }
}, 60_000)
