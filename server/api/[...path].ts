// Catch-all on purpose (every method): an unknown API path is a JSON 404, never the app's HTML page.
export default defineEventHandler((event) => {
  throw createError({ statusCode: 404, statusMessage: 'Not found', message: `No API route for ${event.method} ${event.path}` })
})
