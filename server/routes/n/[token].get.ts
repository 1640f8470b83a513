/** Where a bin's QR code leads: the packing station, which reads it as a bin scan for the current bag. */
export default defineEventHandler(async (event) => {
  const token = getRouterParam(event, 'token', { decode: true }) ?? ''
  const read = readScan(`/n/${token}`, useRuntimeConfig(event).labelSecret)
  if ('error' in read) return labelRefused(event, read.error)
  const { user } = await getUserSession(event)
  if (!user) return sendRedirect(event, `/login?next=${encodeURIComponent(`/pack?scan=${token}`)}`, 302)
  return sendRedirect(event, `/pack?scan=${encodeURIComponent(token)}`, 302)
})
