// Nitro rebuilds the runtime config from the environment for every request that asks for it with the
// event (useRuntimeConfig(event)), which nuxt-auth-utils does on each session read. That is meant for
// hosts whose environment changes per request; ours is fixed at start, so every request shares the
// config read at start. (A profile of the packing bench put ~10% of the server's CPU in that rebuild.)
export default defineNitroPlugin((nitroApp) => {
  const shared = useRuntimeConfig()
  nitroApp.hooks.hook('request', (event) => {
    event.context.nitro ||= { errors: [] }
    event.context.nitro.runtimeConfig = shared
  })
})
