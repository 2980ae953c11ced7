// VAT in the price the customer pays: the share of a VAT-inclusive amount that is VAT, and how documents word it.

/** The workshop's VAT settings as the API carries them: registered or not, its VAT number, the rate in per cent (20 = 20 %). */
export interface VatTerms {
  vatRegistered: boolean
  vatNumber: string
  vatRatePct: number
}

/**
 * The VAT terms as they are stored: on the workshop (its settings now) and, frozen, on each quote, order and payment — the terms
 * in force when it was issued, made or recorded, so its documents say the same whatever the settings become. The rate is kept
 * in hundredths of a per cent (2000 = 20 %).
 */
export interface StoredVatTerms {
  vatRegistered: boolean
  vatNumber: string
  vatRateBasisPoints: number
}

/** The three stored VAT columns picked from a row that has them (a workshop's, to freeze on a new quote, order or payment). */
export const storedVatTerms = (w: StoredVatTerms): StoredVatTerms => ({
  vatRegistered: w.vatRegistered,
  vatNumber: w.vatNumber,
  vatRateBasisPoints: w.vatRateBasisPoints,
})

/** The VAT settings from a stored row (the workshop's, or those frozen on a quote, order or payment). */
export const vatTermsOf = (w: StoredVatTerms): VatTerms => ({
  vatRegistered: w.vatRegistered,
  vatNumber: w.vatNumber,
  vatRatePct: w.vatRateBasisPoints / 100,
})

/** A rate in per cent as whole hundredths of a per cent: 20 → 2000, 17.5 → 1750 (rounded, so 12.34 typed stays 1234). */
export const rateBasisPoints = (ratePct: number): number => Math.round(ratePct * 100)

/**
 * The VAT contained in a VAT-inclusive amount in minor units: amount × rate / (100 + rate), rounded to the minor unit, half away
 * from zero (a refund's VAT mirrors its payment's), in whole numbers so no float decides a half. 185000 at 20 % → 30833;
 * 9999 at 20 % → 1666.5 → 1667.
 */
export function vatInAmount(grossMinor: number, ratePct: number): number {
  const bp = rateBasisPoints(ratePct)
  if (bp <= 0 || grossMinor === 0) return 0
  const abs = Math.abs(grossMinor)
  const num = abs * bp
  const den = 10_000 + bp
  const vat = Math.floor((2 * num + den) / (2 * den))
  return grossMinor < 0 ? -vat : vat
}

/** A VAT-inclusive amount split into its VAT and what it is before VAT; null when the workshop is not registered for VAT. */
export function vatSplit(grossMinor: number, terms: VatTerms): { vatMinor: number; netMinor: number } | null {
  if (!terms.vatRegistered) return null
  const vatMinor = vatInAmount(grossMinor, terms.vatRatePct)
  return { vatMinor, netMinor: grossMinor - vatMinor }
}

/** A payment or refund already on an order as it is stored: its amount (a refund negative), its VAT and the terms it was taken under. */
export interface PaidWithVat extends StoredVatTerms {
  amountMinor: number
  vatMinor: number
}

/**
 * The VAT in a payment, fixed when it is recorded, under the terms then in force (`terms`). A payment's VAT is that of its own
 * amount, except for the payment that settles the order — what is paid comes to the price, or passes it, with this one: it
 * carries the rest, the VAT of all that is then paid less the VAT on the order's earlier payments and refunds, so the VAT on an
 * order's payments adds up to the VAT of its price. Each on its own can be a penny out: £100.00 at 20 % paid as £50.00 and
 * £50.00 is £8.33 and £8.33 against £16.67 on the price, so the balance carries £8.34. When the order's earlier payments were
 * taken at another rate, or without VAT (the settings changed in between), no one price's VAT describes them: the settling
 * payment's VAT is then that of its own amount, as every other payment's.
 */
