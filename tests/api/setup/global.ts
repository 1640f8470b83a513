import type { TestProject } from 'vitest/node'
import { startStack } from '../../support/stack'

declare module 'vitest' {
  export interface ProvidedContext {
    baseUrl: string
    mailUrl: string
    stripeUrl: string
    dbUrl: string
    webhookSecret: string
    labelSecret: string
    appEnv: Record<string, string>
  }
}

/** One stack for the whole API run: fresh database, fakes and the built server. */
export default async function setup(project: TestProject) {
  const stack = await startStack('api')
  project.provide('baseUrl', stack.baseUrl)
  project.provide('mailUrl', stack.mailUrl)
  project.provide('stripeUrl', stack.stripeUrl)
  project.provide('dbUrl', stack.dbUrl)
  project.provide('webhookSecret', stack.webhookSecret)
  project.provide('labelSecret', stack.labelSecret)
  project.provide('appEnv', stack.appEnv)
  return async () => {
    await stack.stop()
  }
}
