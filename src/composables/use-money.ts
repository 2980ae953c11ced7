// Money on screen: integer minor units from the API shown in the workshop's currency, formatted by the browser's locale.
import { currencyExponent } from '@shared/domain/currency'
import { vatLine, vatNumberLine, type VatTerms } from '@shared/domain/vat'

/** The browser's preferred locale (falls back to en-GB where there is none, e.g. in tests without a navigator). */
export function browserLocale(): string {
  if (typeof navigator !== 'undefined' && navigator.language) return navigator.language
  return 'en-GB'
}

const formats = new Map<string, Intl.NumberFormat>()
function currencyFormat(currency: string, locale: string): Intl.NumberFormat {
  const key = `${locale}|${currency}`
  let f = formats.get(key)
  if (!f) {
    f = new Intl.NumberFormat(locale, { style: 'currency', currency })
    formats.set(key, f)
  }
  return f
}

/**
 * Decimals of a currency's major unit as ISO 4217 has them (GBP 2, JPY 0, BHD 3) — the same table the server stores amounts by
 * (shared/domain/currency.ts). Intl's own figure is a display habit and differs for some (HUF, IQD, COP…), so it is not used here.
 */
export function minorDigits(currency: string): number {
  return currencyExponent(currency)
}

/** An amount in minor units (e.g. 23400 pence) as the browser's locale writes it in that currency ("£234.00" in en-GB). */
export function formatMinor(minor: number | null | undefined, currency: string, locale = browserLocale()): string {
  if (minor === null || minor === undefined || !Number.isFinite(minor)) return '—'
  const digits = minorDigits(currency)
  return currencyFormat(currency, locale).format(minor / 10 ** digits)
}

/** The workshop's money rules as the settings carry them (defaults until the settings are loaded). */
export interface WorkshopMoneyRules {
  currency: string
  depositPct: number
  quoteValidDays: number
  noMetalBeforeDeposit: boolean
  /** VAT as the customer's documents show it (not registered until the settings say otherwise). */
  vat: VatTerms
}
export function moneyRules(settings: (Partial<Omit<WorkshopMoneyRules, 'vat'>> & Partial<VatTerms>) | null | undefined): WorkshopMoneyRules {
  return {
    currency: settings?.currency || 'GBP',
    depositPct: settings?.depositPct ?? 30,
    quoteValidDays: settings?.quoteValidDays ?? 30,
    noMetalBeforeDeposit: settings?.noMetalBeforeDeposit ?? false,
    vat: { vatRegistered: settings?.vatRegistered ?? false, vatNumber: settings?.vatNumber ?? '', vatRatePct: settings?.vatRatePct ?? 20 },
  }
}

/**
 * The VAT in a VAT-inclusive amount as the customer's documents word it, with the workshop's VAT number, in one line for a
 * screen ("of which VAT at 20%: £308.33 (£1,541.67 before VAT) · VAT registration no. GB 123 4567 89"); '' when not registered.
 */
export function vatHint(grossMinor: number, vat: VatTerms, currency: string, locale = browserLocale()): string {
  const line = vatLine(grossMinor, vat, (minor) => formatMinor(minor, currency, locale))
  return line ? [line, vatNumberLine(vat)].filter(Boolean).join(' · ') : ''
}

/** The same line from the VAT figures an answer carries (an order's or a quote's price); '' when there are none. */
export function vatFiguresHint(v: { ratePct: number; vatNumber: string; vatMinor: number; netMinor: number } | null | undefined, currency: string): string {
  return v ? vatHint(v.vatMinor + v.netMinor, { vatRegistered: true, vatNumber: v.vatNumber, vatRatePct: v.ratePct }, currency) : ''
}
