import { randomBytes } from 'node:crypto'
import { readFile } from 'node:fs/promises'
import ExcelJS from 'exceljs'
import { drizzle, type MySql2Database } from 'drizzle-orm/mysql2'
import mysql from 'mysql2/promise'
import * as schema from '../../server/db/schema'
import { labelUrl } from '../../server/utils/codes'
import { DEMO, env, expect, signIn, test } from './fixtures'

// An invented kit made for this test: a board on every kit, and a band set of two options,
// each with its own crystal. Numbers are worked by hand in the test below.
const stem = randomBytes(3).toString('hex').toUpperCase()
const names = { board: `E2E board ${stem}`, x40: `E2E crystal ${stem} forty`, x80: `E2E crystal ${stem} eighty` }
const suppliers = { a: `Quartz Direct ${stem}`, b: `Crystal Barn ${stem}` }

async function makeKit() {
  const pool = mysql.createPool({ uri: env.db, timezone: 'Z', dateStrings: ['DATE'], connectionLimit: 2 })
  const db: MySql2Database<typeof schema> = drizzle(pool, { schema, mode: 'default' })
  const id = async (p: Promise<{ id: number }[]>) => (await p)[0]!.id
  try {
    const board = await id(db.insert(schema.parts).values({ kind: 'board', name: names.board }).$returningId())
    const x40 = await id(db.insert(schema.parts).values({ kind: 'crystal', name: names.x40 }).$returningId())
    const x80 = await id(db.insert(schema.parts).values({ kind: 'crystal', name: names.x80 }).$returningId())
    const kit = await id(db.insert(schema.kits).values({ name: `E2E receiver ${stem}`, slug: `e2e-${stem.toLowerCase()}` }).$returningId())
    const revisionId = await id(db.insert(schema.revisions).values({ kitId: kit, label: 'A', state: 'released' }).$returningId())
    const group = await id(db.insert(schema.optionGroups).values({ revisionId, name: 'Band set', rule: 'one' }).$returningId())
    const o40 = await id(db.insert(schema.options).values({ groupId: group, revisionId, name: '40 m', sortOrder: 1 }).$returningId())
    const o80 = await id(db.insert(schema.options).values({ groupId: group, revisionId, name: '80 m', sortOrder: 2 }).$returningId())
    await db.insert(schema.bomLines).values([
      { revisionId, designators: 'PCB1', qty: 1, partId: board },
      { revisionId, designators: 'X1', qty: 1, partId: x40, optionId: o40 },
      { revisionId, designators: 'X1', qty: 1, partId: x80, optionId: o80 },
    ])
    await db.insert(schema.supplierOffers).values([
      { partId: x40, supplier: suppliers.a, supplierRef: 'QD-40', currency: 'GBP', minQty: 1, packSize: 1, breaks: [{ qty: 1, unitPriceMinor: 90 }, { qty: 5, unitPriceMinor: 30 }] },
      { partId: x80, supplier: suppliers.b, supplierRef: 'CB-80', currency: 'GBP', minQty: 10, packSize: 10, breaks: [{ qty: 1, unitPriceMinor: 25 }] },
    ])
    return { board, x40, x80 }
  }
  finally {
    await pool.end()
  }
}

