// Customers of the workshop (contact data stays off job tickets).
import { z } from 'zod'
import { name, notes, pageOf, version, wireInt } from './common'

export const customerInput = z.object({
  name,
  email: z.union([z.literal(''), z.string().trim().toLowerCase().email('must be an e-mail address').max(200)]).default(''),
  phone: z
    .string()
    .trim()
    .max(40, 'must be at most 40 characters')
    .regex(/^[0-9 +()\-.]*$/, 'use digits, spaces and + ( ) - .')
    .default(''),
  notes,
})
export const customerUpdate = customerInput.partial().extend({ version })
export type CustomerInput = z.infer<typeof customerInput>

// ---- Answers ----

export const customer = z.object({
  id: wireInt,
  reference: z.string(),
  version: wireInt,
  name: z.string(),
  email: z.string(),
  phone: z.string(),
  notes: z.string(),
  openOrders: wireInt,
})
export const customerPage = pageOf(customer)
export type Customer = z.infer<typeof customer>
