// The workshop's calendar: time zone, weekly working hours with breaks, and closures.
import { z } from 'zod'
import { isoDate, name, version, weekPattern, wireInt } from './common'
import { isUkVatNumber, rateBasisPoints, type VatTerms } from '../domain/vat'

const timeZone = z
  .string()
  .min(1)
  .max(64)
  .refine((tz) => {
    try {
      new Intl.DateTimeFormat('en', { timeZone: tz })
      return true
    } catch {
      return false
    }
  }, 'must be an IANA time zone such as Europe/London')

/** The origin (scheme://host[:port]) of an http(s) address that has no path, query, fragment or user; null otherwise. */
export function publicOrigin(text: string): string | null {
  if (/[?#\s]/.test(text)) return null
  let u: URL
  try {
    u = new URL(text)
  } catch {
    return null
  }
  if ((u.protocol !== 'http:' && u.protocol !== 'https:') || !u.hostname || u.username || u.password || u.pathname !== '/') return null
  return `${u.protocol}//${u.host}`
}

/**
 * A deposit as a share of the price, 0 to 100 %: the one rule for the workshop's default and the deposit a quote asks (which may
 * have decimals, a quote's deposit read back as a share of its price: 33.3 %). The quote dialog checks the typed figure with it.
 */
export const depositPct = z.number({ error: 'is required' }).min(0, 'must be 0 to 100').max(100, 'must be 0 to 100')

/**
 * Money rules: the deposit asked on a quote (% of the price), how long a quote stands, and whether metal waits for the deposit.
 * The settings' Quotes and deposits form checks them on their own, so a stored setting elsewhere never holds its save back.
 */
export const workshopMoneyRulesInput = z.object({
  depositPct: depositPct.int('must be a whole percentage'),
  quoteValidDays: z.number({ error: 'is required' }).int('must be whole days').min(1, 'must be 1 to 365 days').max(365, 'must be 1 to 365 days'),
  noMetalBeforeDeposit: z.boolean(),
})
export type WorkshopMoneyRulesInput = z.infer<typeof workshopMoneyRulesInput>

/**
 * Why a registered workshop's VAT number cannot go on its documents, or null when it can: it is required, and it has the shape
 * of a UK VAT number (`isUkVatNumber`). The number is kept as the owner typed it, spaces and all.
 */
export function vatNumberProblem(vatNumber: string): string | null {
  if (vatNumber.trim() === '') return 'is required when the workshop is registered for VAT'
  if (!isUkVatNumber(vatNumber))
    return 'must be a UK VAT number: GB or XI and 9 digits (12 with a branch number), GBGD and 000–499, or GBHA and 500–999, such as GB 123 4567 89'
  return null
}

/** A VAT number as compared between two saves: without its spaces, in capitals ("gb 123 4567 89" is "GB123456789"). */
const vatNumberKey = (n: string) => n.replace(/\s+/g, '').toUpperCase()

/** Whether a change of the settings touches their VAT details: the registration, the number or the rate is not what it was. */
const vatDetailsChanged = (before: VatTerms, after: VatTerms): boolean =>
  before.vatRegistered !== after.vatRegistered ||
  vatNumberKey(before.vatNumber) !== vatNumberKey(after.vatNumber) ||
  rateBasisPoints(before.vatRatePct) !== rateBasisPoints(after.vatRatePct)

/**
 * Why the VAT number cannot be saved with a change of the settings from `before` to `after` (the settings as stored, and as
 * they would be saved), or null. The number is checked when the workshop is registered after the change and the change touches
 * the VAT details (registers, or gives another number or rate): a number stored before its shape was checked holds back no
 * other setting, and is checked once the VAT details are changed.
 */
export function vatChangeProblem(before: VatTerms, after: VatTerms): string | null {
  if (!after.vatRegistered || !vatDetailsChanged(before, after)) return null
  return vatNumberProblem(after.vatNumber)
}

export const workshopSettingsInput = z.object({
  name,
  timeZone,
  weekPattern: weekPattern.refine((w) => w.length > 0, 'needs at least one working span'),
  /** Share of available hours the planner fills (headroom for the unexpected). */
  planningLoad: z.number().min(0.5, 'must be between 0.5 and 1').max(1, 'must be between 0.5 and 1').default(0.85),
  /** What customers' e-mails carry; left out of a change, each keeps its value. */
  address: z.string().trim().max(300, 'must be at most 300 characters').optional(),
  phone: z.string().trim().max(40, 'must be at most 40 characters').optional(),
  contactEmail: z.union([z.literal(''), z.string().trim().email('must be an e-mail address such as orders@example.com').max(200)]).optional(),
  currency: z
    .string()
    .trim()
    .toUpperCase()
    .refine((c) => {
      try {
        return /^[A-Z]{3}$/.test(c) && !!new Intl.NumberFormat('en', { style: 'currency', currency: c })
      } catch {
        return false
      }
    }, 'must be a three-letter currency code such as GBP or EUR')
    .optional(),
  /** Where tablets on the workshop network open the app (a ticket's QR code): scheme, host and port only; '' = the address the server suggests. */
  publicUrl: z
    .string()
    .trim()
    .max(200, 'must be at most 200 characters')
    .refine((v) => v === '' || publicOrigin(v) !== null, 'must be an http:// or https:// address with no path, such as http://192.168.1.20:8080')
    .transform((v) => (v === '' ? '' : publicOrigin(v)!))
    .optional(),
  depositPct: workshopMoneyRulesInput.shape.depositPct.optional(),
  quoteValidDays: workshopMoneyRulesInput.shape.quoteValidDays.optional(),
  noMetalBeforeDeposit: workshopMoneyRulesInput.shape.noMetalBeforeDeposit.optional(),
  /**
   * VAT: registered or not, the VAT number printed on the customer's documents (letters, digits and spaces, e.g. GB 123 4567 89),
   * and the rate in per cent with at most two decimals (UK standard rate 20). Prices are VAT-inclusive; a registered workshop
   * needs its number in a UK number's shape, checked against the stored settings when the VAT details change (`vatChangeProblem`).
   */
  vatRegistered: z.boolean().optional(),
  vatNumber: z
    .string()
    .trim()
    .toUpperCase()
    .max(20, 'must be at most 20 characters')
    .regex(/^[A-Z0-9 ]*$/, 'must be letters, digits and spaces only, such as GB 123 4567 89')
    .optional(),
  vatRatePct: z
    .number()
    .min(0, 'must be 0 to 100')
    .max(100, 'must be 0 to 100')
    .refine((v) => Math.abs(v * 100 - Math.round(v * 100)) < 1e-6, 'must have at most two decimals, such as 20 or 17.5')
    .optional(),
  version,
})

/**
 * The settings form's check before sending: the input's own rules, and the VAT number's (`vatChangeProblem`) against the
 * settings as they stand — the server checks the same against the stored row, which also covers a change that leaves the
 * number or the registration out.
 */
export const workshopSettingsChange = (stored: VatTerms) =>
  workshopSettingsInput.superRefine((w, ctx) => {
    const after = {
      vatRegistered: w.vatRegistered ?? stored.vatRegistered,
      vatNumber: w.vatNumber ?? stored.vatNumber,
      vatRatePct: w.vatRatePct ?? stored.vatRatePct,
    }
    const problem = vatChangeProblem(stored, after)
    if (problem) ctx.addIssue({ code: 'custom', path: ['vatNumber'], message: problem })
  })
export const closureInput = z
  .object({ startsOn: isoDate, endsOn: isoDate, name: z.string().trim().min(1, 'is required').max(120) })
  .refine((c) => c.endsOn >= c.startsOn, { message: 'must not be before the first day', path: ['endsOn'] })
export type WorkshopSettingsInput = z.infer<typeof workshopSettingsInput>
export type ClosureInput = z.infer<typeof closureInput>
/** Adds a year's England and Wales bank holidays as closures (those already closed are left as they are). */
export const bankHolidaysInput = z.object({
  year: z.coerce.number().int('must be a whole year').min(2000, 'must be 2000 or later').max(2100, 'must be 2100 or earlier'),
})
export type BankHolidaysInput = z.infer<typeof bankHolidaysInput>

// ---- Answers ----

export const closure = z.object({ id: wireInt, workshopId: wireInt, name: z.string(), startsOn: z.string(), endsOn: z.string() })
export type Closure = z.infer<typeof closure>
/** A closure taken out of the calendar. */
export const closureRemoved = z.object({ ok: z.literal(true) })
export type ClosureRemoved = z.infer<typeof closureRemoved>
/** The closures added for the bank holidays, and the holidays skipped because the workshop was already closed that day. */
export const bankHolidaysAdded = z.object({ added: z.array(closure), skipped: z.array(z.object({ date: z.string(), name: z.string() })) })
export type BankHolidaysAdded = z.infer<typeof bankHolidaysAdded>
/** The settings as stored. */
export const workshopSettingsRecord = z.object({
  id: wireInt,
  name: z.string(),
  timeZone: z.string(),
  weekPattern: z.array(z.object({ weekday: wireInt, start: z.string(), end: z.string() })),
  planningLoad: z.number(),
  address: z.string(),
  phone: z.string(),
  contactEmail: z.string(),
  currency: z.string(),
  publicUrl: z.string(),
  depositPct: wireInt,
  quoteValidDays: wireInt,
  noMetalBeforeDeposit: z.boolean(),
  vatRegistered: z.boolean(),
  vatNumber: z.string(),
  vatRatePct: z.number(),
  version: wireInt,
})
export type WorkshopSettingsRecord = z.infer<typeof workshopSettingsRecord>
/** The settings as the API answers them: when publicUrl is empty, the address tickets use instead (this machine's network address and the server's port); reachable is false when the server listens on this machine only. */
export const workshopSettings = workshopSettingsRecord.extend({ publicUrlSuggestion: z.object({ url: z.string().nullable(), reachable: z.boolean() }) })
export type WorkshopSettings = z.infer<typeof workshopSettings>
