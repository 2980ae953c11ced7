// Job costing arithmetic in minor units against hand-worked examples: metal at the price of the day issued, loss, stones, outside work, labour, margins.
import { describe, expect, it } from 'vitest'
import {
  ALL_COUNTED,
  addBreakdowns,
  breakdown,
  labourMinor,
  margin,
  marginCaveat,
  metalActual,
  metalMinor,
  mulDivRound,
  roundHalfAway,
  stonesMinor,
  suggestedPriceMinor,
} from '../../shared/domain/costing'

describe('rounding', () => {
  it('when a line comes to exactly half a minor unit, then it rounds away from zero, once per line', () => {
    // Half away from zero (the rounding the costing states): 0.5 → 1, −0.5 → −1, 2.5 → 3.
    expect(roundHalfAway(0.5)).toBe(1)
    expect(roundHalfAway(-0.5)).toBe(-1)
    expect(roundHalfAway(2.5)).toBe(3)
    expect(mulDivRound(-1, 500, 1000)).toBe(-1)
    // 0.5 g at 1 p/g = 0.5 p → 1 p per line; two such lines make 2 p (rounding the sum instead would give 1 p).
    expect(metalMinor(500, 1) + metalMinor(500, 1)).toBe(2)
    // 3 min at 0.50/h = 150/60 = 2.5 p → 3 p; 1 min at 32.50/h = 3250/60 = 54.17 p → 54 p.
    expect(labourMinor(3, 50)).toBe(3)
    expect(labourMinor(1, 3250)).toBe(54)
  })
})

describe('a job costed by hand', () => {
  it('when 18 ct, stones, outside work and labour are costed, then the total and margin are the hand-worked ones', () => {
    // 6.20 g of 18 ct in the piece, issued on a day the price was 5,234 p/g (it rose to 5,600 p/g later; the later price is not used):
    //   6,200 mg × 5,234 / 1,000 = 32,450.8 p → 32,451 p; loss 0.15 g: 150 × 5,234 / 1,000 = 785.1 p → 785 p; metal 33,236 p.
    const metal = metalActual({ pieceMg: 6200, lossMg: 150, customerMg: 0, pricePerGramMinor: 5234 })
    expect(metal).toMatchObject({ pieceMinor: 32_451, lossMinor: 785, minor: 33_236, customerLossMg: 0 })
    // 3 stones at 12,000 p set + 1 broken = 4 × 12,000 = 48,000 p.
    const stones = stonesMinor(12_000, 3 + 1)
    expect(stones).toBe(48_000)
    // Outside work 45.00 = 4,500 p; labour 3.5 h = 210 min at 32.00/h: 210 × 3,200 / 60 = 11,200 p.
    const labour = labourMinor(210, 3200)
    expect(labour).toBe(11_200)
    const cost = breakdown({ metalMinor: metal.minor, stonesMinor: stones, outsideMinor: 4500, labourMinor: labour })
    // Total 33,236 + 48,000 + 4,500 + 11,200 = 96,936 p = 969.36.
    expect(cost.totalMinor).toBe(96_936)
    // Price 1,250.00 = 125,000 p: margin 28,064 p = 280.64; 28,064 / 125,000 = 22.45 % → 22.5 %.
    expect(margin(125_000, cost.totalMinor)).toEqual({ marginMinor: 28_064, marginPct: 22.5 })
    // At a 40 % margin: 96,936 / 0.6 = 161,560 p, up to the next whole pound: 1,616.00.
    expect(suggestedPriceMinor(cost.totalMinor, 40)).toBe(161_600)
    expect(suggestedPriceMinor(cost.totalMinor, 40, 'GBP')).toBe(161_600)
    expect(addBreakdowns([cost, cost]).totalMinor).toBe(193_872)
  })

  it('when the metal is the customer’s own, then it costs nothing but its loss is reported', () => {
    // 8 g of the customer's old gold covers the 6.20 g piece and the 0.15 g loss: nothing charged, 150 mg of their metal lost.
    expect(metalActual({ pieceMg: 6200, lossMg: 150, customerMg: 8000, pricePerGramMinor: 5234 })).toMatchObject({ minor: 0, customerLossMg: 150 })
    // 6 g of theirs: the piece takes it and 0.20 g of stock (200 × 5,234 / 1,000 = 1,046.8 → 1,047 p); the loss is stock metal: 785 p.
    expect(metalActual({ pieceMg: 6200, lossMg: 150, customerMg: 6000, pricePerGramMinor: 5234 })).toMatchObject({
      pieceMinor: 1047,
      lossMinor: 785,
      minor: 1832,
      customerLossMg: 0,
    })
  })

  it('when nothing is missing, then the margin says all four are counted; otherwise it names only what is missing', () => {
    expect(marginCaveat([])).toBe(ALL_COUNTED)
    expect(marginCaveat(['stone-costs', 'no-metal-weighed', 'stone-costs'])).toBe('no metal weighed yet; stone costs not entered')
  })
})

describe('the suggested price in currencies without two decimals', () => {
  it('when the workshop prices in yen or dinars, then the price goes up to the next whole yen or dinar', () => {
    // ISO 4217: JPY has 0 decimals, BHD 3. Cost ¥96,936 at 40 %: 96,936 / 0.6 = 161,560 yen, already whole → ¥161,560
    // (a two-decimal rule would wrongly round it to 161,600).
    expect(suggestedPriceMinor(96_936, 40, 'JPY')).toBe(161_560)
    // Cost 96.936 BHD = 96,936 fils at 40 %: 161,560 fils = 161.560 BHD, up to the next whole dinar: 162.000 BHD = 162,000 fils.
    expect(suggestedPriceMinor(96_936, 40, 'BHD')).toBe(162_000)
  })
})
