// The estimating model: PERT three-point figures, Wright's learning curve, the step model and robust fits against reference libraries.
import fc from 'fast-check'
import * as ss from 'simple-statistics'
// @ts-expect-error jstat ships no type declarations
import jstatPkg from 'jstat'
import { describe, expect, it } from 'vitest'
import {
  learningExponent,
  leastSquares,
  median,
  medianAbsoluteDeviation,
  pertMean,
  pertVariance,
  quantile,
  ratioOfMedians,
  sizeBandFactor,
  sizeBandOf,
  routingStepMinutes,
  stepMinutes,
  theilSen,
  threePointEstimate,
  unitCurveTime,
  unitCurveTotal,
  unitMinutes,
  wrightCumulativeAverage,
  wrightMarginalUnit,
  wrightTotal,
  type Point,
} from '../../shared/domain/estimate'

const { jStat } = jstatPkg as { jStat: { beta: { mean(a: number, b: number): number } } }

/** Small seeded generator: property runs and fixtures are the same on every machine. */
function rng(seed: number) {
  let a = seed >>> 0
  return () => {
    a = (a + 0x6d2b79f5) >>> 0
    let t = a
    t = Math.imul(t ^ (t >>> 15), t | 1)
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61)
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296
  }
}

describe('PERT three-point estimates', () => {
  it('when a = 2, m = 4, b = 12, then the mean is 5 and the variance 2.778', () => {
    // Malcolm, Roseboom, Clark & Fazar, Operations Research 7(5), 1959; restated in EJOR 210(2):448–451, 2011 (TRADE.md check).
    expect(pertMean(2, 4, 12)).toBe(5)
    expect(pertVariance(2, 12)).toBeCloseTo(2.778, 3)
    expect(threePointEstimate({ optimistic: 2, mostLikely: 4, pessimistic: 12 })).toEqual({ minutes: 5, source: 'three-point', variance: 2.778, stdDev: 1.667 })
  })

  it('when the PERT mean is compared with the mean of the PERT beta distribution (jstat), then they agree', () => {
    // jstat beta.mean: the PERT beta has α = 1 + 4(m − a)/(b − a), β = 1 + 4(b − m)/(b − a) on [a, b]; its mean is (a + 4m + b)/6.
    // (The variance ((b − a)/6)² is the 1959 approximation, not the beta's own variance, so only the mean is cross-checked.)
    fc.assert(
      fc.property(
        fc.double({ min: 0, max: 100, noNaN: true }),
        fc.double({ min: 0.01, max: 1, noNaN: true }),
        fc.double({ min: 0, max: 1, noNaN: true }),
        (a, width, pos) => {
          const b = a + width * 100
          const m = a + (b - a) * pos
          const alpha = 1 + (4 * (m - a)) / (b - a)
          const beta = 1 + (4 * (b - m)) / (b - a)
          expect(pertMean(a, m, b)).toBeCloseTo(a + (b - a) * jStat.beta.mean(alpha, beta), 8)
        },
      ),
    )
  })

  it('when the figures are out of order, then no estimate is made', () => {
    expect(() => threePointEstimate({ optimistic: 5, mostLikely: 4, pessimistic: 12 })).toThrow(RangeError)
  })
})

describe("Wright's learning curve", () => {
  it('when the curve is 80 %, then units 1, 2, 4, 8, 16 average 100, 80, 64, 51.2, 40.96 % of the first', () => {
    // T. P. Wright, "Factors Affecting the Cost of Airplanes", J. Aeronautical Sciences, 1936: Ȳ(N) = a·N^b, b = log₂ 0.8 = −0.3219.
    expect(learningExponent(0.8)).toBeCloseTo(-0.3219, 4)
    expect([1, 2, 4, 8, 16].map((n) => wrightCumulativeAverage(100, n, 0.8))).toEqual([100, 80, 64, 51.2, 40.96].map((v) => expect.closeTo(v, 9)))
  })

  it('when the total of N units is taken, then it is N × the cumulative average, and unit times add up to it', () => {
    // Wright 1936 (cumulative-average form): T(N) = N·Ȳ(N) = a·N^(1+b); 2 units at 80 % take 2 × 80 = 160 % of the first.
    expect(wrightTotal(100, 2, 0.8)).toBeCloseTo(160, 9)
    expect(wrightMarginalUnit(100, 2, 0.8)).toBeCloseTo(60, 9)
    const sum = Array.from({ length: 10 }, (_, i) => wrightMarginalUnit(50, i + 1, 0.85)).reduce((s, x) => s + x, 0)
    expect(sum).toBeCloseTo(wrightTotal(50, 10, 0.85), 9)
    // Unit-time reading of the same law: unit 2 alone takes 80 % of unit 1; three units 100 + 80 + 70.21 (0.8^log₂3).
    expect(unitCurveTime(100, 2, 0.8)).toBeCloseTo(80, 9)
    expect(unitCurveTotal(100, 3, 0.8)).toBeCloseTo(100 + 80 + 100 * 3 ** Math.log2(0.8), 9)
  })

  it('when the learning rate is 100 %, then every unit takes the same time', () => {
    expect(wrightTotal(12, 40, 1)).toBeCloseTo(480, 9)
    expect(() => learningExponent(1.2)).toThrow(RangeError)
  })
})

