import { mkdtempSync, rmSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import ExcelJS from 'exceljs'
import { DEMO, PHONE, expect, signIn, test, type Page } from './fixtures'

const tag = Date.now().toString(36)

// A designer's messy BOM: a title line, mixed value styles (RKM 6K19, 47k, 10R, "100n 50V X7R"
// style ratings, a bare "22"), a range with a gap (R1-R3, R5), a quantity that disagrees with its
// designators (C3-C5 × 2), a reversed range (R9-R8) and a value two catalogue parts share (1k).
const MESSY = [
  `Part list for the Plover ${tag},,,,`,
  'Ref,Qty,Value,Package,Stage',
  '"R1-R3, R5",4,6K19 1/4W,Axial,Audio',
  'R6,1,47k,Axial,Audio',
  'C1 C2,2,10n 50V X7R,Disc,Power',
  'C3-C5,2,4n7,Disc,Power',
  'C6,1,22,Disc,Power',
  `Q1,1,NPN-${tag},TO-92,Audio`,
  'R7,1,1k,Axial,Audio',
  'R9-R8,2,10R,Axial,Power',
].join('\r\n')

async function fixRow(page: Page, row: number, fields: { designators?: string, qty?: string, value?: string }) {
  const card = page.getByTestId(`import-row-${row}`)
  await card.getByRole('button', { name: 'Fix this row' }).click()
  if (fields.designators) await card.getByLabel('Designators').fill(fields.designators)
  if (fields.qty) await card.getByLabel('Qty').fill(fields.qty)
  if (fields.value) await card.getByLabel('Value').fill(fields.value)
  await card.getByRole('button', { name: 'Apply' }).click()
}

test.describe('kits and BOM revisions', () => {
  test('imports a messy CSV, fixes the flagged rows, releases A, makes B with two changes, diffs and downloads the workbook', async ({ page }) => {
    test.setTimeout(180_000) // a long flow of many steps, on a machine shared by several builds
    page.on('dialog', d => d.accept())
    await signIn(page, DEMO.organiser)
    await page.goto('/kits')
    await page.getByRole('button', { name: 'New kit' }).click()
    await page.getByLabel('Name').fill(`Plover ${tag}`)
    await page.getByLabel('Designer credit').fill('Invented for this test')
    await page.getByRole('button', { name: 'Create kit' }).click()
    await expect(page.getByRole('heading', { name: `Plover ${tag}` })).toBeVisible()

    // Upload and columns
    await page.getByRole('link', { name: 'Import a BOM' }).click()
    await page.getByTestId('bom-file').setInputFiles({ name: 'plover.csv', mimeType: 'text/csv', buffer: Buffer.from(MESSY) })
    await expect(page.getByText('8 rows under the header on row 2')).toBeVisible()
    await expect(page.getByLabel('Column A · “Ref”')).toHaveValue('designators')
    await expect(page.getByLabel('Column C · “Value”')).toHaveValue('value')
    await page.getByRole('button', { name: 'Preview the rows' }).click()

    // Preview: readings, flags and matches
    await expect(page.getByTestId('import-row-3').getByTestId('reading')).toHaveText('resistor 6.19 kΩ, 0.25 W')
    await expect(page.getByTestId('import-row-3')).toContainText('R1-R3, R5')
    await expect(page.getByTestId('import-row-6')).toContainText('Quantity 2 differs from the 3 designators')
    await expect(page.getByTestId('import-row-7')).toContainText('"22" has no unit')
    await expect(page.getByTestId('import-row-9')).toContainText('needs a choice')
    await expect(page.getByTestId('import-row-10')).toContainText('is reversed')
    await expect(page.getByTestId('commit-import')).toBeDisabled()

    await fixRow(page, 10, { designators: 'R8-R9' })
    await expect(page.getByTestId('import-row-10')).not.toContainText('is reversed')
    await fixRow(page, 6, { qty: '3' })
    await expect(page.getByTestId('import-row-6')).not.toContainText('differs')
    await fixRow(page, 7, { value: '22p' })
    await expect(page.getByTestId('import-row-7').getByTestId('reading')).toHaveText('capacitor 22 pF')
    await expect(page.getByTestId('import-row-7')).toContainText('catalogue part')
    await page.getByTestId('import-row-9').getByLabel('Catalogue part').selectOption({ label: 'Use Resistor 1 kΩ 1 %' })
    await expect(page.getByTestId('commit-import')).toBeEnabled()
    await page.getByTestId('commit-import').click()

    // Draft A
    await expect(page.getByRole('heading', { name: 'Revision A' })).toBeVisible()
    await expect(page.getByTestId('revision-state')).toHaveText('draft')
    const table = page.getByTestId('line-table')
    await expect(table.getByTestId('line-row')).toHaveCount(8)
    await expect(table).toContainText('R1-R3, R5')
    await expect(table).toContainText('R8, R9')
    await expect(table).not.toContainText('needs a part')
    await page.getByRole('button', { name: 'Release revision A' }).click()
    await expect(page.getByTestId('revision-state')).toHaveText('released · frozen')
    await expect(page.getByRole('button', { name: /^Edit line/ })).toHaveCount(0)

    // Revision B: a new part on R6, and R7 removed
    await page.getByRole('button', { name: 'New revision from A' }).click()
    await expect(page.getByRole('heading', { name: 'Revision B' })).toBeVisible()
    await expect(page.getByTestId('revision-state')).toHaveText('draft')
    await page.getByRole('button', { name: 'Edit line R6' }).click()
    const editor = page.getByRole('form', { name: 'Edit line R6' })
    await editor.getByRole('button', { name: 'Change' }).click()
    await editor.getByLabel('Catalogue part').fill('100k')
    await editor.getByRole('button', { name: /^Resistor 100 kΩ/ }).click()
    await editor.getByRole('button', { name: 'Save line' }).click()
    await expect(table.getByTestId('line-row').filter({ hasText: 'R6' })).toContainText('Resistor 100 kΩ')
    await page.getByRole('button', { name: 'Delete line R7' }).click()
    await expect(table.getByTestId('line-row')).toHaveCount(7)

    // The diff, side by side
    await page.getByRole('link', { name: 'Compare with the previous revision' }).click()
    await expect(page.getByRole('heading', { name: 'Changes from A to B' })).toBeVisible()
    await expect(page.getByTestId('diff-summary')).toHaveText('0 added · 1 removed · 1 changed · 6 unchanged')
    const changed = page.getByTestId('diff-row').filter({ hasText: 'changed' })
    await expect(changed).toContainText('Resistor 47 kΩ')
    await expect(changed).toContainText('Resistor 100 kΩ')
    await expect(page.getByTestId('diff-row').filter({ hasText: 'removed' })).toContainText('Resistor 1 kΩ 1 %')

    // The workbook of B reads back
    await page.goBack()
    await expect(page.getByRole('heading', { name: 'Revision B' })).toBeVisible()
    const [download] = await Promise.all([page.waitForEvent('download'), page.getByTestId('download-xlsx').click()])
    expect(download.suggestedFilename()).toBe(`plover-${tag}-rev-b.xlsx`)
    const dir = mkdtempSync(join(tmpdir(), 'kw-e2e-'))
    try {
      const file = join(dir, 'b.xlsx')
      await download.saveAs(file)
      const wb = new ExcelJS.Workbook()
      await wb.xlsx.readFile(file)
      expect(wb.worksheets.map(w => w.name)).toEqual(['Whole BOM', 'Audio', 'Power'])
      const ws = wb.getWorksheet('Whole BOM')!
      let head = 0
      ws.eachRow((r, n) => { if (!head && r.getCell(2).text === 'Designators') head = n })
      const lines: string[][] = []
      for (let n = head + 1; n <= ws.rowCount; n++) lines.push([2, 3, 4, 6, 7].map(c => ws.getRow(n).getCell(c).text))
      // Ordered by stage (Audio, then Power), then first designator; IEC 60062 codes for each value.
      expect(lines).toEqual([
        ['Q1', '1', `NPN-${tag}`, '', ''],
        ['R1-R3, R5', '4', 'Resistor 6.19 kΩ 0.25 W', '6k19', 'blue brown white brown gold'],
        ['R6', '1', 'Resistor 100 kΩ', '100k', 'brown black yellow gold'],
        ['C1, C2', '2', 'Capacitor 10 nF X7R', '10n', '103'],
        ['C3-C5', '3', 'Capacitor 4.7 nF', '4n7', '472'],
        ['C6', '1', 'Capacitor 22 pF C0G', '22p', '220'],
        ['R8, R9', '2', 'Resistor 10 Ω', '10R', 'brown black black gold'],
      ])
      expect(ws.getCell('B3').text).toBe('B (draft)')
    }
    finally {
      rmSync(dir, { recursive: true, force: true })
    }
  })

  test('the revision page works on a phone: lines as cards, filter and group by stage', async ({ page }) => {
    await page.setViewportSize(PHONE)
    await signIn(page, DEMO.organiser)
    await page.goto('/kits')
    await page.getByText('Wren 40 receiver').click()
    // Kit cards on the list also name their latest revision: wait for the kit's own page first.
    await page.waitForURL(/\/kits\/\d+$/)
    await expect(page.getByRole('heading', { level: 1, name: 'Wren 40 receiver' })).toBeVisible()
    await page.getByRole('link', { name: 'Revision A' }).click()
    await expect(page.getByRole('heading', { name: 'Revision A' })).toBeVisible()
    const rows = page.getByTestId('line-row')
    await expect(rows.first()).toBeVisible()
    const box = await rows.first().boundingBox()
    expect(box!.width).toBeLessThanOrEqual(PHONE.width)
    await page.getByLabel('Filter lines').fill('Crystal')
    await expect(rows).toHaveCount(2)
    await page.getByLabel('Filter lines').fill('')
    await page.getByLabel('Group by stage').check()
    await expect(page.locator('th[scope=rowgroup]').first()).toContainText('Power and regulator')
    await expect(page.getByRole('link', { name: 'Download workbook (.xlsx)' })).toBeVisible()
  })

  test('a new BOM for a kit with options carries them over, the replaced crystal found by its designator', async ({ page }) => {
    test.setTimeout(120_000)
    await page.setViewportSize(PHONE)
    await signIn(page, DEMO.organiser)
    // Revision A through the API: base lines X1 and J1, and a band set whose 80 m option replaces X1.
    const post = async (url: string, data: object) => {
      const res = await page.request.post(url, { data })
      expect(res.status(), `${url}: ${await res.text()}`).toBe(201)
      return res.json()
    }
    const kit = (await post('/api/kits', { name: `Sandpiper ${tag}` })).kit
    const a = await post(`/api/kits/${kit.id}/revisions`, {})
    const x1 = await post(`/api/revisions/${a.id}/lines`, { designators: 'X1', qty: 1, valueText: `XT40-${tag}` })
    await post(`/api/revisions/${a.id}/lines`, { designators: 'J1', qty: 1, valueText: `JK-${tag}` })
    const band = await post(`/api/revisions/${a.id}/option-groups`, { name: 'Band', rule: 'one' })
    await post(`/api/revisions/${a.id}/option-groups/${band.id}/options`, { name: '40 m' })
    const m80 = await post(`/api/revisions/${a.id}/option-groups/${band.id}/options`, { name: '80 m' })
    await post(`/api/revisions/${a.id}/lines`, { designators: 'X1', qty: 1, valueText: `XT80-${tag}`, optionId: m80.id, replacesLineId: x1.id })

    // The designer's next file: lines only.
    await page.goto(`/kits/${kit.id}/import`)
    await page.getByTestId('bom-file').setInputFiles({ name: 'sandpiper-b.csv', mimeType: 'text/csv', buffer: Buffer.from(['Ref,Qty,Value', `X1,1,XT40-${tag}`, `J1,1,JK-${tag}`, `L1,1,LC-${tag}`].join('\r\n')) })
    await page.getByRole('button', { name: 'Preview the rows' }).click()
    const carry = page.getByRole('checkbox', { name: 'Carry over the options of revision A' })
    await expect(carry).toBeChecked()
    await expect(page.getByTestId('carry-options')).toContainText('Band (one of 40 m, 80 m), with 1 option line')
    await expect(carry).toHaveAccessibleDescription(/Band \(one of 40 m, 80 m\)/)
    await page.getByTestId('commit-import').click()

    await expect(page.getByRole('heading', { name: 'Revision B' })).toBeVisible()
    await expect(page.getByText('options of A carried over (2 options, 1 option line)')).toBeVisible()
    const b = await (await page.request.get(page.url().replace(/.*\/revisions\//, '/api/revisions/'))).json()
    type Line = { id: number, designators: string, optionId: number | null, replacesLineId: number | null }
    expect(b.groups.map((g: { name: string, options: { name: string }[] }) => [g.name, g.options.map(o => o.name)])).toEqual([['Band', ['40 m', '80 m']]])
    const baseX1 = b.lines.find((l: Line) => l.designators === 'X1' && l.optionId == null)
    const optionX1 = b.lines.find((l: Line) => l.designators === 'X1' && l.optionId != null)
    expect(baseX1.id).not.toBe(x1.id)
    expect(optionX1.replacesLineId).toBe(baseX1.id)
  })
})
