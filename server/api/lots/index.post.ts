import { z } from 'zod'

const body = z.object({
  bin: z.string({ error: 'Scan or type the bin' }).trim().min(1, 'Scan or type the bin').max(200),
  partId: z.number({ error: 'Choose the part' }).int().positive('Choose the part'),
  qty: z.number({ error: 'Give the quantity' }).int('Quantities are whole numbers').positive('Receive 1 or more').max(10_000_000, 'That is more than one lot should hold'),
  unitCostMinor: z.number({ error: 'Give the unit cost' }).int('Give the cost in whole minor units (pence, cents)').min(0, 'A cost cannot be negative').max(100_000_000),
  currency: z.string().trim().toUpperCase().regex(/^[A-Z]{3}$/, 'Use a three-letter currency code, e.g. GBP').default('GBP'),
  supplier: z.string().trim().max(120, 'Keep it under 120 characters').nullish(),
  supplierRef: z.string().trim().max(120, 'Keep it under 120 characters').nullish(),
  receivedOn: z.string().regex(/^\d{4}-\d{2}-\d{2}$/, 'Use a date like 2027-02-13').refine(d => !Number.isNaN(Date.parse(d)), 'That is not a date'),
  note: z.string().trim().max(500, 'Keep the note under 500 characters').nullish(),
})

/** Receives stock: a new lot in the scanned (or typed) bin, with its 'receive' ledger row. */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'organiser')
  const { bin: scanned, ...r } = await parseBody(event, body)
  const db = useDb()
  const bin = await findBinByScan(db, scanned, useRuntimeConfig().labelSecret)
  const lotId = await runStockTx(db, tx => receiveLot(tx, { ...r, binId: bin.id }, user.id))
  setResponseStatus(event, 201)
  return { id: lotId, binId: bin.id, binCode: bin.code, partId: r.partId, qty: r.qty }
})
