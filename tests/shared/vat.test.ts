// VAT in a VAT-inclusive price: amount × rate / (100 + rate), to the penny, halves rounded up; checked against hand-worked sums.
// 20 % is the UK standard rate, 5 % the reduced rate, as HMRC publishes them (17.5 % the standard rate before 2011). The VAT
// number's shape is checked as we remember HMRC's formats (GB or XI, then 9 digits or 12 with a branch; GBGD and 000–499 for a
// government department, GBHA and 500–999 for a health authority), not against its specification.
import { describe, expect, it } from 'vitest'
import {
  isUkVatNumber,
  paymentVat,
  rateBasisPoints,
  refundVat,
  vatInAmount,
  vatLine,
  vatNumberLine,
  vatSplit,
  vatTermsOf,
  type PaidWithVat,
  type StoredVatTerms,
  type VatTerms,
} from '../../shared/domain/vat'
import { vatChangeProblem, workshopSettingsChange, workshopSettingsInput } from '../../shared/schemas/calendar'

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

const at20: StoredVatTerms = { vatRegistered: true, vatNumber: 'GB 123 4567 89', vatRateBasisPoints: 2000 }
/** A payment already on the order, taken at 20 % unless said otherwise. */
const paid = (amountMinor: number, vatMinor: number, terms: StoredVatTerms = at20): PaidWithVat => ({ ...terms, amountMinor, vatMinor })

describe("the VAT on an order's payments", () => {
  it('when £100.00 is paid as a £50.00 deposit and a £50.00 balance at 20 %, then the balance carries £8.34 so both make the price’s £16.67', () => {
    // Price: 100 / 6 = 16.666… → £16.67. Deposit: 50 / 6 = 8.333… → £8.33. On its own the balance would be £8.33 too (£16.66 in
    // all, a penny short); as the payment that settles the order it carries the rest: £16.67 − £8.33 = £8.34.
    expect(vatInAmount(10000, 20)).toBe(1667)
    const deposit = paymentVat(5000, at20, { priceMinor: 10000, earlier: [] })
    expect(deposit).toBe(833)
    expect(paymentVat(5000, at20, { priceMinor: 10000, earlier: [paid(5000, deposit)] })).toBe(834)
  })

  it('when a payment does not bring what is paid to the price, then its VAT is that of its own amount', () => {
    // £100.00 price; £30.00 paid; £40.00 more leaves £30.00 owed: 40 / 6 = 6.666… → £6.67.
    expect(paymentVat(4000, at20, { priceMinor: 10000, earlier: [paid(3000, 500)] })).toBe(667)
  })

  it('when three payments of £33.33, £33.33 and £33.34 pay £100.00, then the last carries £16.67 − £5.56 − £5.56 = £5.55', () => {
    // 33.33 / 6 = 5.555 → £5.56 (a half, up); 33.34 / 6 = 5.5566… → £5.56 on its own, which would make £16.68.
    expect(paymentVat(3333, at20, { priceMinor: 10000, earlier: [] })).toBe(556)
    expect(paymentVat(3334, at20, { priceMinor: 10000, earlier: [paid(3333, 556), paid(3333, 556)] })).toBe(555)
  })

  it('when a refund came between, then the settling payment carries the price’s VAT less the VAT kept from the others', () => {
    // £100.00: £60.00 paid (£10.00 VAT), £10.00 of it refunded (−£1.67: 10 / 6 = 1.666… → 1.67), then £50.00 settles:
    // £16.67 − (£10.00 − £1.67) = £8.34.
    expect(paymentVat(5000, at20, { priceMinor: 10000, earlier: [paid(6000, 1000), paid(-1000, -167)] })).toBe(834)
  })

  it('when the settling payment pays more than is owed, then it carries the VAT of all that is paid less what the others carried', () => {
    // £100.00 price, £50.00 paid (£8.33), then £60.00: £110.00 paid in all, 110 / 6 = 18.333… → £18.33; £18.33 − £8.33 = £10.00.
    expect(paymentVat(6000, at20, { priceMinor: 10000, earlier: [paid(5000, 833)] })).toBe(1000)
  })

  it('when the order is already paid, then a further payment carries the VAT of its own amount', () => {
    expect(paymentVat(5000, at20, { priceMinor: 10000, earlier: [paid(5000, 833), paid(5000, 834)] })).toBe(833)
  })

  it('when an earlier payment was taken at another rate or without VAT, then the settling one carries the VAT of its own amount', () => {
    // £50.00 at 5 %: 50 × 5 / 105 = 2.380… → £2.38; the balance at 20 % is 50 / 6 = 8.333… → £8.33, no rest to carry.
    const at5 = { ...at20, vatRateBasisPoints: 500 }
    expect(paymentVat(5000, at20, { priceMinor: 10000, earlier: [paid(5000, 238, at5)] })).toBe(833)
    expect(paymentVat(5000, at20, { priceMinor: 10000, earlier: [paid(5000, 0, { ...at20, vatRegistered: false })] })).toBe(833)
  })

  it('when the workshop was not registered as the payment came in, then it carries no VAT', () => {
    expect(paymentVat(5000, { ...at20, vatRegistered: false }, { priceMinor: 10000, earlier: [paid(5000, 833)] })).toBe(0)
  })
})

