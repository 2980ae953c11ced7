// Money on screen: integer minor units from the API shown in the workshop's currency, formatted by the browser's locale.
import { currencyExponent } from '@shared/domain/currency'

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
}
export function moneyRules(settings: Partial<WorkshopMoneyRules> | null | undefined): WorkshopMoneyRules {
  return {
    currency: settings?.currency || 'GBP',
    depositPct: settings?.depositPct ?? 30,
    quoteValidDays: settings?.quoteValidDays ?? 30,
    noMetalBeforeDeposit: settings?.noMetalBeforeDeposit ?? false,
  }
}
