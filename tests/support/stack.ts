// Starts a whole Kitwright stack for tests: a fresh MariaDB database (migrated, demo scenario loaded),
// the fake inbox, the fake Stripe server and the built app on free loopback ports.
import { spawn, type ChildProcess } from 'node:child_process'
import { randomBytes } from 'node:crypto'
import { mkdtempSync, rmSync } from 'node:fs'
import { createServer } from 'node:net'
import { tmpdir } from 'node:os'
import { join, resolve } from 'node:path'
import mysql from 'mysql2/promise'
import { runMigrations } from '../../server/db/migrate'
import { seedDemo } from '../../server/db/seed/index'
import { startFakeMail, type FakeMail } from '../../fakes/mail/index'
import { startFakeStripe, type FakeStripe } from '../../fakes/stripe/index'

export interface Stack {
  baseUrl: string
  mailUrl: string
  stripeUrl: string
  dbUrl: string
  dbName: string
  webhookSecret: string
  labelSecret: string
  app: AppProcess
  /** The environment the app was started with (to start a second process on the same database). */
  appEnv: Record<string, string>
  mail: FakeMail
  stripe: FakeStripe
  stop(): Promise<void>
}

export interface AppProcess { port: number, url: string, child: ChildProcess, stop(): Promise<void> }

export const ROOT = resolve(import.meta.dirname, '../..')
export const OUTPUT_DIR = process.env.KW_BUILD_DIR ? resolve(process.env.KW_BUILD_DIR, '.output') : join(ROOT, '.output')

export function adminUrl() {
  const url = process.env.KW_DB_ADMIN_URL
  if (!url) throw new Error('KW_DB_ADMIN_URL is not set: run the tests through ./docker-less-start.sh test')
  return url.replace(/\/$/, '')
}

export async function freePort(): Promise<number> {
  return new Promise((ok, fail) => {
    const srv = createServer()
    srv.unref()
    srv.on('error', fail)
    srv.listen(0, '127.0.0.1', () => {
      const port = (srv.address() as { port: number }).port
      srv.close(() => ok(port))
    })
  })
}

/** Creates an empty test database (names always start kitwright_test_) and returns its URL. */
export async function createTestDatabase(tag = 'api') {
  const name = `kitwright_test_${tag}_${Date.now().toString(36)}_${randomBytes(3).toString('hex')}`
  const conn = await mysql.createConnection({ uri: adminUrl() })
  await conn.query(`CREATE DATABASE \`${name}\` CHARACTER SET utf8mb4 COLLATE utf8mb4_unicode_ci`)
  await conn.end()
  return { name, url: `${adminUrl()}/${name}` }
}

/**
 * The app's database URL: through MariaDB's Unix socket when KW_DB_SOCKET names one (the app and the
 * database on one host, as ./docker-less-start.sh runs them: cheaper per query than TCP on loopback).
 */
export function appDbUrl(url: string) {
  const socket = process.env.KW_DB_SOCKET
  return socket ? `${url}?socketPath=${encodeURIComponent(socket)}` : url
}

export async function dropTestDatabase(name: string) {
  if (!name.startsWith('kitwright_test_')) throw new Error(`refusing to drop ${name}`)
  const conn = await mysql.createConnection({ uri: adminUrl() })
  await conn.query(`DROP DATABASE IF EXISTS \`${name}\``)
  await conn.end()
}

export async function waitFor(url: string, ms = 30_000) {
  const until = Date.now() + ms
  let last = ''
  while (Date.now() < until) {
    try {
      const res = await fetch(url)
      if (res.ok) return
      last = `status ${res.status}`
    }
    catch (err) {
      last = (err as Error).message
    }
    await new Promise(r => setTimeout(r, 150))
  }
  throw new Error(`nothing answered at ${url} (${last})`)
}

