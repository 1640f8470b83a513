// Releases lapsed checkout holds and offers freed places to the waiting list, every KW_SWEEP_MS
// (15 s by default; 0 turns it off). Safe with several app processes: every release is a guarded UPDATE
// and every offer is made under the build day's row lock. The sweeper is imported lazily so that the
// server's start-up chunk does not carry the whole of server/utils.
export default defineNitroPlugin((nitroApp) => {
  const every = Number(process.env.KW_SWEEP_MS ?? 15_000)
  if (!Number.isFinite(every) || every <= 0) return
  let running = false
  const timer = setInterval(async () => {
    if (running) return
    running = true
    try {
      const { sweepSelling } = await import('../utils/orders')
      await sweepSelling()
    }
    catch (err) {
      console.error('[selling] sweeping lapsed holds failed:', (err as Error).message)
    }
    finally {
      running = false
    }
  }, every)
  timer.unref()
  nitroApp.hooks.hook('close', () => clearInterval(timer))
})