describe('the VAT on a refund', () => {
  it('when the £50.00 balance that carried £8.34 is refunded in full, then £8.34 is taken back, not the £8.33 of £50.00', () => {
    expect(refundVat(-5000, paid(5000, 834), [])).toBe(-834)
  })

  it('when a payment is refunded in two parts, then the first takes back the VAT of its amount and the last what is left', () => {
    // £8.34 on £50.00; £25.00 back: 25 / 6 = 4.166… → −£4.17; the last £25.00 takes back £8.34 − £4.17 = £4.17.
    expect(refundVat(-2500, paid(5000, 834), [])).toBe(-417)
    expect(refundVat(-2500, paid(5000, 834), [{ amountMinor: -2500, vatMinor: -417 }])).toBe(-417)
    // £10.00 back of a £60.00 payment with £10.00 VAT: 10 / 6 = 1.666… → −£1.67; then the last £50.00 takes back £8.33.
    expect(refundVat(-1000, paid(6000, 1000), [])).toBe(-167)
    expect(refundVat(-5000, paid(6000, 1000), [{ amountMinor: -1000, vatMinor: -167 }])).toBe(-833)
  })

  it('when the payment was taken without VAT, then its refund gives none back', () => {
    expect(refundVat(-5000, paid(5000, 0, { ...at20, vatRegistered: false }), [])).toBe(0)
  })
})

const SHAPE = 'must be a UK VAT number: GB or XI and 9 digits (12 with a branch number), GBGD and 000–499, or GBHA and 500–999, such as GB 123 4567 89'

describe('the shape of a UK VAT number (as we remember HMRC’s formats)', () => {
  it('when it is GB and 9 digits, 9 digits alone, or 12 digits, with or without spaces, then it is taken', () => {
    for (const n of ['GB 123 4567 89', 'GB123456789', '123456789', '123 4567 89', 'gb 123 4567 89', 'GB 123 4567 89 001', '123456789001'])
      expect(isUkVatNumber(n), n).toBe(true)
  })

  it('when it is a Northern Ireland number, XI and 9 or 12 digits, with or without spaces, then it is taken', () => {
    for (const n of ['XI 123 4567 89', 'XI123456789', 'xi 123 4567 89', 'XI 123 4567 89 001', 'XI123456789001']) expect(isUkVatNumber(n), n).toBe(true)
  })

  it('when it is a government department’s, GBGD and 000 to 499, or a health authority’s, GBHA and 500 to 999, then it is taken', () => {
    for (const n of ['GBGD000', 'GBGD001', 'GB GD 499', 'gbgd 250', 'GBHA500', 'GBHA599', 'GB HA 999', 'gbha 750']) expect(isUkVatNumber(n), n).toBe(true)
  })

  it('when it has another number of digits, another prefix or letters among the digits, then it is refused', () => {
    for (const n of [
      'GB 123 4567 8',
      'GB 123 4567 890',
      'GB 123 4567 89 01',
      'GB 123 4567 89 0012',
      'FR 123 4567 89',
      'DE123456789',
      'GB 123 45A7 89',
      'GB',
      '',
      // Northern Ireland: 8, 10 or 13 digits, or XI and a GB number.
      'XI12345678',
      'XI 123 4567 890',
      'XI 123 4567 89 0012',
      'XIGB123456789',
      'XI',
      // A government department's number runs 000 to 499, a health authority's 500 to 999, each exactly 3 digits after GBGD or GBHA.
      'GBGD500',
      'GBGD999',
      'GBHA499',
      'GBHA000',
      'GBGD01',
      'GBGD0001',
      'GBHA5000',
      'GBGD',
      'GD001',
      'HA599',
      'XIGB001',
    ])
      expect(isUkVatNumber(n), n).toBe(false)
  })
})

