export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'organiser')
  const values = await parseBody(event, partBody)
  const db = useDb()
  const id = await db.transaction(async (tx) => {
    const [row] = await tx.insert(tables.parts).values(values).$returningId()
    await audit(tx, user.id, 'part.create', 'part', row!.id, { name: values.name })
    return row!.id
  })
  setResponseStatus(event, 201)
  return { id, ...values }
})
