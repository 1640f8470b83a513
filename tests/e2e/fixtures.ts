import { test as base, expect, type Page } from '@playwright/test'
import { DEMO, DEMO_PASSWORD } from '../support/client'

export { expect, DEMO, DEMO_PASSWORD }
export const env = {
  get base() { return process.env.KW_E2E_BASE_URL! },
  get mail() { return process.env.KW_E2E_MAIL_URL! },
  get stripe() { return process.env.KW_E2E_STRIPE_URL! },
  get db() { return process.env.KW_E2E_DB_URL! },
  get labelSecret() { return process.env.KW_E2E_LABEL_SECRET! },
}

export const PHONE = { width: 390, height: 844 }

export const test = base.extend({
  // The stack's port is only known after global setup, so baseURL comes from the environment.
  baseURL: async ({}, use) => { await use(process.env.KW_E2E_BASE_URL) },
})

/** Signs in through the form and waits for the role's home page. */
export async function signIn(page: Page, email: string, password = DEMO_PASSWORD) {
  await page.goto('/login')
  await page.getByLabel('E-mail').fill(email)
  await page.getByLabel('Password').fill(password)
  await page.getByRole('button', { name: 'Sign in' }).click()
  await page.waitForURL(url => !url.pathname.startsWith('/login'))
}