describe('the VAT number in the workshop settings', () => {
  const base = { name: 'Wrenfield Street Workshop', timeZone: 'Europe/London', weekPattern: [{ weekday: 1, start: '09:00', end: '17:00' }], version: 1 }
  const notRegistered: VatTerms = { vatRegistered: false, vatNumber: '', vatRatePct: 20 }
  /** The VAT number's reasons for the form's values over the settings as they stand (`stored`), or null when the form may be sent. */
  const reasons = (input: Record<string, unknown>, stored: VatTerms = notRegistered) => {
    const r = workshopSettingsChange(stored).safeParse({ ...base, ...input })
    return r.success ? null : r.error.issues.filter((i) => i.path.join('.') === 'vatNumber').map((i) => i.message)
  }

  it('when a registered workshop gives a number of another shape, then it is refused under the field; one of the right shape is kept as typed', () => {
    expect(reasons({ vatRegistered: true, vatNumber: 'GB 123 4567' })).toEqual([SHAPE])
    expect(reasons({ vatRegistered: true, vatNumber: 'FR 123 4567 89' })).toEqual([SHAPE])
    expect(reasons({ vatRegistered: true, vatNumber: 'GBGD 500' })).toEqual([SHAPE])
    expect(reasons({ vatRegistered: true, vatNumber: 'XI 1234 5678' })).toEqual([SHAPE])
    // Spaces and all, as the owner typed it.
    for (const n of ['GB 123 4567 89 001', '123456789', 'XI 123 4567 89', 'GBGD 001', 'GBHA 599'])
      expect(workshopSettingsChange(notRegistered).parse({ ...base, vatRegistered: true, vatNumber: n }).vatNumber).toBe(n)
    // Registered with none: still required.
    expect(reasons({ vatRegistered: true, vatNumber: '' })).toEqual(['is required when the workshop is registered for VAT'])
  })

  it('when the workshop is not registered, then whatever number is typed is not checked; registered, the same number is refused', () => {
    expect(reasons({ vatRegistered: false, vatNumber: 'GB 123' })).toBeNull()
    expect(reasons({ vatRegistered: true, vatNumber: 'GB 123' })).toEqual([SHAPE])
  })

  it('when a registered workshop’s stored number has a bad shape, then a change of anything but the VAT details is taken, and a change of them checks the number', () => {
    // Stored before its shape was checked: 8 digits.
    const stored: VatTerms = { vatRegistered: true, vatNumber: 'GB 123 4567 8', vatRatePct: 20 }
    const same = { vatRegistered: true, vatNumber: 'GB 123 4567 8', vatRatePct: 20 }
    expect(reasons({ ...same, address: '14 Wrenfield Street, Bath BA1 1AA' }, stored)).toBeNull()
    // The same number in other spacing and letters is the same number.
    expect(reasons({ ...same, vatNumber: 'gb 1234 5678', name: 'Wrenfield Works' }, stored)).toBeNull()
    // Left out of the change, as the money rules are saved.
    expect(reasons({ depositPct: 40 }, stored)).toBeNull()
    expect(reasons({ ...same, vatNumber: 'GB 123 4567 0' }, stored)).toEqual([SHAPE])
    expect(reasons({ ...same, vatRatePct: 5 }, stored)).toEqual([SHAPE])
    expect(reasons({ vatRatePct: 5 }, stored)).toEqual([SHAPE])
    expect(reasons({ ...same, vatNumber: 'GB 123 4567 89' }, stored)).toBeNull()
    // Leaving VAT: nothing to check.
    expect(reasons({ ...same, vatRegistered: false }, stored)).toBeNull()
    // The input's own schema no longer knows the stored number, so it leaves the check to the change.
    expect(workshopSettingsInput.safeParse({ ...base, ...same }).success).toBe(true)
  })

  it('when registering a workshop whose number was kept while it was not registered, then the kept number is checked', () => {
    const kept: VatTerms = { vatRegistered: false, vatNumber: 'PENDING', vatRatePct: 20 }
    expect(vatChangeProblem(kept, { ...kept, vatRegistered: true })).toBe(SHAPE)
    expect(vatChangeProblem(kept, { ...kept, vatNumber: 'STILL PENDING' })).toBeNull()
  })
})
