import { DEMO, expect, signIn, test, env } from './fixtures'
import { latestMail } from '../support/client'

test.describe('sign-in lands on the role home', () => {
  for (const [who, home, heading] of [
    ['organiser', '/organiser', 'Overview'],
    ['packer', '/pack', 'Packing station'],
    ['builder', '/my', 'My kit'],
  ] as const) {
    test(`${who} lands on ${home}`, async ({ page }) => {
      await signIn(page, DEMO[who])
      await expect(page).toHaveURL(new RegExp(`${home}$`))
      await expect(page.getByRole('heading', { level: 1, name: heading })).toBeVisible()
    })
  }

  test('a wrong password shows a clear message and stays on the form', async ({ page }) => {
    await page.goto('/login')
    await page.getByLabel('E-mail').fill(DEMO.builder)
    await page.getByLabel('Password').fill('not-the-password')
    await page.getByRole('button', { name: 'Sign in' }).click()
    await expect(page.getByRole('alert')).toContainText('Wrong e-mail or password')
    await expect(page).toHaveURL(/\/login/)
  })
})

test('an organiser invites a packer who accepts through the fake inbox', async ({ page, browser }) => {
  const email = `new.packer.${Date.now()}@club.invalid`
  await signIn(page, DEMO.organiser)
  await page.goto('/people')
  await page.getByLabel('Invite by e-mail').fill(email)
  await page.getByRole('button', { name: 'Send invitation' }).click()
  await expect(page.getByText(`Invitation sent to ${email}`)).toBeVisible()

  const mail = await latestMail(env.mail, email)
  const link = mail.text.match(/https?:\/\/\S+\/invite\/\S+/)![0]
  const ctx = await browser.newContext()
  const p2 = await ctx.newPage()
  await p2.goto(link)
  await expect(p2.getByText('You are invited as')).toContainText('packer')
  await p2.getByLabel('Your name').fill('Nell Invited')
  await p2.getByLabel('Choose a password').fill('a-long-password-1')
  await p2.getByRole('button', { name: 'Accept invitation' }).click()
  await expect(p2).toHaveURL(/\/pack$/)
  // The link works once.
  await p2.goto(link)
  await expect(p2.getByRole('alert')).toContainText('already been used')
  await ctx.close()
})

test('a builder resets a forgotten password through the fake inbox', async ({ page }) => {
  const email = 'ingrid.calloway@club.invalid'
  await page.goto('/forgot')
  await page.getByLabel('E-mail').fill(email)
  await page.getByRole('button', { name: 'Send reset link' }).click()
  await expect(page.getByText('If that address has an account')).toBeVisible()
  const mail = await latestMail(env.mail, email)
  const link = mail.text.match(/https?:\/\/\S+\/reset\/\S+/)![0]
  await page.goto(link)
  await page.getByLabel('New password').fill('my-new-password-22')
  await page.getByRole('button', { name: 'Save password' }).click()
  await expect(page).toHaveURL(/\/my$/)
  await page.getByRole('button', { name: 'Sign out' }).or(page.getByRole('button', { name: 'Menu' })).first().click()
  await signIn(page, email, 'my-new-password-22')
  await expect(page).toHaveURL(/\/my$/)
})