/** Starts the built app (node .output/server/index.mjs) with the given environment on a free port. */
export async function startApp(env: Record<string, string>, port?: number): Promise<AppProcess> {
  const p = port ?? await freePort()
  // KW_APP_NODE_ARGS: extra node flags for the app, e.g. "--cpu-prof --cpu-prof-dir=/tmp/prof" when profiling a bench.
  const nodeArgs = (process.env.KW_APP_NODE_ARGS ?? '').split(' ').filter(Boolean)
  const child = spawn(process.execPath, [...nodeArgs, join(OUTPUT_DIR, 'server/index.mjs')], {
    env: { ...process.env, ...env, PORT: String(p), HOST: '127.0.0.1', NODE_ENV: 'production' },
    stdio: ['ignore', 'pipe', 'pipe'],
  })
  // The app dies with whoever started it (a bench or test run that crashes leaves no server behind).
  const killChild = () => { if (child.exitCode === null && !child.signalCode) child.kill('SIGKILL') }
  process.once('exit', killChild)
  child.once('exit', () => process.off('exit', killChild))
  let log = ''
  child.stdout!.on('data', (d) => { log += d })
  child.stderr!.on('data', (d) => { log += d })
  const url = `http://127.0.0.1:${p}`
  try {
    await waitFor(`${url}/api/health`)
  }
  catch (err) {
    child.kill('SIGKILL')
    throw new Error(`${(err as Error).message}\n--- app log ---\n${log.slice(-4000)}`)
  }
  if (process.env.KW_TEST_APP_LOG) {
    child.stdout!.pipe(process.stdout)
    child.stderr!.pipe(process.stderr)
  }
  return {
    port: p,
    url,
    child,
    stop: () => new Promise<void>((ok) => {
      if (child.exitCode !== null || child.signalCode) return ok()
      child.once('exit', () => ok())
      child.kill('SIGTERM')
      setTimeout(() => child.kill('SIGKILL'), 3000).unref()
    }),
  }
}

export async function startStack(tag = 'api'): Promise<Stack> {
  const db = await createTestDatabase(tag)
  await runMigrations(db.url)
  await seedDemo(db.url)
  const mail = await startFakeMail({ smtpPort: 0, httpPort: 0 })
  const appPort = await freePort()
  const webhookSecret = `whsec_test_${randomBytes(8).toString('hex')}`
  const stripe = await startFakeStripe({ port: 0, webhookUrl: `http://127.0.0.1:${appPort}/api/stripe/webhook`, webhookSecret, webhookRetryDelaysMs: [200, 400, 800], expiryCheckMs: 200 })
  const uploads = mkdtempSync(join(tmpdir(), 'kw-uploads-'))
  const labelSecret = randomBytes(16).toString('hex')
  const env = {
    NUXT_DATABASE_URL: appDbUrl(db.url),
    NUXT_SESSION_PASSWORD: randomBytes(24).toString('hex'),
    NUXT_LABEL_SECRET: labelSecret,
    NUXT_SMTP_PORT: String(mail.smtpPort),
    NUXT_STRIPE_PORT: String(stripe.port),
    NUXT_STRIPE_WEBHOOK_SECRET: webhookSecret,
    NUXT_PUBLIC_URL: `http://127.0.0.1:${appPort}`,
    NUXT_UPLOADS_DIR: uploads,
    KW_SIGNIN_MAX_PER_IP: '1000',
  }
  const app = await startApp(env, appPort)
  return {
    baseUrl: app.url,
    mailUrl: mail.url,
    stripeUrl: stripe.url,
    dbUrl: db.url,
    dbName: db.name,
    webhookSecret,
    labelSecret,
    app,
    appEnv: env,
    mail,
    stripe,
    async stop() {
      await app.stop()
      await stripe.close()
      await mail.close()
      rmSync(uploads, { recursive: true, force: true })
      if (!process.env.KW_KEEP_TEST_DB) await dropTestDatabase(db.name)
    },
  }
}
