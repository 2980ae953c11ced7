// Metal rules against published figures: casting weight, conversion between metals, alloy density, hallmark thresholds, fineness;
// and which work is on the customer's own piece.
import { describe, expect, it } from 'vitest'
import { alloyDensity, castingMetalG, convertWeight, fineWeight, gToMg, metalLoss, needsHallmark, worksOnCustomersPiece } from '../../shared/domain/metal'
import { alloyInput, issueInput, returnInput } from '../../shared/schemas/metal'

describe('casting and conversion', () => {
  it('when 5 g of wax is cast in 14K yellow (13.07), then 71.89 g of metal is issued with the 10 % button', () => {
    // Rio Grande, "How To Determine Metal Weight for Wax Trees" (2019): 5 g wax → 5.5 g × 13.07 = 71.89 g of 14K yellow.
    expect(castingMetalG(5, 13.07)).toBeCloseTo(71.89, 2)
  })

  it('when a 4 dwt sterling piece is converted to 14K yellow, then it weighs about 5.02 dwt', () => {
    // Stuller, "specific gravity of various materials" (2012): 4 dwt sterling → 5.02 dwt 14K yellow. Densities from Rio Grande
    // (sterling 10.36, 14K yellow 13.07); tables differ by 1–3 %, so within 1 %.
    const dwt = convertWeight(4, 10.36, 13.07)
    expect(Math.abs(dwt - 5.02) / 5.02).toBeLessThan(0.01)
  })

  it('when 14K is 583 gold, 104 silver and 313 copper by weight, then its density is 13.33 within 2 %', () => {
    // tmtpages, "How to Determine Approximate Specific Gravities of Alloys": 14K example → 13.33; element densities from the CRC Handbook.
    const rho = alloyDensity([
      { weight: 583, density: 19.32 },
      { weight: 104, density: 10.49 },
      { weight: 313, density: 8.96 },
    ])
    expect(Math.abs(rho - 13.33) / 13.33).toBeLessThan(0.02)
  })

  it('when sterling is 925 silver and 75 copper, then its density is 10.36 within 2 %', () => {
    // TRADE.md (tmtpages method, Rio Grande figure for sterling 10.36).
    const rho = alloyDensity([
      { weight: 925, density: 10.49 },
      { weight: 75, density: 8.96 },
    ])
    expect(Math.abs(rho - 10.36) / 10.36).toBeLessThan(0.02)
  })
})

describe('fine weight and loss', () => {
  it('when 10 g of 18 ct (750) is weighed, then 7.5 g of it is fine gold', () => {
    // Hand-worked: 10 × 750 / 1000 = 7.5.
    expect(fineWeight(10, 750)).toBe(7.5)
  })

  it('when 12.00 g is issued and 11.20 g piece, 0.35 g scrap and 0.20 g lemel come back, then 250 mg (2.1 %) is lost', () => {
    // Hand-worked: 12000 − (11200 + 350 + 200) = 250 mg; 250 / 12000 = 2.08 % → 2.1 %.
    expect(metalLoss(12000, { pieceMg: 11200, scrapMg: 350, lemelMg: 200 })).toEqual({ issuedMg: 12000, returnedMg: 11750, lossMg: 250, lossPct: 2.1 })
  })

  it('when grams with two decimals go to milligrams, then no float error creeps in', () => {
    // Hand-worked: 0.29 g = 290 mg, 1.005 rounds to 1005 mg.
    expect(gToMg(0.29)).toBe(290)
    expect(gToMg(12.34)).toBe(12340)
  })
})

describe('hallmarking thresholds', () => {
  // Hallmarking Convention, "Country profile – United Kingdom": not compulsory below platinum 0.5 g, gold 1 g, palladium 1 g, silver 7.78 g.
  it.each([
    ['platinum', 0.49, false],
    ['platinum', 0.5, true],
    ['gold', 0.99, false],
    ['gold', 1, true],
    ['palladium', 0.99, false],
    ['palladium', 1, true],
    ['silver', 7.77, false],
    ['silver', 7.78, true],
    ['base', 500, false],
  ] as const)('when a %s piece weighs %s g, then hallmarking is compulsory: %s', (metal, g, expected) => {
    expect(needsHallmark(metal, g)).toBe(expected)
  })
})

describe('fineness and weight validation', () => {
  const base = { code: 'x', name: 'X', densityGPerCm3: 15 }
  // UK legal standards (Hallmarking Convention, UK profile): gold 999, 990, 916, 750, 585, 375; silver 999, 958, 925, 800.
  it.each([
    ['gold', 750],
    ['gold', 375],
    ['gold', 585],
    ['silver', 925],
    ['silver', 958],
    ['platinum', 950],
    ['palladium', 500],
  ] as const)('when %s is %s ‰, then the alloy is accepted', (metal, fineness) => {
    expect(alloyInput.safeParse({ ...base, metal, fineness }).success).toBe(true)
  })
  it.each([
    ['gold', 583],
    ['gold', 925],
    ['silver', 750],
    ['platinum', 585],
    ['palladium', 900],
  ] as const)('when %s is %s ‰, then the fineness field is refused', (metal, fineness) => {
    const r = alloyInput.safeParse({ ...base, metal, fineness })
    expect(r.success).toBe(false)
    expect(r.error!.issues.map((i) => i.path.join('.'))).toContain('fineness')
  })
  it.each([0, -1, 1.234])('when the weight is %s g, then weightG is refused', (weightG) => {
    const r = issueInput.safeParse({ jobBagId: 1, alloyId: 1, personId: 1, weightG })
    expect(r.success).toBe(false)
    expect(r.error!.issues.map((i) => i.path.join('.'))).toContain('weightG')
  })
  it('when a return has no form, then the form field is refused', () => {
    const r = returnInput.safeParse({ jobBagId: 1, alloyId: 1, personId: 1, weightG: 1 })
    expect(r.error!.issues.map((i) => i.path.join('.'))).toContain('form')
  })
})

describe('work on the customer’s own piece', () => {
  const resize = { resizeFrom: { scale: 'uk', value: 'N' }, resizeTo: { scale: 'uk', value: 'P' } }

  it('when the routing is a repair, then the work is on the customer’s piece; a new piece or a production run is not', () => {
    expect(worksOnCustomersPiece({ kind: 'repair' }, {})).toBe(true)
    expect(worksOnCustomersPiece({ kind: 'piece' }, {})).toBe(false)
    expect(worksOnCustomersPiece({ kind: 'run' }, null)).toBe(false)
  })

  it('when a resize is recorded on the piece, then it is the customer’s ring whatever the routing, even with none', () => {
    expect(worksOnCustomersPiece({ kind: 'piece' }, resize)).toBe(true)
    expect(worksOnCustomersPiece({ kind: 'run' }, { resizeTo: resize.resizeTo })).toBe(true)
    expect(worksOnCustomersPiece(null, { resizeFrom: resize.resizeFrom })).toBe(true)
    expect(worksOnCustomersPiece(undefined, {})).toBe(false)
  })
})
