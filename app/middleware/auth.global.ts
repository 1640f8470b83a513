import type { Role } from '#shared/types/auth'

// Comfort only: the server checks every API call itself.
export default defineNuxtRouteMiddleware(async (to) => {
  if (to.meta.public) return
  const { loggedIn, user } = useUserSession()
  if (!loggedIn.value) return navigateTo({ path: '/login', query: { next: to.fullPath } })
  const roles = to.meta.roles as Role[] | undefined
  if (roles?.length && !roles.some(r => user.value?.roles.includes(r))) {
    return navigateTo(roleHome(user.value?.roles))
  }
})