describe('the step model', () => {
  const params = { stoneCount: 18, stoneSizeMm: 1.3, sizeMm: 22, quantity: 2 }

  it('when only base and per-stone minutes are known, then it is (base + per-stone × stones) × quantity', () => {
    // Hand-computed: (30 + 7 × 18) × 2 = 312 (seeded pavé setting step; common practice, no source).
    expect(stepMinutes({ baseMinutes: 30, perStoneMinutes: 7 }, params)).toBe(312)
    expect(routingStepMinutes({ baseMinutes: 30, perStoneMinutes: 7, perMmMinutes: 0, sizeBandFactors: {} }, { learningRate: null }, params)).toBe(312)
  })

  it('when a routing has a learning rate, then only a job bag of more than one piece follows the curve', () => {
    const step = { baseMinutes: 12, perStoneMinutes: 0, perMmMinutes: 0, sizeBandFactors: {} }
    const one = { stoneCount: 0, stoneSizeMm: 0, sizeMm: 0, quantity: 1 }
    expect(routingStepMinutes(step, { learningRate: 0.85 }, one)).toBe(12)
    // Two pieces at 85 % (Wright 1936): 2 × 12 × 0.85 = 20.4, against 24 without a curve.
    expect(routingStepMinutes(step, { learningRate: 0.85 }, { ...one, quantity: 2 })).toBeCloseTo(20.4, 9)
    expect(routingStepMinutes(step, { learningRate: null }, { ...one, quantity: 2 })).toBe(24)
  })

  it('when stones are banded by size, then the band factor scales the per-stone minutes', () => {
    expect([0, 1, 1.49, 1.5, 3, 3.01, 8].map(sizeBandOf)).toEqual(['unknown', 'melee', 'melee', 'small', 'small', 'large', 'large'])
    expect(sizeBandFactor(1.3, { melee: 1.4 })).toBe(1.4)
    expect(sizeBandFactor(2, { melee: 1.4 })).toBe(1)
    // 30 + 7 × 18 × 1.4 + 0.5 × 22 = 217.4 per unit (hand-computed).
    expect(unitMinutes({ baseMinutes: 30, perStoneMinutes: 7, perMmMinutes: 0.5, sizeBandFactors: { melee: 1.4 } }, params)).toBeCloseTo(217.4, 9)
  })

  it('when a run is learned and a faster person does it, then Wright’s total is divided by the speed', () => {
    // 40 pairs at 4 min, 90 % curve: 4 × 40^(1 + log₂0.9) (Wright 1936), then ÷ 1.1 (planned = estimate ÷ speed).
    const expected = (4 * 40 ** (1 + Math.log2(0.9))) / 1.1
    expect(
      stepMinutes({ baseMinutes: 4, perStoneMinutes: 0 }, { stoneCount: 0, stoneSizeMm: 0, sizeMm: 0, quantity: 40 }, { learningRate: 0.9, speed: 1.1 }),
    ).toBeCloseTo(expected, 1)
  })
})

