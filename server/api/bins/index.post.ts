/** Adds a bin; its code is what the label carries, so it must be unique. */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'organiser')
  const body = await parseBody(event, binBody)
  const db = useDb()
  try {
    const [row] = await db.insert(tables.bins).values(body).$returningId()
    await audit(db, user.id, 'bin.create', 'bin', row!.id, { code: body.code })
    setResponseStatus(event, 201)
    return { id: row!.id, ...body }
  }
  catch (err) {
    if (!isDuplicateKey(err)) throw err
    const message = `There is already a bin ${body.code}`
    throw createError({ statusCode: 409, statusMessage: 'Conflict', message, data: { fields: { code: message } } })
  }
})
