// Quotes for commissions: what is quoted (piece, metal, stones), the promised date, the price and deposit in minor units.
import { z } from 'zod'
import { id, isoDate, name, pageOf, pastDateProblem, version, wireInt } from './common'
import { METALS, pieceParams, type PieceParams } from './order'
import { minorAmount, payment, paymentLink, vatFigures } from './payment'
import { promiseBooking } from './promise'

export { minorAmount }

export const QUOTE_STATUSES = ['drafted', 'sent', 'accepted', 'expired', 'withdrawn'] as const
export type QuoteStatus = (typeof QUOTE_STATUSES)[number]

const currency = z
  .string()
  .trim()
  .toUpperCase()
  .regex(/^[A-Z]{3}$/, 'must be a three-letter currency code such as GBP')

const isMetalCode = (v: unknown): v is PieceParams['metal'] => typeof v === 'string' && (METALS as readonly string[]).includes(v)
const quoteDetailsShape = z.object({
  routingId: id.optional(),
  piece: z.string().trim().max(120).optional(),
  /**
   * The piece as an order's piece holds it: its alloy (`metal`) and estimated weight (`metalWeightG`, grams in one piece) among
   * them, so the order made from the quote carries both. Sent without a metal, it takes the quote's own metal when that is one
   * of the listed metals (else the order form's default).
   */
  params: pieceParams.extend({ metal: pieceParams.shape.metal.removeDefault().optional() }).optional(),
  priority: z.number().int().min(1, 'must be 1 to 5').max(5, 'must be 1 to 5').optional(),
  metal: z.string().trim().max(120).optional(),
  stones: z
    .array(
      z
        .object({
          description: z.string().trim().min(1, 'is required').max(200),
          /** How many in one piece. */
          count: z.number().int().min(0).optional(),
          /** The carats of all the row's stones together ("ct in all"). */
          carats: z.number().min(0).optional(),
          /**
           * The carats of one stone ("ct each"), to the thousandth: a row gives its weight one way or the other, and the row's
           * total (count × this) is then exact in the words printed.
           */
          caratEach: z
            .number()
            .min(0)
            .refine((ct) => Math.abs(ct * 1000 - Math.round(ct * 1000)) < 1e-6, 'must have at most three decimals, such as 0.015')
            .optional(),
          /** What one stone costs the workshop (minor units), for the estimated cost; never printed for the customer. */
          costEachMinor: z
            .number({ error: 'must be an amount' })
            .int('must be whole minor units')
            .min(0, 'must not be negative')
            .max(100_000_000, 'is too large')
            .optional(),
        })
        .refine((st) => st.carats === undefined || st.caratEach === undefined, {
          path: ['caratEach'],
          message: 'give the carats of one stone or of them all, not both',
        }),
    )
    .max(100)
    .optional(),
})
type QuoteDetailsShape = z.infer<typeof quoteDetailsShape>
const withPieceMetal = ({ params, ...d }: QuoteDetailsShape): Omit<QuoteDetailsShape, 'params'> & { params?: PieceParams } =>
  params ? { ...d, params: { ...params, metal: params.metal ?? (isMetalCode(d.metal) ? d.metal : pieceParams.shape.metal.parse(undefined)) } } : d
export const quoteDetails = quoteDetailsShape.transform(withPieceMetal)
/** What is quoted, as written or changed: a listed metal named on the quote and another in the piece's parameters is refused. */
const quoteDetailsInput = quoteDetailsShape
  .superRefine((d, ctx) => {
    if (d.params?.metal && isMetalCode(d.metal) && d.params.metal !== d.metal)
      ctx.addIssue({ code: 'custom', path: ['params', 'metal'], message: 'must be the metal the quote names' })
  })
  .transform(withPieceMetal)
/** A quote's price: a quote asks the customer for money, so nothing or less is refused. */
export const quotePrice = minorAmount.min(1, 'must be more than zero')
export const quoteConfidence = z.object({ p50: isoDate.optional(), p80: isoDate.optional(), p95: isoDate.optional(), note: z.string().max(300).optional() })

