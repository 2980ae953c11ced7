// Amounts travel as integer minor units with their currency; the screen writes them as the browser's locale does.
import { describe, expect, it } from 'vitest'
import { formatMinor, minorDigits } from '@/composables/use-money'

// Intl may separate the number from the sign with a no-break space (U+00A0) or a narrow one (U+202F): compare with plain spaces.
const plain = (s: string) => s.replace(/[\u00a0\u202f]/g, ' ')

describe('money on screen', () => {
  it('when a currency is named, then its minor units are those of ISO 4217 (GBP 2, JPY 0, BHD 3)', () => {
    // ISO 4217 list one, column "Minor unit": GBP 2, EUR 2, JPY 0, BHD 3.
    expect([minorDigits('GBP'), minorDigits('EUR'), minorDigits('JPY'), minorDigits('BHD')]).toEqual([2, 2, 0, 3])
  })

  it('when a currency has decimals in ISO 4217 that Intl does not show, then the amount is still read by ISO 4217', () => {
    // ISO 4217: HUF has 2 decimals (fillér), so 150000 minor units are 1,500 forint; Intl (CLDR) writes forint without decimals.
    // Taking Intl's 0 as the minor unit would have shown HUF 150,000.
    expect(minorDigits('HUF')).toBe(2)
    expect(plain(formatMinor(150000, 'HUF', 'en-GB'))).toBe('HUF 1,500')
  })

  it('when 125000 pence are shown in en-GB, then they read £1,250.00', () => {
    // 125000 p = £1,250.00 (hand-worked); en-GB groups thousands with a comma and puts £ before the figure.
    expect(formatMinor(125000, 'GBP', 'en-GB')).toBe('£1,250.00')
    expect(formatMinor(37500, 'GBP', 'en-GB')).toBe('£375.00')
    expect(formatMinor(-37500, 'GBP', 'en-GB')).toBe('-£375.00')
  })

  it('when the browser is German or Japanese, then the same amounts follow that locale', () => {
    // de-DE: dot for thousands, comma for decimals, the sign after the figure; 123456 cents = 1.234,56 €.
    expect(plain(formatMinor(123456, 'EUR', 'de-DE'))).toBe('1.234,56 €')
    // JPY has no minor unit: 1500 minor units are ¥1,500 (ja-JP writes the full-width yen sign).
    expect(formatMinor(1500, 'JPY', 'ja-JP')).toBe('￥1,500')
  })

  it('when there is no amount, then a dash is shown', () => {
    expect(formatMinor(null, 'GBP', 'en-GB')).toBe('—')
  })
})
