// A builder buys a kit end to end: the shop, the fake Stripe's own pay page, the return page, and
// the confirmation e-mail in the fake inbox. The kit, stock and builder are this test's own.
import { expect, env, signIn, test, PHONE } from './fixtures'
import { connect, makeKitDay, uid, type Conn, type KitDay } from '../api/selling-fixtures'

let db: Conn
let day: KitDay

async function newBuilder(name: string) {
  const email = `e2e-${uid()}@club.invalid`
  const [[demo]] = await db.query<any[]>('select password_hash from users where email = ?', ['bea.marchetti@club.invalid'])
  const [res] = await db.query<any>('insert into users (email, name, password_hash, member) values (?, ?, ?, 1)', [email, name, demo.password_hash])
  await db.query('insert into user_roles (user_id, role) values (?, ?)', [res.insertId, 'builder'])
  return email
}

test.beforeAll(async () => {
  db = await connect(env.db)
  day = await makeKitDay(db, { seats: 10, lines: [{ qty: 2, stock: 20 }, { qty: 1, stock: 10 }], memberPrice: 2450, option: [{ qty: 1, stock: 10 }, { qty: 1, stock: 0 }] })
})
test.afterAll(async () => { await db?.end() })

test('a builder buys a kit through the pay page and gets the confirmation e-mail', async ({ page }) => {
  const email = await newBuilder('Wilhelmina Test-Buyer')
  await signIn(page, email)
  await page.goto('/shop')
  const card = page.getByTestId(`offering-${day.offeringId}`)
  await expect(card.getByTestId('price')).toHaveText('£24.50')
  // The second band has no stock: choosing it offers the waiting list instead.
  await card.getByLabel('Band 2').check()
  await expect(card.getByRole('button', { name: 'Join the waiting list' })).toBeVisible()
  await card.getByLabel('Band 1').check()
  await card.getByRole('button', { name: 'Buy for £24.50' }).click()

  await page.waitForURL(url => url.href.startsWith(env.stripe) && url.pathname.startsWith('/pay/'))
  await expect(page.getByRole('heading', { name: 'Test payment' })).toBeVisible()
  await expect(page.getByRole('table', { name: 'Order' })).toContainText('£24.50')
  await page.getByRole('button', { name: /^Pay / }).click()

  await page.waitForURL(/\/shop\/success/)
  await expect(page.getByRole('heading', { name: 'Your place is confirmed' })).toBeVisible()
  await expect(page.getByTestId('confirmed')).toContainText('seat 1')

  await page.goto(`${env.mail}/?to=${encodeURIComponent(email)}`)
  await expect(page.getByText(/Your place at Test day .* is confirmed/)).toBeVisible()
  const res = await fetch(`${env.mail}/api/messages/latest?to=${encodeURIComponent(email)}`)
  const mail = await res.json()
  expect(mail.text).toContain('Band 1')
  expect(mail.text).toContain('£24.50')
})

test('a declined card keeps the member on the pay page; cancelling there releases the kit', async ({ page }) => {
  const email = await newBuilder('Bartholomew Test-Decline')
  await page.setViewportSize(PHONE)
  await signIn(page, email)
  await page.goto('/shop')
  const card = page.getByTestId(`offering-${day.offeringId}`)
  await card.getByRole('button', { name: /^Buy for/ }).click()
  await page.waitForURL(url => url.href.startsWith(env.stripe))
  await page.getByRole('button', { name: 'Use a declined card' }).click()
  await expect(page.getByRole('alert')).toContainText(/declined/i)
  await page.getByRole('button', { name: 'Cancel' }).click()
  await page.waitForURL(/\/shop\/cancelled/)
  await expect(page.getByText('Nothing was charged. The kit is back on sale.')).toBeVisible()
  const [rows] = await db.query<any[]>('select o.state, r.state as rstate from orders o join users u on u.id = o.user_id left join reservations r on r.order_id = o.id where u.email = ?', [email])
  expect(rows.length).toBeGreaterThan(0)
  expect(rows.every((r: any) => r.state === 'cancelled' && r.rstate === 'released')).toBe(true)
})
