// Estimating: the step model (base + stones × size band + size, × quantity, learning curve, ÷ speed), PERT three-point figures and robust fits.
import type { PieceParams } from '../schemas/order'

// ---------------------------------------------------------------------------------------------------------------
// Where an estimate comes from

export const ESTIMATE_SOURCES = ['routing', 'learned', 'override', 'three-point'] as const
export type EstimateSource = (typeof ESTIMATE_SOURCES)[number]

/** An estimate always says where it came from; an override also says why. */
export type Estimate =
  | { minutes: number; source: 'routing' | 'learned'; perUnitMinutes: number }
  | { minutes: number; source: 'override'; reason: string }
  | { minutes: number; source: 'three-point'; variance: number; stdDev: number }

// ---------------------------------------------------------------------------------------------------------------
// Which finished work tells something about its estimate

/**
 * Actual ÷ estimate ratios believed: a record left running for days, a step started and finished within seconds or a mistyped
 * estimate tells nothing about the work. The promise check learns only from ratios inside this band and Insights leaves the
 * others out of its error figures (our own band, wide but sane; no source).
 */
export const BELIEVED_RATIO = { min: 0.1, max: 10 } as const
/** Why a finished operation is left out of the error figures, in words for the screen. */
export const OUTSIDE_RATIO_WORDS = 'actual under a tenth or over ten times the estimate'

/** Whether an actual ÷ estimate ratio is inside the believed band (a ratio with no estimate — infinite or not a number — is not). */
export function ratioBelieved(ratio: number): boolean {
  return ratio >= BELIEVED_RATIO.min && ratio <= BELIEVED_RATIO.max
}

// ---------------------------------------------------------------------------------------------------------------
// Stone size bands (our own bands: melee below 1.5 mm, small 1.5–3 mm, larger stones above 3 mm)

export const SIZE_BANDS = ['unknown', 'melee', 'small', 'large'] as const
export type SizeBand = (typeof SIZE_BANDS)[number]
export const SIZE_BAND_LABELS: Record<SizeBand, string> = { unknown: 'size not given', melee: 'under 1.5 mm', small: '1.5–3 mm', large: 'over 3 mm' }

export function sizeBandOf(stoneSizeMm: number): SizeBand {
  if (!(stoneSizeMm > 0)) return 'unknown'
  if (stoneSizeMm < 1.5) return 'melee'
  if (stoneSizeMm <= 3) return 'small'
  return 'large'
}

/** A band's factor on the per-stone minutes: learned where history allows, 1 otherwise. */
export function sizeBandFactor(stoneSizeMm: number, factors: Partial<Record<SizeBand, number>> = {}): number {
  const f = factors[sizeBandOf(stoneSizeMm)]
  return f !== undefined && Number.isFinite(f) && f > 0 ? f : 1
}

// ---------------------------------------------------------------------------------------------------------------
// Learning curve (T. P. Wright, "Factors Affecting the Cost of Airplanes", J. Aeronautical Sciences 3, 1936)

/** Exponent b of a learning rate r (0.8 = 80 % curve): b = log₂ r. */
export function learningExponent(rate: number): number {
  if (!(rate > 0 && rate <= 1)) throw new RangeError('learning rate must be in (0, 1]')
  return Math.log2(rate)
}

/** Wright's published form: the cumulative average time per unit over the first N units, Ȳ(N) = a·N^b. */
export function wrightCumulativeAverage(first: number, n: number, rate: number): number {
  return first * Math.pow(n, learningExponent(rate))
}

/** Total time of the first N units under Wright's cumulative-average curve: T(N) = N·Ȳ(N) = a·N^(1+b). */
export function wrightTotal(first: number, n: number, rate: number): number {
  if (n <= 0) return 0
  return n * wrightCumulativeAverage(first, n, rate)
}

/** Time of unit N alone under Wright's curve: T(N) − T(N−1). */
export function wrightMarginalUnit(first: number, n: number, rate: number): number {
  return wrightTotal(first, n, rate) - wrightTotal(first, n - 1, rate)
}

/** The unit-time reading of the same law (each unit N takes a·N^b; used by later authors for unit costs). */
export function unitCurveTime(first: number, n: number, rate: number): number {
  return first * Math.pow(n, learningExponent(rate))
}

/** Total of the unit-time reading: Σ_{i=1..N} a·i^b. */
export function unitCurveTotal(first: number, n: number, rate: number): number {
  let s = 0
  for (let i = 1; i <= n; i++) s += unitCurveTime(first, i, rate)
  return s
}

// ---------------------------------------------------------------------------------------------------------------
// The step model

export interface StepModel {
  baseMinutes: number
  perStoneMinutes: number
  /** Minutes per millimetre of piece size (polishing by surface/size); 0 where size does not matter. */
  perMmMinutes?: number
  sizeBandFactors?: Partial<Record<SizeBand, number>>
}

export interface StepEstimateOptions {
  /** Production runs: learning rate per doubling (0.8 = 80 %); omitted = every unit takes the same time. */
  learningRate?: number
  /** The person's speed factor (1 = standard; planned minutes = estimate ÷ speed). */
  speed?: number
}

/** Minutes for one unit: base + per-stone × stones × band factor + per-mm × size. */
export function unitMinutes(model: StepModel, params: Pick<PieceParams, 'stoneCount' | 'stoneSizeMm' | 'sizeMm'>): number {
  return (
    model.baseMinutes +
    model.perStoneMinutes * params.stoneCount * sizeBandFactor(params.stoneSizeMm, model.sizeBandFactors) +
    (model.perMmMinutes ?? 0) * params.sizeMm
  )
}

