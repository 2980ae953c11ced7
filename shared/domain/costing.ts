// Job costing in integer minor units: metal (net weight in the piece and its loss at the alloy's price on the day it was issued), stones,
// outside work and labour; each line rounded once (half away from zero); margins; the words beside a margin saying what is missing.

import { currencyExponent, minorToMajor } from './currency'
import { mgToG } from './metal'

/** Minor units back to a major-unit number for a figure only shown or exported (never summed again), by the currency's decimals. */
export const fromMinor = (minor: number, currency: string): number => minorToMajor(minor, currency)

/** Rounds half away from zero (2.5 → 3, −2.5 → −3); guards against binary noise such as 0.1 × 3 = 0.30000000000000004. */
export function roundHalfAway(x: number): number {
  const clean = Number(x.toPrecision(12))
  return Math.sign(clean) * Math.floor(Math.abs(clean) + 0.5)
}

/** a × b ÷ d rounded half away from zero; exact when a and b are integers (the product is an integer below 2^53). */
export function mulDivRound(a: number, b: number, d: number): number {
  if (Number.isInteger(a) && Number.isInteger(b) && Number.isInteger(d) && Number.isSafeInteger(a * b)) {
    const n = a * b
    const sign = Math.sign(n) * Math.sign(d)
    const an = Math.abs(n),
      ad = Math.abs(d)
    const r = an % ad
    const q = (an - r) / ad
    return sign * (2 * r >= ad ? q + 1 : q)
  }
  return roundHalfAway((a * b) / d)
}

/** Metal line: milligrams × price per gram (minor units) ÷ 1000, rounded once. */
export const metalMinor = (mg: number, pricePerGramMinor: number): number => mulDivRound(mg, pricePerGramMinor, 1000)
/** Labour line: minutes × hourly rate (minor units) ÷ 60, rounded once. */
export const labourMinor = (minutes: number, rateMinorPerHour: number): number => mulDivRound(minutes, rateMinorPerHour, 60)
/** Stone line: cost of one stone × stones used (set + broken + lost) — whole minor units already, no rounding. */
export const stonesMinor = (costEachMinor: number, used: number): number => costEachMinor * used

/**
 * One alloy of one job bag at actual. Net weight in the piece (its last weighing as a piece) and the loss (issued − everything returned)
 * both at the price in force on the day the alloy was first issued to the bag. The customer's own metal (issued with source customer)
 * covers the piece first, then the loss, and costs nothing; the loss it covers is still reported.
 */
export interface MetalAtActual {
  pieceMg: number
  lossMg: number
  customerMg: number
  pricePerGramMinor: number
}
export function metalActual(m: MetalAtActual) {
  const used = m.pieceMg + Math.max(0, m.lossMg)
  const customerCovers = Math.min(Math.max(0, m.customerMg), used)
  const pieceFree = Math.min(m.pieceMg, customerCovers)
  const lossFree = customerCovers - pieceFree
  const pieceChargedMg = m.pieceMg - pieceFree
  const lossChargedMg = Math.max(0, m.lossMg) - lossFree
  const pieceMinor = metalMinor(pieceChargedMg, m.pricePerGramMinor)
  const lossMinor = metalMinor(lossChargedMg, m.pricePerGramMinor)
  return { pieceChargedMg, lossChargedMg, customerLossMg: lossFree, pieceMinor, lossMinor, minor: pieceMinor + lossMinor }
}

/** Everything a job costs, in minor units. */
export interface CostBreakdown {
  metalMinor: number
  stonesMinor: number
  outsideMinor: number
  labourMinor: number
  totalMinor: number
}
export const breakdown = (b: Omit<CostBreakdown, 'totalMinor'>): CostBreakdown => ({
  ...b,
  totalMinor: b.metalMinor + b.stonesMinor + b.outsideMinor + b.labourMinor,
})
export const addBreakdowns = (xs: readonly CostBreakdown[]): CostBreakdown =>
  breakdown({
    metalMinor: xs.reduce((s, x) => s + x.metalMinor, 0),
    stonesMinor: xs.reduce((s, x) => s + x.stonesMinor, 0),
    outsideMinor: xs.reduce((s, x) => s + x.outsideMinor, 0),
    labourMinor: xs.reduce((s, x) => s + x.labourMinor, 0),
  })

/** Price − cost in minor units, and as % of the price (one decimal; null without a price). */
export function margin(priceMinor: number, costMinor: number): { marginMinor: number; marginPct: number | null } {
  const marginMinor = priceMinor - costMinor
  return { marginMinor, marginPct: priceMinor > 0 ? roundHalfAway((marginMinor * 1000) / priceMinor) / 10 : null }
}

