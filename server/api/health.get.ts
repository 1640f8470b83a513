/** Liveness and database reachability, for the start script and load balancers. */
export default defineEventHandler(async (event) => {
  try {
    await useDb().execute(sql`select 1`)
    return { ok: true }
  }
  catch {
    setResponseStatus(event, 503)
    return { ok: false, message: 'The database is not reachable' }
  }
})
