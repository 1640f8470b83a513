import type { H3Event } from 'h3'
import type { z } from 'zod'

/** Turns zod issues into one 400 with a message per field, for forms and API callers alike. */
export function badRequest(issues: z.core.$ZodIssue[]): never {
  const fields: Record<string, string> = {}
  for (const issue of issues) {
    const key = issue.path.join('.') || '_'
    fields[key] ??= issue.message
  }
  const summary = Object.entries(fields).map(([k, m]) => (k === '_' ? m : `${k}: ${m}`)).join('; ')
  throw createError({ statusCode: 400, statusMessage: 'Invalid input', message: summary, data: { fields } })
}

function check<S extends z.ZodType>(schema: S, input: unknown): z.output<S> {
  const result = schema.safeParse(input)
  if (!result.success) badRequest(result.error.issues)
  return result.data
}

/** Reads and validates a JSON body; a body that is not JSON is a 400 too. */
export async function parseBody<S extends z.ZodType>(event: H3Event, schema: S): Promise<z.output<S>> {
  let body: unknown
  try {
    body = await readBody(event)
  }
  catch {
    throw createError({ statusCode: 400, statusMessage: 'Invalid input', message: 'The request body is not valid JSON' })
  }
  return check(schema, body ?? {})
}

export function parseQuery<S extends z.ZodType>(event: H3Event, schema: S): z.output<S> {
  return check(schema, getQuery(event))
}

export function parseParams<S extends z.ZodType>(event: H3Event, schema: S): z.output<S> {
  return check(schema, getRouterParams(event, { decode: true }))
}