const quoteFields = {
  title: name,
  description: z.string().max(4000, 'must be at most 4000 characters'),
  details: quoteDetailsInput,
  promisedDate: isoDate.nullable(),
  confidence: quoteConfidence.nullable(),
  priceMinor: quotePrice,
  depositMinor: minorAmount,
  validUntil: isoDate,
}
export const quoteInput = z
  .object({
    customerId: id,
    orderId: id.nullable().default(null),
    currency: currency.optional(),
    ...quoteFields,
    description: quoteFields.description.default(''),
    details: quoteDetailsInput.default({}),
    promisedDate: quoteFields.promisedDate.default(null),
    confidence: quoteFields.confidence.default(null),
    depositMinor: minorAmount.optional(),
    validUntil: isoDate.optional(),
  })
  .refine((q) => q.depositMinor === undefined || q.depositMinor <= q.priceMinor, { message: 'must not be more than the price', path: ['depositMinor'] })
export const quoteUpdate = z.object({
  title: quoteFields.title.optional(),
  description: quoteFields.description.optional(),
  details: quoteDetailsInput.optional(),
  promisedDate: isoDate.nullable().optional(),
  confidence: quoteConfidence.nullable().optional(),
  priceMinor: quotePrice.optional(),
  depositMinor: minorAmount.optional(),
  validUntil: isoDate.optional(),
  version,
})
export const quoteAction = z.object({ version })
export const quoteListQuery = z.object({
  q: z.string().max(120).optional(),
  status: z.union([z.enum(QUOTE_STATUSES), z.array(z.enum(QUOTE_STATUSES))]).optional(),
  orderId: id.optional(),
  page: z.coerce.number().int().min(1).default(1),
  pageSize: z.coerce.number().int().min(1).max(200).default(50),
})
export const quoteLinkInput = z.object({ amountMinor: minorAmount.min(1, 'must be at least 1').optional() })
/**
 * What is wrong with a quote's dates on the workshop's `today` (YYYY-MM-DD), by field; empty when they will do. A promise is
 * for today or later; a quote stands from today (else it lapses at once) and no later than its promised date, since a
 * customer accepting after that day would get an order promised for a day gone. The server and the quote dialog both ask it.
 */
export function quoteDateProblems(
  q: { promisedDate: string | null; validUntil: string | undefined },
  today: string,
): Partial<Record<'promisedDate' | 'validUntil', string>> {
  const out: Partial<Record<'promisedDate' | 'validUntil', string>> = {}
  const promised = pastDateProblem(q.promisedDate, today)
  if (promised) out.promisedDate = promised
  if (pastDateProblem(q.validUntil, today)) out.validUntil = 'must be today or later (the quote would lapse at once)'
  else if (q.validUntil && q.promisedDate && q.validUntil > q.promisedDate)
    out.validUntil = 'must not be after the promised date (a customer accepting later would get an order promised for a day gone)'
  return out
}
/** How long a new quote stands: the workshop's validity days from today, but never past its promised date (one still to come). */
export const defaultValidUntil = (today: string, validDays: number, promisedDate: string | null): string => {
  const d = new Date(`${today}T00:00:00Z`)
  d.setUTCDate(d.getUTCDate() + validDays)
  const byDays = d.toISOString().slice(0, 10)
  return promisedDate && promisedDate >= today && promisedDate < byDays ? promisedDate : byDays
}
/** One quoted stone row, as stored in the quote's details. */
export type QuoteStone = NonNullable<QuoteDetails['stones']>[number]
/** Carats as the customer reads them: up to three decimals, no trailing zeros (0.25, 0.015, 1.2). */
const caratWords = (ct: number) => ct.toLocaleString('en-GB', { maximumFractionDigits: 3 })
/**
 * A quoted stone row as the customer reads it (the quote's PDF, the quote drawer), its weight said the way it was given: "18 ×
 * round diamonds of 1.5 mm, 0.25 ct in all", or, given stone by stone, "18 × round diamonds of 1.5 mm, 0.02 ct each (0.36 ct in
 * all)" — the count × one stone's carats, worked in thousandths of a carat so no float adds a digit. One stone's weight is the
 * row's either way ("1 × sapphire, 1.2 ct"); a row with no count says only what was given.
 */
