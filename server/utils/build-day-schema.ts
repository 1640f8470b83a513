import { z } from 'zod'

const when = z.coerce.date({ error: 'A date and time, e.g. 2027-01-15T09:00' })

/** A build day as the organiser's form sends it; hold time within what a Checkout Session allows. */
export const buildDayBody = z.object({
  name: z.string().trim().min(1, 'Give the build day a name').max(120, 'At most 120 characters'),
  date: z.string().regex(/^\d{4}-\d{2}-\d{2}$/, 'A date like 2027-02-13'),
  venue: z.string().trim().min(1, 'Where is it held?').max(200, 'At most 200 characters'),
  seats: z.number().int('A whole number').min(1, 'At least one seat').max(2000, 'At most 2000 seats'),
  salesOpenAt: when,
  salesCloseAt: when,
  currency: z.string().regex(/^[A-Z]{3}$/, 'A three-letter code, e.g. GBP').default('GBP'),
  holdMinutes: z.number().int('A whole number').min(30, 'At least 30 minutes (card checkout pages last 30 minutes or more)').max(1380, 'At most 23 hours').default(30),
})

/** 400 when the sales window is back to front. */
export function checkSalesWindow(open: Date, close: Date) {
  if (close.getTime() <= open.getTime()) {
    const message = 'Sales must close after they open'
    throw createError({ statusCode: 400, statusMessage: 'Invalid input', message, data: { fields: { salesCloseAt: message } } })
  }
}