export function paymentVat(amountMinor: number, terms: StoredVatTerms, order: { priceMinor: number; earlier: PaidWithVat[] }): number {
  if (!terms.vatRegistered) return 0
  const own = vatInAmount(amountMinor, terms.vatRateBasisPoints / 100)
  const paidBefore = order.earlier.reduce((t, p) => t + p.amountMinor, 0)
  const paidAfter = paidBefore + amountMinor
  const settles = amountMinor > 0 && paidBefore < order.priceMinor && paidAfter >= order.priceMinor
  const oneRate = order.earlier.every((p) => p.amountMinor === 0 || (p.vatRegistered && p.vatRateBasisPoints === terms.vatRateBasisPoints))
  if (!settles || !oneRate) return own
  return vatInAmount(paidAfter, terms.vatRateBasisPoints / 100) - order.earlier.reduce((t, p) => t + p.vatMinor, 0)
}

/**
 * The VAT in a refund (`amountMinor` negative): it mirrors its payment's, under the payment's terms. A part refund takes back the
 * VAT of its own amount; the refund that gives back the last of the payment takes back what is left of the payment's VAT, so a
 * payment refunded in full takes back exactly the VAT its receipt stated (a settling payment's £8.34, not the £8.33 of £50.00).
 */
export function refundVat(amountMinor: number, payment: PaidWithVat, earlierRefunds: { amountMinor: number; vatMinor: number }[]): number {
  if (!payment.vatRegistered) return 0
  const refundedBefore = -earlierRefunds.reduce((t, r) => t + r.amountMinor, 0)
  if (refundedBefore - amountMinor >= payment.amountMinor) return -(payment.vatMinor + earlierRefunds.reduce((t, r) => t + r.vatMinor, 0))
  return vatInAmount(amountMinor, payment.vatRateBasisPoints / 100)
}

/** "20%", "17.5%", "5%": the rate as a customer reads it. */
export const vatRateLabel = (ratePct: number): string => `${rateBasisPoints(ratePct) / 100}%`

/**
 * The line under a price on every document the customer gets, e.g. "of which VAT at 20%: £308.33 (£1,541.67 before VAT)";
 * null when the workshop is not registered. `fmt` writes minor units in the document's currency. `vatMinor`, when given, is the
 * VAT already fixed for the amount (a payment's, which may carry an order's rest) instead of the VAT worked out from it.
 */
export function vatLine(grossMinor: number, terms: VatTerms, fmt: (minor: number) => string, vatMinor?: number): string | null {
  const split = vatSplit(grossMinor, terms)
  if (!split) return null
  const vat = vatMinor ?? split.vatMinor
  return `of which VAT at ${vatRateLabel(terms.vatRatePct)}: ${fmt(vat)} (${fmt(grossMinor - vat)} before VAT)`
}

/**
 * Whether a VAT number has the shape of a UK one, spaces anywhere, letters in either case. Written from memory of HMRC's formats,
 * not from its published specification (the check digits are not worked):
 * - "GB" or nothing, then 9 digits, or 12 (the 9 and a 3-digit branch number): GB 123 4567 89, GB 123 4567 89 001;
 * - "XI" for a business in Northern Ireland, then the same 9 or 12 digits: XI 123 4567 89;
 * - a government department, "GBGD" and 3 digits from 000 to 499: GBGD 001;
 * - a health authority, "GBHA" and 3 digits from 500 to 999: GBHA 599.
 */
export const isUkVatNumber = (n: string): boolean => /^(?:(?:GB|XI)?(?:\d{9}|\d{12})|GBGD[0-4]\d{2}|GBHA[5-9]\d{2})$/.test(n.replace(/\s+/g, '').toUpperCase())

/** "VAT registration no. GB 123 4567 89" when registered; null otherwise. */
export const vatNumberLine = (terms: VatTerms): string | null => (terms.vatRegistered && terms.vatNumber ? `VAT registration no. ${terms.vatNumber}` : null)

/** The VAT figures an answer carries for a VAT-inclusive amount: null when not registered. */
export function vatFiguresOf(grossMinor: number, terms: VatTerms): { ratePct: number; vatNumber: string; vatMinor: number; netMinor: number } | null {
  const split = vatSplit(grossMinor, terms)
  return split && { ratePct: terms.vatRatePct, vatNumber: terms.vatNumber, ...split }
}
