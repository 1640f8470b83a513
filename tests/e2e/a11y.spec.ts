// Automated accessibility check (axe-core, through @axe-core/playwright) of the main pages of each
// role: no serious or critical violation of the WCAG 2.1 A and AA rules axe knows. Axe finds only
// part of what a person with a screen reader or a keyboard meets; keyboard.spec.ts covers the rest
// for the packing station and the checkout.
import AxeBuilder from '@axe-core/playwright'
import type { Page } from '@playwright/test'
import { labelUrl } from '../../server/utils/codes'
import { makeBag, openDb } from '../api/packing-data'
import { makeKitDay, uid } from '../api/selling-fixtures'
import { DEMO, env, expect, PHONE, signIn, test } from './fixtures'

type Who = 'organiser' | 'packer' | 'builder' | null

const PAGES: { path: string, who: Who, heading: string | RegExp }[] = [
  { path: '/login', who: null, heading: 'Sign in' },
  { path: '/register', who: null, heading: 'Create an account' },
  { path: '/organiser', who: 'organiser', heading: 'Overview' },
  { path: '/parts', who: 'organiser', heading: 'Parts' },
  { path: '/kits', who: 'organiser', heading: 'Kits' },
  { path: '/stock', who: 'organiser', heading: 'Stock' },
  { path: '/reconcile', who: 'organiser', heading: 'Reconcile stock' },
  { path: '/build-days', who: 'organiser', heading: 'Build days' },
  { path: '/orders', who: 'organiser', heading: 'Orders' },
  { path: '/people', who: 'organiser', heading: 'People' },
  { path: '/pack', who: 'packer', heading: 'Packing station' },
  { path: '/pack/progress', who: 'packer', heading: 'Packing progress' },
  { path: '/spares', who: 'packer', heading: 'Spares desk' },
  { path: '/my', who: 'builder', heading: 'My kit' },
  { path: '/shop', who: 'builder', heading: 'Buy a kit' },
]

const EMAIL = { organiser: DEMO.organiser, packer: DEMO.packer, builder: DEMO.builder }

/** A paid bag of a kit day of this test's own (own parts and stock), so demo stock and bags stay as other tests expect. */
async function ownBag() {
  const { conn, db } = await openDb(env.db)
  try {
    const day = await makeKitDay(conn, { seats: 5, lines: [{ qty: 2, stock: 10 }, { qty: 1, stock: 10 }] })
    const [user] = await conn.query<any>('insert into users (email, name, password_hash) values (?, ?, ?)', [`a11y.${uid()}@club.invalid`, 'A11y Builder', 'not-a-login'])
    const [order] = await conn.query<any>(`insert into orders (build_day_id, offering_id, user_id, option_ids, state, amount_minor, currency, paid_at)
      values (?, ?, ?, '[]', 'paid', 2500, 'GBP', now())`, [day.dayId, day.offeringId, user.insertId])
    const bag = await makeBag(db, order.insertId)
    return { dayId: day.dayId, code: bag.code }
  }
  finally {
    await conn.end()
  }
}

/** Serious and critical violations, one readable line per rule with where it was found. */
async function seriousViolations(page: Page) {
  const result = await new AxeBuilder({ page }).withTags(['wcag2a', 'wcag2aa', 'wcag21a', 'wcag21aa']).analyze()
  return result.violations
    .filter(v => v.impact === 'serious' || v.impact === 'critical')
    .map(v => `${v.impact} ${v.id}: ${v.help} — ${v.nodes.slice(0, 4).map(n => `${n.target.join(' ')}${n.failureSummary ? ` (${n.failureSummary.split('\n').slice(1, 2).join('').trim()})` : ''}`).join('; ')}${v.nodes.length > 4 ? `; and ${v.nodes.length - 4} more` : ''}`)
}

async function open(page: Page, path: string, who: Who, heading: string | RegExp) {
  if (who) await signIn(page, EMAIL[who])
  await page.goto(path)
  await expect(page.getByRole('heading', { level: 1, name: heading })).toBeVisible()
  await page.waitForLoadState('networkidle')
}

for (const { path, who, heading } of PAGES) {
  test(`${path} (${who ?? 'signed out'}) has no serious accessibility violation`, async ({ page }) => {
    await open(page, path, who, heading)
    expect(await seriousViolations(page)).toEqual([])
  })
}

// Detail pages, reached from the first record the role's list gives.
const DETAIL: { name: string, who: Who, find: (page: Page) => Promise<string>, heading: string | RegExp }[] = [
  { name: 'a kit', who: 'organiser', heading: /.+/, find: async page => `/kits/${(await json(page, '/api/kits'))[0].id}` },
  { name: 'a build day', who: 'organiser', heading: /.+/, find: async page => `/build-days/${(await json(page, '/api/build-days'))[0].id}` },
  { name: 'an order', who: 'organiser', heading: /^Order #/, find: async page => `/orders/${(await json(page, '/api/orders')).rows[0].id}` },
  { name: 'a bag', who: 'organiser', heading: /^Bag /, find: async page => `/bags/${(await json(page, '/api/bags')).bags[0].code}` },
  { name: 'receiving stock', who: 'organiser', heading: 'Stock', find: async () => '/stock/receive' },
  { name: 'my bag', who: 'builder', heading: /.+/, find: async page => `/my/bags/${(await json(page, '/api/my/orders')).orders.find((o: any) => o.bag).bag.id}` },
  { name: 'the report form', who: 'builder', heading: 'Report a missing part', find: async page => `/my/bags/${(await json(page, '/api/my/orders')).orders.find((o: any) => o.bag).bag.id}/report` },
]

async function json(page: Page, path: string) {
  const res = await page.request.get(path)
  expect(res.status(), path).toBe(200)
  return res.json()
}

for (const { name, who, find, heading } of DETAIL) {
  test(`${name} (${who}) has no serious accessibility violation`, async ({ page }) => {
    await signIn(page, EMAIL[who!])
    await open(page, await find(page), null, heading)
    expect(await seriousViolations(page)).toEqual([])
  })
}

test.describe('at phone width', () => {
  test.use({ viewport: PHONE })
  for (const { path, who, heading } of PAGES.filter(p => ['/pack', '/my', '/shop', '/login'].includes(p.path))) {
    test(`${path} (${who ?? 'signed out'}) has no serious accessibility violation`, async ({ page }) => {
      await open(page, path, who, heading)
      expect(await seriousViolations(page)).toEqual([])
    })
  }

  test('the open menu has no serious accessibility violation', async ({ page }) => {
    await open(page, '/organiser', 'organiser', 'Overview')
    await page.getByRole('button', { name: 'Menu' }).click()
    await expect(page.locator('#mobile-nav')).toBeVisible()
    expect(await seriousViolations(page)).toEqual([])
  })
})

test('the packing station with a bag on it has no serious accessibility violation', async ({ page }) => {
  const bag = await ownBag()
  await open(page, '/pack', 'packer', 'Packing station')
  await page.getByLabel('Build day').selectOption(String(bag.dayId))
  const scanned = page.waitForResponse(r => r.url().endsWith('/api/pack/scan'))
  await page.getByTestId('scan-field').fill(labelUrl(env.base, 'bag', bag.code, env.labelSecret))
  await page.keyboard.press('Enter')
  expect((await scanned).status()).toBe(200)
  await expect(page.getByTestId('current-bag')).toContainText(bag.code)
  expect(await seriousViolations(page)).toEqual([])
})