export function quoteStoneWords(st: Pick<QuoteStone, 'description' | 'count' | 'carats' | 'caratEach'>): string {
  const many = st.count ? `${st.count} × ` : ''
  let weight = ''
  if (st.caratEach) {
    if (st.count === 1) weight = `, ${caratWords(st.caratEach)} ct`
    else if (st.count) weight = `, ${caratWords(st.caratEach)} ct each (${caratWords((Math.round(st.caratEach * 1000) * st.count) / 1000)} ct in all)`
    else weight = `, ${caratWords(st.caratEach)} ct each`
  } else if (st.carats) weight = st.count === 1 ? `, ${caratWords(st.carats)} ct` : `, ${caratWords(st.carats)} ct in all`
  return `${many}${st.description}${weight}`
}
/**
 * The quoted stones an order made from the quote keeps on its piece for the estimated cost: each stone row with a count, at what
 * one stone costs (null when not known) — the rows the quote dialog's estimate counted. Empty when no row has a count.
 */
export interface QuotedStone {
  description: string
  /** How many in one piece. */
  count: number
  costEachMinor: number | null
}
export const quotedStones = (stones: readonly QuoteStone[] | undefined): QuotedStone[] =>
  (stones ?? []).filter((st) => st.count).map((st) => ({ description: st.description, count: st.count!, costEachMinor: st.costEachMinor ?? null }))
export type QuoteInput = z.infer<typeof quoteInput>
export type QuoteUpdate = z.infer<typeof quoteUpdate>
export type QuoteDetails = z.infer<typeof quoteDetails>
export type QuoteConfidence = z.infer<typeof quoteConfidence>

// ---- Answers ----

/** What is quoted and the promise's confidence, as stored (checked like the input, without filling in defaults). */
const storedDetails = z.custom<QuoteDetails>((v) => quoteDetails.safeParse(v).success, 'must be quote details')
const storedConfidence = z.custom<QuoteConfidence>((v) => quoteConfidence.safeParse(v).success, 'must be a quoted confidence')

/** A quote as listed: its customer, order, state and money (minor units; the balance is price − deposit). */
export const quote = z.object({
  id: wireInt,
  number: z.string(),
  customerId: wireInt,
  customerName: z.string(),
  customerEmail: z.string(),
  orderId: wireInt.nullable(),
  orderNumber: z.string().nullable(),
  status: z.enum(QUOTE_STATUSES),
  title: z.string(),
  description: z.string(),
  details: storedDetails,
  promisedDate: z.string().nullable(),
  confidence: storedConfidence.nullable(),
  currency: z.string(),
  priceMinor: wireInt,
  depositMinor: wireInt,
  balanceMinor: wireInt,
  validUntil: z.string(),
  sentAt: z.string().nullable(),
  acceptedAt: z.string().nullable(),
  withdrawnAt: z.string().nullable(),
  createdAt: z.string(),
  version: wireInt,
})
export type Quote = z.infer<typeof quote>
export const quotePage = pageOf(quote)
/**
 * One quote, and every write's answer: with its payment links, payments, what is paid (net of refunds, not counting those to
 * refund) and the VAT in its price when the workshop is registered.
 */
export const quoteDetail = quote.extend({ links: z.array(paymentLink), payments: z.array(payment), paidMinor: wireInt, vat: vatFigures })
export type QuoteDetail = z.infer<typeof quoteDetail>
/**
 * Accepting's answer: the quote, and whether the order made from it was booked into the live plan where its piece finds room
 * now (as a promise's order is), and if not, why; null when no order was made (the quote was for an order already).
 */
export const quoteAccepted = quoteDetail.extend({ booking: promiseBooking.nullable() })
export type QuoteAccepted = z.infer<typeof quoteAccepted>