/** Minutes for the whole job bag: unit minutes × quantity (or Wright's total for a run), ÷ speed. */
export function stepMinutes(
  model: StepModel,
  params: Pick<PieceParams, 'stoneCount' | 'stoneSizeMm' | 'sizeMm' | 'quantity'>,
  o: StepEstimateOptions = {},
): number {
  const unit = unitMinutes(model, params)
  const all = o.learningRate !== undefined ? wrightTotal(unit, params.quantity, o.learningRate) : unit * params.quantity
  const speed = o.speed !== undefined && o.speed > 0 ? o.speed : 1
  return Math.round((all / speed) * 10) / 10
}

/** What a routing step carries for estimating (a routing step as stored or as edited). */
export interface RoutingStepModel extends StepModel {
  perMmMinutes: number
  sizeBandFactors: Partial<Record<SizeBand, number>>
}
/** What the routing itself carries: its learning rate for production runs (null = every unit takes the same time). */
export interface RoutingModel {
  learningRate: number | null
}

/**
 * Bench minutes for a job bag made by one routing step, before anyone's speed: the whole step model, with the routing's
 * learning curve only when it has one and more than one piece is made. Every place that estimates from a routing uses this.
 */
export function routingStepMinutes(
  step: RoutingStepModel,
  routing: RoutingModel,
  params: Pick<PieceParams, 'stoneCount' | 'stoneSizeMm' | 'sizeMm' | 'quantity'>,
): number {
  const learned = routing.learningRate !== null && params.quantity > 1
  return stepMinutes(step, params, learned ? { learningRate: routing.learningRate! } : {})
}

// ---------------------------------------------------------------------------------------------------------------
// PERT three-point estimates (Malcolm, Roseboom, Clark & Fazar, Operations Research 7(5), 1959)

export function pertMean(optimistic: number, mostLikely: number, pessimistic: number): number {
  return (optimistic + 4 * mostLikely + pessimistic) / 6
}
export function pertVariance(optimistic: number, pessimistic: number): number {
  return ((pessimistic - optimistic) / 6) ** 2
}

export interface ThreePoint {
  optimistic: number
  mostLikely: number
  pessimistic: number
}

/** The PERT figure of a three-point guess (a ≤ m ≤ b), rounded for display. */
export function threePointEstimate(t: ThreePoint): Extract<Estimate, { source: 'three-point' }> {
  if (!(t.optimistic <= t.mostLikely && t.mostLikely <= t.pessimistic)) throw new RangeError('need optimistic ≤ most likely ≤ pessimistic')
  const variance = pertVariance(t.optimistic, t.pessimistic)
  return {
    minutes: round3(pertMean(t.optimistic, t.mostLikely, t.pessimistic)),
    source: 'three-point',
    variance: round3(variance),
    stdDev: round3(Math.sqrt(variance)),
  }
}

// ---------------------------------------------------------------------------------------------------------------
// Robust statistics for learning from actual times

const round3 = (n: number) => Math.round(n * 1000) / 1000

export function median(xs: readonly number[]): number {
  return quantileSorted(
    [...xs].sort((a, b) => a - b),
    0.5,
  )
}

/** Quantile with linear interpolation between order statistics (R type 7). */
export function quantileSorted(sorted: readonly number[], p: number): number {
  if (!sorted.length) return NaN
  const h = (sorted.length - 1) * p
  const lo = Math.floor(h)
  const hi = Math.ceil(h)
  return sorted[lo]! + (sorted[hi]! - sorted[lo]!) * (h - lo)
}
export function quantile(xs: readonly number[], p: number): number {
  return quantileSorted(
    [...xs].sort((a, b) => a - b),
    p,
  )
}

/** Median absolute deviation from the median (unscaled). */
export function medianAbsoluteDeviation(xs: readonly number[]): number {
  const m = median(xs)
  return median(xs.map((x) => Math.abs(x - m)))
}

export interface Point {
  x: number
  y: number
}
export interface LineFit {
  slope: number
  intercept: number
}

/**
 * Theil–Sen line: slope = median of the pairwise slopes (pairs with distinct x), intercept = median of y − slope·x.
 * Up to about 29 % of wild points leave it in place, where least squares follows them.
 */
export function theilSen(points: readonly Point[]): LineFit {
  const slopes: number[] = []
  for (let i = 0; i < points.length; i++) {
    for (let j = i + 1; j < points.length; j++) {
      const dx = points[j]!.x - points[i]!.x
      if (dx !== 0) slopes.push((points[j]!.y - points[i]!.y) / dx)
    }
  }
  const slope = slopes.length ? median(slopes) : 0
  const intercept = points.length ? median(points.map((p) => p.y - slope * p.x)) : 0
  return { slope, intercept }
}

/** Ordinary least squares, for comparison (outliers pull it). */
export function leastSquares(points: readonly Point[]): LineFit {
  const n = points.length
  const mx = points.reduce((s, p) => s + p.x, 0) / n
  const my = points.reduce((s, p) => s + p.y, 0) / n
  let sxy = 0
  let sxx = 0
  for (const p of points) {
    sxy += (p.x - mx) * (p.y - my)
    sxx += (p.x - mx) ** 2
  }
  const slope = sxx === 0 ? 0 : sxy / sxx
  return { slope, intercept: my - slope * mx }
}

/** How far actual ran from estimate as a scale factor: median(actual) ÷ median(estimate). */
export function ratioOfMedians(actual: readonly number[], estimate: readonly number[]): number {
  const e = median(estimate)
  return e > 0 ? median(actual) / e : NaN
}