/** The margin a new workshop prices at when nothing else is set: 40 % of the price (common practice, no source). */
export const WORKSHOP_MARGIN_PCT = 40
/** The price that leaves the margin on the cost: cost ÷ (1 − margin), up to the next whole major unit of the currency. */
export function suggestedPriceMinor(costMinor: number, marginPct = WORKSHOP_MARGIN_PCT, currency = 'GBP'): number {
  if (costMinor <= 0) return 0
  const exact = Math.ceil((costMinor * 100) / (100 - marginPct))
  const unit = 10 ** currencyExponent(currency)
  return Math.ceil(exact / unit) * unit
}

/** What a costing could not count, in the words shown beside the margin. */
export type Missing =
  | 'no-metal-weight'
  | 'no-metal-weighed'
  | 'some-metal-weighed'
  | 'no-metal-price'
  | 'metal-not-priced'
  | 'stone-costs'
  | 'stones-not-counted'
  | 'outside-uncosted'
  | 'some-outside-uncosted'
export const MISSING_WORDS: Record<Missing, string> = {
  'no-metal-weight': 'no metal weight estimated',
  'no-metal-weighed': 'no metal weighed yet',
  'some-metal-weighed': 'metal weighed on some pieces only',
  'no-metal-price': 'no alloy price for the day',
  'metal-not-priced': 'base or mixed metal not priced',
  'stone-costs': 'stone costs not entered',
  'stones-not-counted': 'stones not counted back',
  'outside-uncosted': 'outside work not costed',
  'some-outside-uncosted': 'some outside work not costed',
}
export const ALL_COUNTED = 'metal, stones, outside work and labour counted'

/**
 * The owner's table never counts unweighed metal as free: at actual, a piece in precious metal with nothing weighed counts its
 * metal as estimated, and the words beside its margin say so.
 */
export const METAL_AS_ESTIMATED_WORDS: Partial<Record<Missing, string>> = {
  'no-metal-weighed': 'no metal weighed: metal counted as estimated',
  'some-metal-weighed': 'metal weighed on some pieces only: the others counted as estimated',
}

/** The words beside a margin: only what is really missing, else that all four are counted (`words` overrides some wordings). */
export function marginCaveat(missing: readonly Missing[], words: Partial<Record<Missing, string>> = {}): string {
  const order = Object.keys(MISSING_WORDS)
  const seen = [...new Set(missing)].sort((a, b) => order.indexOf(a) - order.indexOf(b))
  if (!seen.length) return ALL_COUNTED
  return seen.map((m) => words[m] ?? MISSING_WORDS[m]).join('; ')
}

/**
 * A piece whose work is on the customer's own piece (a repair, `worksOnCustomersPiece`): its metal weight on the order form is the
 * metal the workshop adds from its stock, charged at the price per gram; the customer's piece itself is never entered nor charged.
 */
export function customersPieceNote(metalAddedG: number | undefined, quantity: number): string {
  const added = metalAddedG === undefined ? 'no metal added entered' : `metal added ${metalAddedG} g${quantity > 1 ? ` a piece × ${quantity}` : ''}`
  return `customer’s own piece: not charged; ${added}`
}
/**
 * A piece made from the customer's own metal (their gold weighed out as theirs, not a repair): what they brought in covers the
 * estimate's weight first and is not charged, at estimate as at actual (the customer's own metal is not the workshop's material).
 */
export function customersMetalNote(coveredMg: number, broughtMg: number): string {
  return `made from the customer’s own metal (${mgToG(broughtMg)} g brought in): ${mgToG(coveredMg)} g of the estimate not charged`
}
/** Beside an estimate with such a piece: what the estimate leaves out of the customer's metal, and where it shows instead. */
export const CUSTOMERS_METAL_CAVEAT = 'the loss of the customer’s own metal is not in the estimate: it shows at actual once their piece is weighed'

/** The note above the costing table and at the end of its CSV. */
export const COSTING_NOTE =
  'Cost = metal (net weight in the piece plus loss, at the alloy’s price on the day it was issued; the customer’s own metal free) + stones (cost each × set, broken and lost; the customer’s own free) + outside work + labour (hours × each person’s rate). At estimate: the routing’s minutes, the piece’s metal weight (on a repair, only the metal added to the customer’s piece; on a piece made from the customer’s own metal, only what their metal does not cover) at the price on the order’s day, the stone list. At actual, a piece with no metal weighed counts its metal as estimated, never as free. Beside each margin: what could not be counted.'
