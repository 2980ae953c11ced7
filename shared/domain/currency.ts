// Currencies: how many decimals each has (ISO 4217 minor unit exponent), and amounts typed as decimal text turned into integer minor units exactly.

/**
 * The ISO 4217 minor unit of the currencies that do not have two decimals (ISO 4217 "List One", current currency & funds
 * code list, column "Minor unit"); every other code has 2. The database migration that turned stored reals into minor units
 * (drizzle/0011) carries the same lists in SQL.
 */
export const CURRENCY_EXPONENT_EXCEPTIONS: Readonly<Record<string, 0 | 3 | 4>> = {
  BIF: 0,
  CLP: 0,
  DJF: 0,
  GNF: 0,
  ISK: 0,
  JPY: 0,
  KMF: 0,
  KRW: 0,
  PYG: 0,
  RWF: 0,
  UGX: 0,
  UYI: 0,
  VND: 0,
  VUV: 0,
  XAF: 0,
  XOF: 0,
  XPF: 0,
  BHD: 3,
  IQD: 3,
  JOD: 3,
  KWD: 3,
  LYD: 3,
  OMR: 3,
  TND: 3,
  CLF: 4,
  UYW: 4,
}

/** Decimals of a currency's major unit: GBP 2, JPY 0, BHD 3. */
export function currencyExponent(currency: string): number {
  return CURRENCY_EXPONENT_EXCEPTIONS[currency.trim().toUpperCase()] ?? 2
}

/** The largest amount a form takes, in major units (ten million). */
export const MAX_MAJOR = 10_000_000

export type ParsedAmount = { ok: true; minor: number } | { ok: false; reason: string }

/**
 * A decimal amount as a person types it ("1250", "1,250.50", "19.9", "0.5") to integer minor units of the currency, by reading
 * the digits, never by multiplying a float: "19.99" GBP → 1999, "1500" JPY → 1500, "1.234" BHD → 1234. A comma or a space
 * between groups of three digits is taken as a thousands separator; a decimal comma ("19,99") is read as a decimal point.
 * More decimals than the currency has is refused rather than rounded.
 */
export function parseAmount(text: string, currency: string): ParsedAmount {
  const digits = currencyExponent(currency)
  let s = text.trim().replace(/[\s\u00a0\u202f']/g, '')
  if (s === '') return { ok: false, reason: 'is required' }
  if (s.startsWith('-')) return { ok: false, reason: 'must be 0 or more' }
  if (s.startsWith('+')) s = s.slice(1)
  // Thousands separated by commas with a point for decimals: drop the commas. A lone comma followed by 1–3 digits at the end: a decimal comma.
  if (/^\d{1,3}(,\d{3})+(\.\d*)?$/.test(s)) s = s.replace(/,/g, '')
  else if (/^\d*,\d*$/.test(s)) s = s.replace(',', '.')
  const m = /^(\d*)(?:\.(\d*))?$/.exec(s)
  if (!m || (m[1] === '' && (m[2] ?? '') === '')) return { ok: false, reason: 'must be an amount such as 1250.50' }
  const whole = m[1] === '' ? '0' : m[1]!
  const frac = (m[2] ?? '').replace(/0+$/, '')
  if (frac.length > digits)
    return { ok: false, reason: digits === 0 ? `has no decimals in ${currency.toUpperCase()}` : `has at most ${digits} decimals in ${currency.toUpperCase()}` }
  const major = Number(whole)
  if (major > MAX_MAJOR) return { ok: false, reason: 'is too large' }
  const minor = major * 10 ** digits + (frac ? Number(frac.padEnd(digits, '0')) : 0)
  if (!Number.isSafeInteger(minor)) return { ok: false, reason: 'is too large' }
  return { ok: true, minor }
}

/** Integer minor units as plain decimal text for a form field or a CSV cell: 123450 GBP → "1234.50", 1500 JPY → "1500", −5 GBP → "-0.05". */
export function minorToDecimal(minor: number, currency: string): string {
  const digits = currencyExponent(currency)
  const sign = minor < 0 ? '-' : ''
  const abs = Math.abs(Math.trunc(minor))
  if (digits === 0) return `${sign}${abs}`
  const unit = 10 ** digits
  return `${sign}${Math.floor(abs / unit)}.${String(abs % unit).padStart(digits, '0')}`
}

/** Minor units as a major-unit number (for a figure that is only shown or exported, never summed again): 123450 GBP → 1234.5. */
export const minorToMajor = (minor: number, currency: string): number => Number(minorToDecimal(minor, currency))
