// The build day from the builder's phone and the spares desk: my bag's workbook, a report with a
// photo, the hand-out at the desk, the builder seeing it resolved (and mailed), rework after a new
// revision, and collection at the door.
import { crc32, deflateSync } from 'node:zlib'
import ExcelJS from 'exceljs'
import { signCode } from '../../server/utils/codes'
import { latestMail } from '../support/client'
import { makeBag, makeBuilder, makeKitScenario, openDb, releaseRevisionB, type KitScenario } from '../api/builders-fixtures'
import { DEMO, PHONE, env, expect, signIn, test } from './fixtures'

/** A 2×2 RGB PNG laid out by hand (ISO/IEC 15948 §5: signature, IHDR, IDAT, IEND; CRC-32 from zlib). */
function tinyPng() {
  const chunk = (type: string, data: Buffer) => {
    const len = Buffer.alloc(4)
    len.writeUInt32BE(data.length)
    const body = Buffer.concat([Buffer.from(type, 'latin1'), data])
    const crc = Buffer.alloc(4)
    crc.writeUInt32BE(crc32(body) >>> 0)
    return Buffer.concat([len, body, crc])
  }
  const ihdr = Buffer.alloc(13)
  ihdr.writeUInt32BE(2, 0)
  ihdr.writeUInt32BE(2, 4)
  ihdr[8] = 8
  ihdr[9] = 2
  const rows = Buffer.from([0, 196, 106, 43, 31, 59, 77, 0, 31, 59, 77, 196, 106, 43])
  return Buffer.concat([Buffer.from([0x89, 0x50, 0x4E, 0x47, 0x0D, 0x0A, 0x1A, 0x0A]), chunk('IHDR', ihdr), chunk('IDAT', deflateSync(rows)), chunk('IEND', Buffer.alloc(0))])
}

test.describe.configure({ mode: 'serial' })

let kit: KitScenario
let builder: { id: number, email: string, name: string }
let bag: { bagId: number, code: string }

test.beforeAll(async () => {
  const { db, conn } = await openDb(env.db)
  try {
    kit = await makeKitScenario(db)
    builder = await makeBuilder(db, 'Iris Builder')
    bag = await makeBag(db, kit, builder.id, { seat: 17 })
  }
  finally {
    await conn.end()
  }
})

test('a builder downloads the bag workbook, reports a missing part with a photo, and sees it handed out', async ({ browser }) => {
  const phone = await browser.newContext({ viewport: PHONE, baseURL: env.base, acceptDownloads: true })
  const page = await phone.newPage()
  await signIn(page, builder.email)
  await expect(page).toHaveURL(/\/my$/)
  await expect(page.getByRole('heading', { level: 1, name: 'My kit' })).toBeVisible()
  await expect(page.getByTestId('safety-notes')).toContainText('soldering iron')
  await expect(page.locator(`[data-status="sealed"]`).first()).toBeVisible()

  await page.getByRole('link', { name: 'Open my bag' }).click()
  await expect(page.getByRole('heading', { level: 1 })).toContainText(kit.kitName)
  await expect(page.getByTestId('stand-in-warning')).toContainText(kit.swapWarning)

  const [download] = await Promise.all([page.waitForEvent('download'), page.getByRole('link', { name: /Download my workbook/ }).click()])
  expect(download.suggestedFilename()).toBe(`bag-${bag.code}.xlsx`)
  const wb = new ExcelJS.Workbook()
  await wb.xlsx.readFile((await download.path())!)
  const cells: string[] = []
  wb.worksheets[0]!.eachRow(r => r.eachCell(c => cells.push(String(c.value ?? ''))))
  expect(cells).toContain(`${kit.partNames.npnB} (stand-in)`)
  expect(cells).toContain(kit.swapWarning)
  expect(cells).toContain('Warning')

  await page.getByRole('link', { name: 'Report a missing part' }).click()
  await page.getByRole('checkbox', { name: /R1, R2/ }).check()
  await page.getByRole('radio', { name: 'Missing' }).check()
  await page.getByLabel('Anything to add?').fill('Only one 1 kΩ in the pouch')
  await page.getByLabel(/^Photos/).setInputFiles({ name: 'pouch.png', mimeType: 'image/png', buffer: tinyPng() })
  await expect(page.getByRole('img', { name: /pouch\.png/ })).toBeVisible()
  await page.getByRole('button', { name: 'Send to the spares desk' }).click()
  await expect(page).toHaveURL(/\/my$/)
  const card = page.locator('[data-report]').first()
  await expect(card).toContainText('R1, R2')
  await expect(card.locator('[data-status="open"]').first()).toBeVisible()
  await expect(card.getByRole('img', { name: 'Photo sent with the report' })).toBeVisible()
  const reportId = Number(await card.getAttribute('data-report'))

  // The organiser at the spares desk hands out the part from the spares bin.
  const desk = await browser.newContext({ baseURL: env.base })
  const deskPage = await desk.newPage()
  await signIn(deskPage, DEMO.organiser)
  await deskPage.goto('/spares')
  const queued = deskPage.locator(`[data-report="${reportId}"]`)
  await expect(queued).toContainText(builder.name)
  await expect(queued).toContainText('Seat 17')
  await queued.getByRole('radio', { name: new RegExp(kit.bins.spares) }).check()
  const since = Date.now()
  await queued.getByRole('button', { name: 'Hand out and resolve' }).click()
  await expect(deskPage.getByText(`Report #${reportId}: handed out`)).toBeVisible()
  await expect(queued).toHaveCount(0)

  await page.reload()
  await expect(page.locator(`[data-report="${reportId}"]`).getByTestId('report-outcome')).toHaveText('Resolved: part handed out')
  await expect(page.locator(`[data-report="${reportId}"]`)).toContainText(`bin ${kit.bins.spares}`)
  const mail = await latestMail(env.mail, builder.email, { after: since })
  expect(mail.subject).toBe(`Report #${reportId}: resolved: part handed out`)
  await phone.close()
  await desk.close()
})

test('after a new revision the organiser gets a rework list, reworks the bag, and it is collected at the door', async ({ page }) => {
  const { db, conn } = await openDb(env.db)
  try {
    await releaseRevisionB(db, kit)
  }
  finally {
    await conn.end()
  }
  await signIn(page, DEMO.organiser)
  await page.goto('/rework')
  const card = page.locator(`[data-bag="${bag.code}"]`)
  await expect(card).toContainText(builder.name)
  await expect(card.getByTestId('rework-add')).toContainText(`2 × ${kit.partNames.r2k2}`)
  await expect(card.getByTestId('rework-add')).toContainText(`1 × ${kit.partNames.diode}`)
  await expect(card.getByTestId('rework-remove')).toContainText(`1 × ${kit.partNames.cap}`)
  await expect(page.getByRole('button', { name: 'Print the rework list' })).toBeVisible()
  await card.getByRole('button', { name: 'Mark reworked' }).click()
  await expect(page.getByText(`Bag ${bag.code} reworked`)).toBeVisible()
  await expect(card).toHaveCount(0)

  await page.goto('/collect')
  await page.getByLabel('Scan a bag label or type its code').fill(signCode('bag', bag.code, env.labelSecret))
  await page.getByRole('button', { name: 'Enter' }).click()
  await expect(page.getByTestId('collect-message')).toContainText(`Bag ${bag.code}: hand it to ${builder.name}, seat 17`)
})
