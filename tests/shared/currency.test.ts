// Currency decimals (ISO 4217 minor units) and amounts typed as text read into integer minor units exactly.
import { describe, expect, it } from 'vitest'
import { currencyExponent, minorToDecimal, minorToMajor, parseAmount } from '../../shared/domain/currency'

describe('currency decimals', () => {
  it('when a currency is looked up, then its decimals are the ISO 4217 minor unit', () => {
    // ISO 4217 List One, column "Minor unit": GBP 2, EUR 2, USD 2, CHF 2, JPY 0, KRW 0, ISK 0, CLP 0, BHD 3, KWD 3, JOD 3, OMR 3, TND 3, CLF 4.
    const iso: Record<string, number> = { GBP: 2, EUR: 2, USD: 2, CHF: 2, JPY: 0, KRW: 0, ISK: 0, CLP: 0, BHD: 3, KWD: 3, JOD: 3, OMR: 3, TND: 3, CLF: 4 }
    for (const [code, digits] of Object.entries(iso)) expect(currencyExponent(code), code).toBe(digits)
    expect(currencyExponent(' jpy ')).toBe(0)
  })
})

describe('reading a typed amount', () => {
  it('when a decimal is typed, then its digits become minor units with no floating point error', () => {
    // 19.99 × 100 in binary floating point is 1998.9999999999998; read as digits it is 1999 pence.
    expect(19.99 * 100).not.toBe(1999)
    expect(parseAmount('19.99', 'GBP')).toEqual({ ok: true, minor: 1999 })
    expect(parseAmount('1250', 'GBP')).toEqual({ ok: true, minor: 125_000 })
    expect(parseAmount('1,250.5', 'GBP')).toEqual({ ok: true, minor: 125_050 })
    expect(parseAmount('0.1', 'EUR')).toEqual({ ok: true, minor: 10 })
    expect(parseAmount('19,99', 'EUR')).toEqual({ ok: true, minor: 1999 })
    expect(parseAmount('1500', 'JPY')).toEqual({ ok: true, minor: 1500 })
    expect(parseAmount('1500.00', 'JPY')).toEqual({ ok: true, minor: 1500 })
    expect(parseAmount('1.234', 'BHD')).toEqual({ ok: true, minor: 1234 })
    expect(parseAmount('12.5', 'KWD')).toEqual({ ok: true, minor: 12_500 })
  })
  it('when the text is not an amount or has more decimals than the currency, then it is refused with the reason', () => {
    expect(parseAmount('', 'GBP')).toEqual({ ok: false, reason: 'is required' })
    expect(parseAmount('-5', 'GBP')).toEqual({ ok: false, reason: 'must be 0 or more' })
    expect(parseAmount('12.345', 'GBP')).toEqual({ ok: false, reason: 'has at most 2 decimals in GBP' })
    expect(parseAmount('1500.5', 'JPY')).toEqual({ ok: false, reason: 'has no decimals in JPY' })
    expect(parseAmount('12a', 'GBP').ok).toBe(false)
    expect(parseAmount('.', 'GBP').ok).toBe(false)
    expect(parseAmount('20000000', 'GBP')).toEqual({ ok: false, reason: 'is too large' })
  })
  it('when minor units are written back as text, then the currency decimals are kept', () => {
    expect(minorToDecimal(123_450, 'GBP')).toBe('1234.50')
    expect(minorToDecimal(5, 'GBP')).toBe('0.05')
    expect(minorToDecimal(-5, 'GBP')).toBe('-0.05')
    expect(minorToDecimal(1500, 'JPY')).toBe('1500')
    expect(minorToDecimal(1234, 'BHD')).toBe('1.234')
    expect(minorToMajor(123_450, 'GBP')).toBe(1234.5)
    expect(minorToMajor(1500, 'JPY')).toBe(1500)
  })
})
