import { startStack } from '../support/stack'

export default async function globalSetup() {
  const stack = await startStack('e2e')
  process.env.KW_E2E_BASE_URL = stack.baseUrl
  process.env.KW_E2E_MAIL_URL = stack.mailUrl
  process.env.KW_E2E_STRIPE_URL = stack.stripeUrl
  process.env.KW_E2E_DB_URL = stack.dbUrl
  process.env.KW_E2E_LABEL_SECRET = stack.labelSecret
  return async () => {
    await stack.stop()
  }
}
