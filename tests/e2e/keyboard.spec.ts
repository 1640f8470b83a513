// Keyboard-only use of the packing station and of the checkout: no mouse, only Tab, Enter, arrows and
// typed text (a keyboard-wedge scanner types too). The kit days, bags and builders are this file's own.
import type { Locator, Page } from '@playwright/test'
import { eq } from 'drizzle-orm'
import * as schema from '../../server/db/schema'
import { labelUrl, signCode } from '../../server/utils/codes'
import { makeBag, openDb, stockLedgerMismatches } from '../api/packing-data'
import { makeKitDay, uid } from '../api/selling-fixtures'
import { DEMO, env, expect, signIn, test } from './fixtures'

/** Presses Tab until `target` has focus; fails when it is not reached (so it is not in the tab order). */
async function tabTo(page: Page, target: Locator, max = 250) {
  await expect(target).toBeVisible()
  for (let i = 0; i < max; i++) {
    if (await target.evaluate(el => el === document.activeElement)) return
    await page.keyboard.press('Tab')
  }
  throw new Error(`Tab never reached ${target}`)
}

async function isFocused(target: Locator) {
  return target.evaluate(el => el === document.activeElement)
}

/** A kit day of our own: one bin holding a 2-off line (count prompt) and a 1-off line; a paid order with its bag. */
async function ownBag() {
  const { conn, db } = await openDb(env.db)
  try {
    const day = await makeKitDay(conn, { seats: 5, lines: [{ qty: 2, stock: 10 }, { qty: 1, stock: 10 }] })
    const [[bin]] = await conn.query<any[]>('select b.code from bins b join lots l on l.bin_id = b.id where l.id = ?', [day.lotIds[0]])
    const [user] = await conn.query<any>('insert into users (email, name, password_hash) values (?, ?, ?)', [`keys.${uid()}@club.invalid`, 'Keyboard Builder', 'not-a-login'])
    const [order] = await conn.query<any>(`insert into orders (build_day_id, offering_id, user_id, option_ids, state, amount_minor, currency, paid_at)
      values (?, ?, ?, '[]', 'paid', 2500, 'GBP', now())`, [day.dayId, day.offeringId, user.insertId])
    const bag = await makeBag(db, order.insertId)
    return { dayId: day.dayId, bagId: bag.id, code: bag.code, bin: bin.code as string }
  }
  finally {
    await conn.end()
  }
}

