// VAT in the price the customer pays: the share of a VAT-inclusive amount that is VAT, and how documents word it.

/** The workshop's VAT settings as the API carries them: registered or not, its VAT number, the rate in per cent (20 = 20 %). */
export interface VatTerms {
  vatRegistered: boolean
  vatNumber: string
  vatRatePct: number
}

/** The VAT settings from the workshop's stored row (its rate kept in hundredths of a per cent). */
export const vatTermsOf = (w: { vatRegistered: boolean; vatNumber: string; vatRateBasisPoints: number }): VatTerms => ({
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

/** "20%", "17.5%", "5%": the rate as a customer reads it. */
export const vatRateLabel = (ratePct: number): string => `${rateBasisPoints(ratePct) / 100}%`

/**
 * The line under a price on every document the customer gets, e.g. "of which VAT at 20%: £308.33 (£1,541.67 before VAT)";
 * null when the workshop is not registered. `fmt` writes minor units in the document's currency.
 */
export function vatLine(grossMinor: number, terms: VatTerms, fmt: (minor: number) => string): string | null {
  const split = vatSplit(grossMinor, terms)
  if (!split) return null
  return `of which VAT at ${vatRateLabel(terms.vatRatePct)}: ${fmt(split.vatMinor)} (${fmt(split.netMinor)} before VAT)`
}

/** "VAT registration no. GB 123 4567 89" when registered; null otherwise. */
export const vatNumberLine = (terms: VatTerms): string | null => (terms.vatRegistered && terms.vatNumber ? `VAT registration no. ${terms.vatNumber}` : null)

/** The VAT figures an answer carries for a VAT-inclusive amount: null when not registered. */
export function vatFiguresOf(grossMinor: number, terms: VatTerms): { ratePct: number; vatNumber: string; vatMinor: number; netMinor: number } | null {
  const split = vatSplit(grossMinor, terms)
  return split && { ratePct: terms.vatRatePct, vatNumber: terms.vatNumber, ...split }
}