describe('robust statistics', () => {
  const r = rng(7)
  const xs = Array.from({ length: 57 }, () => Math.round(r() * 1000) / 10)

  it('when median, quantiles and MAD are taken, then they equal simple-statistics', () => {
    // simple-statistics median.
    expect(median(xs)).toBe(ss.median(xs))
    // simple-statistics medianAbsoluteDeviation (unscaled MAD).
    expect(medianAbsoluteDeviation(xs)).toBeCloseTo(ss.medianAbsoluteDeviation(xs), 12)
    // simple-statistics quantile at p where (n − 1)·p is a whole number: both pick the same order statistic.
    for (const p of [0, 0.25, 0.5, 0.75, 1]) expect(quantile(xs, p)).toBe(ss.quantile(xs, p))
  })

  it('when points lie on a line with noise, then least squares equals simple-statistics linearRegression and Theil–Sen is close to it', () => {
    const pts: Point[] = Array.from({ length: 80 }, (_, i) => ({ x: 1 + (i % 25), y: 30 + 7 * (1 + (i % 25)) + (r() - 0.5) * 6 }))
    // simple-statistics linearRegression: { m, b }.
    const ref = ss.linearRegression(pts.map((p) => [p.x, p.y]))
    const ls = leastSquares(pts)
    expect(ls.slope).toBeCloseTo(ref.m, 10)
    expect(ls.intercept).toBeCloseTo(ref.b, 10)
    const ts = theilSen(pts)
    expect(ts.slope).toBeCloseTo(7, 0)
    expect(Math.abs(ts.slope - ref.m)).toBeLessThan(0.3)
  })

  it('when setting jobs include "left on the bench overnight" outliers, then least squares is pulled and Theil–Sen keeps the per-stone rate', () => {
    // Seed-like data: 30 + 7 min per stone, ±15 % noise, 3 of 60 jobs with +300…700 min overnight (server/db/seed.ts).
    const pts: Point[] = Array.from({ length: 60 }, (_, i) => {
      const x = 1 + ((i * 7) % 30)
      return { x, y: (30 + 7 * x) * (0.85 + 0.3 * r()) }
    })
    const clean = theilSen(pts).slope
    for (const i of [5, 23, 41]) pts[i] = { x: pts[i]!.x, y: pts[i]!.y + 300 + 400 * r() }
    // simple-statistics linearRegression on the dirty data (the non-robust reference).
    const ols = ss.linearRegression(pts.map((p) => [p.x, p.y])).m
    const robust = theilSen(pts).slope
    expect(Math.abs(robust - clean) / clean).toBeLessThan(0.1)
    expect(Math.abs(robust - 7) / 7).toBeLessThan(0.15)
    expect(Math.abs(ols - clean)).toBeGreaterThan(Math.abs(robust - clean))
  })

  it('when up to 5 % huge outliers are added, then the fitted per-stone rate moves by less than 10 % (property)', () => {
    // Property (fast-check): Theil–Sen's breakdown point is about 29 % (Sen 1968), so 5 % wild points barely move the slope.
    fc.assert(
      fc.property(
        fc.integer({ min: 40, max: 160 }),
        fc.double({ min: 2, max: 12, noNaN: true }),
        fc.double({ min: 5, max: 60, noNaN: true }),
        fc.double({ min: 0, max: 0.05, noNaN: true }),
        fc.integer({ min: 1, max: 2 ** 31 - 1 }),
        (n, rate, base, share, seed) => {
          const g = rng(seed)
          const pts: Point[] = Array.from({ length: n }, () => {
            const x = 1 + Math.floor(g() * 30)
            return { x, y: (base + rate * x) * (0.9 + 0.2 * g()) }
          })
          const before = theilSen(pts).slope
          const k = Math.floor(n * share)
          const dirty = [...pts]
          for (let i = 0; i < k; i++) {
            const j = Math.floor(g() * n)
            dirty[j] = { x: dirty[j]!.x, y: dirty[j]!.y + 300 + 400 * g() }
          }
          const after = theilSen(dirty).slope
          expect(Math.abs(after - before) / before).toBeLessThan(0.1)
        },
      ),
      { numRuns: 200, seed: 20261202 },
    )
  })

  it('when actual times run 20 % over, then the ratio of medians says 1.2 and outliers do not change it much', () => {
    const est = Array.from({ length: 40 }, (_, i) => 20 + i)
    const act = est.map((e) => e * 1.2)
    expect(ratioOfMedians(act, est)).toBeCloseTo(1.2, 9)
    act[3] = act[3]! + 600
    expect(ratioOfMedians(act, est)).toBeCloseTo(1.2, 1)
  })
})
