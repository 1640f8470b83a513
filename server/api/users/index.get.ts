export default defineEventHandler(async (event) => {
  await requireRole(event, 'organiser')
  const db = useDb()
  const [users, roles] = await Promise.all([
    db.select({ id: tables.users.id, email: tables.users.email, name: tables.users.name, member: tables.users.member, callsign: tables.users.callsign }).from(tables.users).orderBy(tables.users.name),
    db.select().from(tables.userRoles),
  ])
  return users.map(u => ({ ...u, roles: roles.filter(r => r.userId === u.id).map(r => r.role) }))
})
