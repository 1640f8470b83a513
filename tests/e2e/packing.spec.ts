import { and, eq } from 'drizzle-orm'
import * as schema from '../../server/db/schema'
import { labelUrl } from '../../server/utils/codes'
import { openDb, stockLedgerMismatches } from '../api/packing-data'
import { DEMO, env, expect, PHONE, signIn, test } from './fixtures'

test.use({ viewport: PHONE })

const scanText = (kind: 'bag' | 'bin', code: string) => labelUrl(env.base, kind, code, env.labelSecret)

/** A pack's answer carries the changed line (the whole bag only when it seals): patch the test's copy. */
function applyPacked(view: any, body: any) {
  if (body.bag) return body.bag
  for (const p of view.pouches) for (const it of p.items) if (it.itemId === body.item.itemId) Object.assign(it, body.item)
  return view
}

test('a packer packs a whole demo bag at phone width with a keyboard-wedge scanner, one wrong bin and one stand-in', async ({ page }) => {
  test.setTimeout(240_000) // about 60 scans, each waited for on screen
  const { conn, db } = await openDb(env.db)
  try {
    // The first demo Wren 40 bag (40 m band set): Q1 is the EBC transistor, bin E-02 holds the CBE stand-in.
    const [bag] = await db.select({ id: schema.bags.id, code: schema.bags.code }).from(schema.bags)
      .innerJoin(schema.orders, eq(schema.orders.id, schema.bags.orderId))
      .innerJoin(schema.revisions, eq(schema.revisions.id, schema.bags.revisionId))
      .innerJoin(schema.kits, eq(schema.kits.id, schema.revisions.kitId))
      .where(and(eq(schema.kits.slug, 'wren-40'), eq(schema.orders.seat, 1)))

    await signIn(page, DEMO.packer)
    await expect(page).toHaveURL(/\/pack$/)
    await expect(page.getByRole('heading', { name: 'Packing station' })).toBeVisible()
    await expect(page.getByTestId('scan-field')).toBeFocused()

    const scanned = () => page.waitForResponse(r => r.url().endsWith('/api/pack/scan'))
    async function scan(text: string) {
      const res = scanned()
      await page.keyboard.type(`${text}\n`)
      return res
    }

    const claimed = await scan(scanText('bag', bag!.code))
    expect(claimed.status()).toBe(200)
    let view = (await claimed.json()).bag
    await expect(page.getByTestId('current-bag')).toContainText(bag!.code)
    await expect(page.getByTestId('bag-progress')).toHaveText('0 / 51')

    // A bin no open line of this bag takes: refused, with the reason on screen.
    expect((await scan(scanText('bin', 'F-05'))).status()).toBe(409)
    await expect(page.getByTestId('scan-message')).toContainText('Wrong bin')
    await expect(page.locator('[data-tone="bad"]')).toBeVisible()

    // The stand-in: asked once with its pinout warning, confirmed with Enter.
    const ask = await scan(scanText('bin', 'E-02'))
    expect((await ask.json()).outcome).toBe('stand-in')
    await expect(page.getByTestId('scan-prompt')).toContainText('Pinout differs')
    const confirmed = scanned()
    await page.keyboard.press('Enter')
    const standIn = await (await confirmed).json()
    expect(standIn.outcome).toBe('packed')
    view = applyPacked(view, standIn)
    await expect(page.getByTestId('line-Q1')).toContainText('Stand-in: NPN small-signal transistor, CBE')

    // Every other line from the bin the station suggests; counts are confirmed with Enter.
    for (let guard = 0; guard < 120; guard++) {
      const open = view.pouches.flatMap((p: any) => p.items).find((i: any) => i.qtyPacked < i.qtyNeeded)
      if (!open) break
      const res = await scan(scanText('bin', open.bins[0]))
      expect(res.status(), await res.text()).toBe(200)
      let body = await res.json()
      if (body.outcome === 'count') {
        await expect(page.getByTestId('scan-prompt')).toBeVisible()
        const counted = scanned()
        await page.keyboard.press('Enter')
        body = await (await counted).json()
      }
      expect(body.outcome).toBe('packed')
      view = applyPacked(view, body)
    }

    await expect(page.getByTestId('scan-message')).toContainText('complete and sealed')
    await expect(page.getByTestId('bag-progress')).toHaveText('51 / 51')
    await expect(page.getByTestId('current-bag')).toContainText('Sealed by Pip Achterberg')
    const [row] = await db.select({ state: schema.bags.state }).from(schema.bags).where(eq(schema.bags.id, bag!.id))
    expect(row!.state).toBe('sealed')
    expect(await stockLedgerMismatches(db)).toEqual([])

    // The bag page shows the history: the refusal, the packs and the seal.
    await page.goto(`/bags/${bag!.code}`)
    await expect(page.getByRole('heading', { name: `Bag ${bag!.code}` })).toBeVisible()
    await expect(page.getByText('Pip Achterberg sealed the bag')).toBeVisible()
    await expect(page.getByText(/was refused/).first()).toBeVisible()
  }
  finally {
    await conn.end()
  }
})
