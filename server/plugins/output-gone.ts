// When whatever reads the server's output goes away (the process that started it died, a closed pipe),
// every log line fails with EPIPE, and logging that failure fails again: the process would spin at
// full CPU writing errors nobody can read. Exit instead, so a supervisor can start it afresh.
export default defineNitroPlugin(() => {
  for (const stream of [process.stdout, process.stderr]) {
    stream.on('error', (err: NodeJS.ErrnoException) => {
      if (err.code === 'EPIPE' || err.code === 'ERR_STREAM_DESTROYED') process.exit(0)
    })
  }
})
