// A quote's stone row in the customer's words: its carats said the way they were given — in all, or stone by stone with the
// row's total beside them — and the quoted rows an order keeps for its estimate. Every total is worked by hand beside its check.
import { describe, expect, it } from 'vitest'
import { quoteDetails, quotedStones, quoteStoneWords } from '../../shared/schemas/quote'

describe('a quoted stone row in words', () => {
  it('when the carats are of all the stones together, then they are said in all, never as the weight of each', () => {
    expect(quoteStoneWords({ description: 'round diamonds of 1.5 mm', count: 18, carats: 0.25 })).toBe('18 × round diamonds of 1.5 mm, 0.25 ct in all')
    expect(quoteStoneWords({ description: 'mixed sapphires', carats: 2.4 })).toBe('mixed sapphires, 2.4 ct in all')
  })

  it('when the carats are of one stone, then the row says each and its total: count × one stone’s carats', () => {
    // 3 × 0.07 ct = 0.21 ct (in floating point 0.21000000000000002); 3 × 0.1 ct = 0.3 ct (0.30000000000000004); 45 × 0.015 ct
    // = 0.675 ct; 120 × 0.005 ct = 0.6 ct.
    expect(quoteStoneWords({ description: 'round diamonds of 2.5 mm', count: 3, caratEach: 0.07 })).toBe(
      '3 × round diamonds of 2.5 mm, 0.07 ct each (0.21 ct in all)',
    )
    expect(quoteStoneWords({ description: 'round diamonds of 3 mm', count: 3, caratEach: 0.1 })).toBe('3 × round diamonds of 3 mm, 0.1 ct each (0.3 ct in all)')
    expect(quoteStoneWords({ description: 'pavé of 1.5 mm', count: 45, caratEach: 0.015 })).toBe('45 × pavé of 1.5 mm, 0.015 ct each (0.675 ct in all)')
    expect(quoteStoneWords({ description: 'pavé of 1 mm', count: 120, caratEach: 0.005 })).toBe('120 × pavé of 1 mm, 0.005 ct each (0.6 ct in all)')
    expect(quoteStoneWords({ description: 'round diamonds', caratEach: 0.02 })).toBe('round diamonds, 0.02 ct each')
  })

  it('when one stone’s carats have more than three decimals, then the quote refuses them, so the printed total is count × what is printed', () => {
    const r = quoteDetails.safeParse({ stones: [{ description: 'pavé', count: 40, caratEach: 0.0125 }] })
    expect(r.success).toBe(false)
    expect(r.error?.issues.map((i) => [i.path.join('.'), i.message])).toEqual([['stones.0.caratEach', 'must have at most three decimals, such as 0.015']])
    expect(quoteDetails.safeParse({ stones: [{ description: 'pavé', count: 40, caratEach: 0.013 }] }).success).toBe(true)
  })

  it('when the row is one stone, then its weight is said plainly, whichever way it was given', () => {
    expect(quoteStoneWords({ description: 'oval sapphire', count: 1, caratEach: 1.2 })).toBe('1 × oval sapphire, 1.2 ct')
    expect(quoteStoneWords({ description: 'oval sapphire', count: 1, carats: 1.2 })).toBe('1 × oval sapphire, 1.2 ct')
    expect(quoteStoneWords({ description: 'engraving', count: 0 })).toBe('engraving')
  })
})

describe('the quoted stones an order keeps', () => {
  it('when a quote has rows with and without a count, then only the counted rows are kept, in order, a cost not given as null', () => {
    expect(
      quotedStones([
        { description: 'round diamonds', count: 18, carats: 0.25, costEachMinor: 4567 },
        { description: 'initials inside' },
        { description: 'none after all', count: 0, costEachMinor: 100 },
        { description: 'oval sapphire', count: 1 },
      ]),
    ).toEqual([
      { description: 'round diamonds', count: 18, costEachMinor: 4567 },
      { description: 'oval sapphire', count: 1, costEachMinor: null },
    ])
    expect(quotedStones(undefined)).toEqual([])
  })
})
