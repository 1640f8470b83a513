// CPU used by the app, MariaDB and the bench itself over a stretch of a bench, from /proc (Linux).
import { readdirSync, readFileSync } from 'node:fs'
import { setPriority } from 'node:os'

/** CPU seconds (user + system) a process has used so far, from /proc (0 when it cannot be read). */
function cpuSeconds(pid: number | undefined) {
  try {
    const fields = readFileSync(`/proc/${pid}/stat`, 'utf8').split(') ')[1]!.split(' ')
    return (Number(fields[11]) + Number(fields[12])) / 100 // utime, stime in clock ticks (100 Hz on Linux)
  }
  catch {
    return 0
  }
}

/** The database server's process (shared by every developer's tests here), to show how much of the CPU it took. */
function mariadbPid() {
  for (const d of readdirSync('/proc').filter(n => /^\d+$/.test(n))) {
    try {
      if (readFileSync(`/proc/${d}/comm`, 'utf8').trim() === 'mariadbd') return Number(d)
    }
    catch {}
  }
  return undefined
}

/** CPU used by the app, MariaDB and this bench between start() and the call of the function it returns. */
export function cpuMeter(appPid: number) {
  const db = mariadbPid()
  const at = { app: cpuSeconds(appPid), db: cpuSeconds(db), bench: process.cpuUsage() }
  return () => ({ app: cpuSeconds(appPid) - at.app, db: cpuSeconds(db) - at.db, bench: (() => { const u = process.cpuUsage(at.bench); return (u.user + u.system) / 1e6 })() })
}
export type Cpu = ReturnType<ReturnType<typeof cpuMeter>>

/**
 * The bench drives the app from the same machine: lower this process's priority (KW_BENCH_NICE, default
 * 10; 0 leaves it) once the app has started, so the load generator yields the CPU to the app and MariaDB
 * it measures instead of preempting them mid-request. Returns a line saying what was done.
 */
export function yieldToServer() {
  const nice = Number(process.env.KW_BENCH_NICE ?? 10)
  if (!nice) return 'the bench runs at the same priority as the app (KW_BENCH_NICE=0)'
  try {
    setPriority(nice)
    return `the bench's own process runs at nice ${nice}, below the app and MariaDB, so the load generator does not take the CPU from what it measures (KW_BENCH_NICE=0 to compare)`
  }
  catch (err) {
    return `could not lower the bench's priority (${(err as Error).message}); figures include its competition for the CPU`
  }
}
