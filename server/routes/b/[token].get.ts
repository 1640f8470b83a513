/**
 * Where a bag's QR code leads: a packer to the packing station with the bag scanned, an organiser to
 * the bag's page, a builder to their kit; a forged or mistyped code is refused here already.
 */
export default defineEventHandler(async (event) => {
  const token = getRouterParam(event, 'token', { decode: true }) ?? ''
  const read = readScan(`/b/${token}`, useRuntimeConfig(event).labelSecret)
  if ('error' in read) return labelRefused(event, read.error)
  const { user } = await getUserSession(event)
  if (!user) return sendRedirect(event, `/login?next=${encodeURIComponent(`/pack?scan=${token}`)}`, 302)
  if (user.roles.includes('packer')) return sendRedirect(event, `/pack?scan=${encodeURIComponent(token)}`, 302)
  if (user.roles.includes('organiser')) return sendRedirect(event, `/bags/${read.code}`, 302)
  return sendRedirect(event, '/my', 302)
})
