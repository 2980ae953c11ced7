// VAT in a VAT-inclusive price: amount × rate / (100 + rate), to the penny, halves rounded up; checked against hand-worked sums.
// 20 % is the UK standard rate, 5 % the reduced rate, as HMRC publishes them (17.5 % the standard rate before 2011).
import { describe, expect, it } from 'vitest'
import { rateBasisPoints, vatInAmount, vatLine, vatNumberLine, vatSplit, vatTermsOf, type VatTerms } from '../../shared/domain/vat'

const registered: VatTerms = { vatRegistered: true, vatNumber: 'GB 123 4567 89', vatRatePct: 20 }
/** Pence as "£1,234.56", written here by hand rather than by the app's formatter. */
const pounds = (minor: number) => `£${Math.floor(minor / 100).toLocaleString('en-GB')}.${String(minor % 100).padStart(2, '0')}`

describe('the VAT in a price the customer pays', () => {
  it('when £1,850.00 is paid at 20 %, then £308.33 of it is VAT and £1,541.67 is before VAT', () => {
    // 1850 × 20 / 120 = 1850 / 6 = 308.333… → 308.33; 1850 − 308.33 = 1541.67.
    expect(vatInAmount(185000, 20)).toBe(30833)
    expect(vatSplit(185000, registered)).toEqual({ vatMinor: 30833, netMinor: 154167 })
  })

  it('when £99.99 is paid at 20 %, then the VAT of £16.665 rounds half up to £16.67, leaving £83.32', () => {
    // 99.99 / 6 = 16.665 exactly: a half penny, rounded up.
    expect(vatInAmount(9999, 20)).toBe(1667)
    expect(vatSplit(9999, registered)).toEqual({ vatMinor: 1667, netMinor: 8332 })
  })

  it('when amounts are small or a refund, then halves go away from zero and a refund mirrors its payment', () => {
    expect(vatInAmount(3, 20)).toBe(1) // 3 / 6 = 0.5 → 1
    expect(vatInAmount(2, 20)).toBe(0) // 2 / 6 = 0.33… → 0
    expect(vatInAmount(600, 20)).toBe(100) // £6.00 → £1.00 exactly
    expect(vatInAmount(-9999, 20)).toBe(-1667)
    expect(vatInAmount(0, 20)).toBe(0)
  })

  it('when the rate is 5 %, 17.5 % or 0 %, then the VAT is price × rate / (100 + rate)', () => {
    expect(vatInAmount(10500, 5)).toBe(500) // 105 × 5 / 105 = 5.00
    expect(vatInAmount(11750, 17.5)).toBe(1750) // 117.50 × 17.5 / 117.5 = 17.50
    expect(vatInAmount(10000, 17.5)).toBe(1489) // 100 × 17.5 / 117.5 = 14.893… → 14.89
    expect(vatInAmount(185000, 0)).toBe(0)
    expect(rateBasisPoints(17.5)).toBe(1750)
  })

  it('when the workshop is not registered, then there is no split, no line and no number', () => {
    const not = { ...registered, vatRegistered: false }
    expect(vatSplit(185000, not)).toBeNull()
    expect(vatLine(185000, not, pounds)).toBeNull()
    expect(vatNumberLine(not)).toBeNull()
  })

  it('when registered, then documents read "of which VAT at 20%: £308.33 (£1,541.67 before VAT)" and the VAT number', () => {
    expect(vatLine(185000, registered, pounds)).toBe('of which VAT at 20%: £308.33 (£1,541.67 before VAT)')
    expect(vatLine(9999, { ...registered, vatRatePct: 17.5 }, pounds)).toBe('of which VAT at 17.5%: £14.89 (£85.10 before VAT)')
    expect(vatNumberLine(registered)).toBe('VAT registration no. GB 123 4567 89')
    expect(vatTermsOf({ vatRegistered: true, vatNumber: 'GB 1', vatRateBasisPoints: 1750 })).toEqual({
      vatRegistered: true,
      vatNumber: 'GB 1',
      vatRatePct: 17.5,
    })
  })
})