test('receive by scanning a bin label, reconcile a short target, download a buy list priced by its breaks', async ({ page }) => {
  const parts = await makeKit()
  const bin = `E${stem.slice(0, 4)}-1`
  await signIn(page, DEMO.organiser)

  await page.goto('/stock/bins')
  await page.getByLabel('Code').fill(bin)
  await page.getByLabel('Place').fill('E2E shelf')
  await page.getByRole('button', { name: 'Add bin' }).click()
  await expect(page.getByText(`Bin ${bin} added`)).toBeVisible()
  await expect(page.getByRole('table', { name: 'Bins' }).getByRole('row').filter({ hasText: bin }).getByRole('link', { name: 'Label' })).toHaveAttribute('href', /\/api\/bins\/\d+\/label/)

  // The scanner types the label's URL and presses Enter.
  await page.goto('/stock/receive')
  await page.getByLabel('Bin').fill(labelUrl(env.base, 'bin', bin, env.labelSecret))
  await page.getByLabel('Bin').press('Enter')
  await expect(page.getByTestId('receive-bin-bin')).toContainText(bin)
  // The part search gives its hint to screen readers as the field's description (its error, when it has one).
  await expect(page.getByLabel('Part', { exact: true })).toHaveAccessibleDescription('Search by value or name: 4k7, 100n, crystal')
  await page.getByLabel('Part', { exact: true }).fill(names.x40)
  await page.getByRole('button', { name: names.x40 }).click()
  await page.getByLabel('Quantity').fill('8')
  await page.getByLabel('Unit cost').fill('0.35')
  await page.getByLabel('Supplier', { exact: true }).fill(suppliers.a)
  await page.getByRole('button', { name: 'Receive', exact: true }).click()
  await expect(page.getByText(`Received 8 into ${bin}`)).toBeVisible()
  await expect(page.getByTestId('received')).toContainText(`8 × ${names.x40}`)

  // The rest of the stock arrives through the API: 20 boards, 3 of the 80 m crystal.
  for (const [partId, qty] of [[parts.board, 20], [parts.x80, 3]] as const) {
    const res = await page.request.post('/api/lots', { data: { bin, partId, qty, unitCostMinor: 100, receivedOn: '2026-12-01' } })
    expect(res.status()).toBe(201)
  }
  const lots = await (await page.request.get(`/api/lots?partId=${parts.x40}`)).json()
  expect(lots).toMatchObject([{ binCode: bin, onHand: 8, unitCostMinor: 35, supplier: suppliers.a }])

  // 10 × 40 m and 5 × 80 m: the 40 m crystal is 2 short (8 of 10), the 80 m one 2 short (3 of 5).
  await page.goto('/reconcile')
  await page.getByLabel('Kit revision').selectOption({ label: `E2E receiver ${stem} · revision A (released)` })
  await page.getByTestId('mix-row-0').getByLabel('Kits').fill('10')
  await page.getByRole('button', { name: 'Add a choice' }).click()
  await page.getByTestId('mix-row-1').getByLabel('Band set').selectOption({ label: '80 m' })
  await page.getByTestId('mix-row-1').getByLabel('Kits').fill('5')
  await page.getByRole('button', { name: 'Reconcile' }).click()
  // Buildable now in the 10 : 5 proportion: 12 kits would split 8 + 4 (more than 3 of the 80 m), 11 splits 8 + 3.
  await expect(page.getByTestId('buildable')).toContainText('11')
  await expect(page.getByTestId('short-total')).toContainText('4')
  await expect(page.getByRole('table', { name: 'Lines' }).getByRole('row').filter({ hasText: names.x40 })).toContainText('2')

  // Buy list: 40 m: 2 at 0.90 = 1.80, but the 5+ break makes 5 at 0.30 = 1.50 cheaper.
  // 80 m: minimum and pack of 10 at 0.25 = 2.50. Total 4.00.
  await expect(page.getByTestId('buy-total')).toHaveText('Total £4.00')
  await expect(page.getByTestId(`supplier-${suppliers.a}`)).toContainText('£1.50')
  await expect(page.getByTestId(`supplier-${suppliers.b}`)).toContainText('£2.50')

  const [download] = await Promise.all([page.waitForEvent('download'), page.getByTestId('export-xlsx').click()])
  expect(download.suggestedFilename()).toMatch(/^buy-list-.*-15\.xlsx$/)
  const wb = new ExcelJS.Workbook()
  await wb.xlsx.load(await readFile((await download.path())!) as never)
  const rows: unknown[][] = []
  wb.getWorksheet('Buy list')!.eachRow(row => rows.push((row.values as unknown[]).slice(1)))
  expect(rows).toContainEqual([suppliers.a, 'QD-40', names.x40, 2, 5, 5, 0.3, 1.5, 'GBP'])
  expect(rows).toContainEqual([suppliers.b, 'CB-80', names.x80, 2, 10, 1, 0.25, 2.5, 'GBP'])
  expect(rows).toContainEqual(['Total', undefined, undefined, undefined, undefined, undefined, undefined, 4, 'GBP'])

  const [csv] = await Promise.all([page.waitForEvent('download'), page.getByTestId('export-csv').click()])
  const text = await readFile((await csv.path())!, 'utf8')
  expect(text).toContain('Total,,,,,,,4,GBP\r\n')
})