test('a packer packs, undoes, cancels, stops and seals a bag with the keyboard alone; the scan field keeps focus', async ({ page }) => {
  const bag = await ownBag()
  const binText = signCode('bin', bag.bin, env.labelSecret)
  await signIn(page, DEMO.packer)
  await page.goto('/pack')
  const field = page.getByTestId('scan-field')
  await expect(field).toBeFocused()

  // The build day: arrow keys on the select, then Tab on to the scan field.
  const day = page.getByLabel('Build day')
  await tabTo(page, day)
  for (let i = 0; i < 60 && await day.inputValue() !== String(bag.dayId); i++) await page.keyboard.press('ArrowDown')
  for (let i = 0; i < 60 && await day.inputValue() !== String(bag.dayId); i++) await page.keyboard.press('ArrowUp')
  await expect(day).toHaveValue(String(bag.dayId))
  await tabTo(page, field)

  const scanned = () => page.waitForResponse(r => r.url().endsWith('/api/pack/scan'))
  async function scan(text: string) {
    const res = scanned()
    await page.keyboard.type(`${text}\n`)
    return (await res).status()
  }
  const progress = page.getByTestId('bag-progress')

  expect(await scan(labelUrl(env.base, 'bag', bag.code, env.labelSecret))).toBe(200)
  await expect(page.getByTestId('current-bag')).toContainText(bag.code)
  await expect(field).toBeFocused()

  // The count prompt: "one fewer" and the confirm button are reached with Tab and pressed with Enter.
  expect(await scan(binText)).toBe(200)
  const prompt = page.getByTestId('scan-prompt')
  await expect(prompt).toBeVisible()
  await expect(page.getByTestId('prompt-qty')).toHaveText('2')
  await tabTo(page, prompt.getByRole('button', { name: 'One fewer' }))
  await page.keyboard.press('Enter')
  await expect(page.getByTestId('prompt-qty')).toHaveText('1')
  await tabTo(page, prompt.getByRole('button', { name: 'Put in 1' }))
  const put = scanned()
  await page.keyboard.press('Enter')
  expect((await put).status()).toBe(200)
  await expect(progress).toHaveText('1 / 3')

  // Undo, by Tab and Enter.
  const undo = page.getByRole('button', { name: /^Undo last scan/ })
  await tabTo(page, undo)
  const undone = page.waitForResponse(r => r.url().endsWith('/api/pack/undo'))
  await page.keyboard.press('Enter')
  expect((await undone).status()).toBe(200)
  await expect(progress).toHaveText('0 / 3')

  // A scan typed while a button has focus still lands in the scan field; Cancel by Tab and Enter.
  expect(await scan(binText)).toBe(200)
  await expect(prompt).toBeVisible()
  await tabTo(page, prompt.getByRole('button', { name: 'Cancel' }))
  await page.keyboard.press('Enter')
  await expect(prompt).toBeHidden()

  // Enter alone in the scan field confirms the prompt's count.
  expect(await scan(binText)).toBe(200)
  await expect(prompt).toBeVisible()
  await tabTo(page, field)
  const confirmed = scanned()
  await page.keyboard.press('Enter')
  expect((await confirmed).status()).toBe(200)
  await expect(progress).toHaveText('2 / 3')
  expect(await isFocused(field)).toBe(true)

  // Stop packing (lets go of the bag), then take it up again and finish: the last line seals it.
  await tabTo(page, page.getByRole('button', { name: 'Stop packing this bag' }))
  const released = page.waitForResponse(r => /\/api\/bags\/[^/]+\/release$/.test(r.url()))
  await page.keyboard.press('Enter')
  expect((await released).status()).toBe(200)
  expect(await scan(labelUrl(env.base, 'bag', bag.code, env.labelSecret))).toBe(200)
  expect(await scan(binText)).toBe(200)
  await expect(page.getByTestId('scan-message')).toContainText('complete and sealed')
  await expect(progress).toHaveText('3 / 3')
  await expect(field).toBeFocused()

  const { conn, db } = await openDb(env.db)
  try {
    const [row] = await db.select({ state: schema.bags.state }).from(schema.bags).where(eq(schema.bags.id, bag.bagId))
    expect(row!.state).toBe('sealed')
    expect(await stockLedgerMismatches(db)).toEqual([])
  }
  finally {
    await conn.end()
  }
})

test('a builder buys a kit with the keyboard alone: Tab to Buy, then pay on the pay page', async ({ page }) => {
  const { conn } = await openDb(env.db)
  let day: Awaited<ReturnType<typeof makeKitDay>>
  const email = `keys.buyer.${uid()}@club.invalid`
  try {
    day = await makeKitDay(conn, { seats: 4, lines: [{ qty: 1, stock: 8 }], memberPrice: 1875 })
    const [[demo]] = await conn.query<any[]>('select password_hash from users where email = ?', [DEMO.builder])
    const [u] = await conn.query<any>('insert into users (email, name, password_hash, member) values (?, ?, ?, 1)', [email, 'Keyboard Buyer', demo.password_hash])
    await conn.query('insert into user_roles (user_id, role) values (?, ?)', [u.insertId, 'builder'])
  }
  finally {
    await conn.end()
  }

  // Sign in with the keyboard too: type, Tab, type, Enter.
  await page.goto('/login')
  await tabTo(page, page.getByLabel('E-mail'))
  await page.keyboard.type(email)
  await tabTo(page, page.getByLabel('Password'))
  await page.keyboard.type('buildday-demo')
  await page.keyboard.press('Enter')
  await page.waitForURL(url => !url.pathname.startsWith('/login'))

  await page.goto('/shop')
  const card = page.getByTestId(`offering-${day!.offeringId}`)
  await tabTo(page, card.getByRole('button', { name: 'Buy for £18.75' }))
  await page.keyboard.press('Enter')

  await page.waitForURL(url => url.href.startsWith(env.stripe) && url.pathname.startsWith('/pay/'))
  await tabTo(page, page.getByRole('button', { name: /^Pay / }))
  await page.keyboard.press('Enter')
  await page.waitForURL(/\/shop\/success/)
  await expect(page.getByRole('heading', { name: 'Your place is confirmed' })).toBeVisible()
  await expect(page.getByTestId('confirmed')).toContainText('seat 1')
})
