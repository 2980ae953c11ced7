// Metal rules of the trade: legal fineness standards, hallmarking thresholds, fine weight, casting and conversion weights, alloy density, loss.
// Figures come from the UK Hallmarking Convention country profile and the trade's published examples; tests name each source.
import type { RoutingKind } from './routing-kinds'

export const ALLOY_METALS = ['gold', 'silver', 'platinum', 'palladium', 'base'] as const
export type AlloyMetal = (typeof ALLOY_METALS)[number]

export const ALLOY_METAL_NAMES: Record<AlloyMetal, string> = {
  gold: 'Gold',
  silver: 'Silver',
  platinum: 'Platinum',
  palladium: 'Palladium',
  base: 'Base metal',
}

/** UK legal fineness standards in parts per thousand (Hallmarking Convention, "Country profile – United Kingdom"); base metals carry 0. */
export const LEGAL_FINENESS: Record<AlloyMetal, readonly number[]> = {
  platinum: [999, 950, 900, 850],
  gold: [999, 990, 916, 750, 585, 375],
  palladium: [999, 950, 500],
  silver: [999, 958, 925, 800],
  base: [0],
}

export const isLegalFineness = (metal: AlloyMetal, fineness: number): boolean => LEGAL_FINENESS[metal].includes(fineness)

/** Weights in grams below which hallmarking is not compulsory in the UK (same source); base metals are never hallmarked. */
export const HALLMARK_THRESHOLD_G: Record<AlloyMetal, number | null> = { platinum: 0.5, gold: 1, palladium: 1, silver: 7.78, base: null }

/** A piece at or above its metal's threshold must be hallmarked before it is sold as that metal (below it, marking is optional). */
export function needsHallmark(metal: AlloyMetal, weightG: number): boolean {
  const t = HALLMARK_THRESHOLD_G[metal]
  return t !== null && weightG >= t
}

/** Fine (pure) metal in a weight: weight × fineness / 1000 — in whatever unit the weight is given. */
export const fineWeight = (weight: number, fineness: number): number => (weight * fineness) / 1000
/** Fine metal in whole milligrams (rounded), for the ledger. */
export const fineMg = (weightMg: number, fineness: number): number => Math.round((weightMg * fineness) / 1000)

/** Button (sprue and reservoir) allowance added to the metal for a casting: about 10 % (Rio Grande, "How To Determine Metal Weight for Wax Trees"). */
export const DEFAULT_BUTTON_ALLOWANCE = 0.1

/** Metal to issue for a casting from a wax (density ≈ 1) or model weight: wax × (1 + allowance) × the alloy's density. */
export function castingMetalG(waxG: number, alloyDensity: number, buttonAllowance = DEFAULT_BUTTON_ALLOWANCE): number {
  return waxG * (1 + buttonAllowance) * alloyDensity
}

/** A finished piece's weight in another metal: weight × SG_new / SG_old. */
export function convertWeight(weight: number, densityFrom: number, densityTo: number): number {
  return (weight * densityTo) / densityFrom
}

/** Density of an alloy from its parts by weight: 1/ρ = Σ wᵢ/ρᵢ (fractions need not add to 1; they are normalised). Real alloys differ by a few %. */
export function alloyDensity(parts: readonly { weight: number; density: number }[]): number {
  const total = parts.reduce((s, p) => s + p.weight, 0)
  if (total <= 0 || parts.some((p) => p.density <= 0 || p.weight < 0)) throw new RangeError('parts need positive weights and densities')
  return 1 / parts.reduce((s, p) => s + p.weight / total / p.density, 0)
}

export interface MetalLoss {
  issuedMg: number
  returnedMg: number
  lossMg: number
  lossPct: number | null
}

/** Loss = issued − (piece + scrap + lemel), in mg and as % of issued (one decimal; null when nothing was issued). */
export function metalLoss(issuedMg: number, returned: { pieceMg?: number; scrapMg?: number; lemelMg?: number }): MetalLoss {
  const returnedMg = (returned.pieceMg ?? 0) + (returned.scrapMg ?? 0) + (returned.lemelMg ?? 0)
  const lossMg = issuedMg - returnedMg
  return { issuedMg, returnedMg, lossMg, lossPct: issuedMg > 0 ? Math.round((lossMg / issuedMg) * 1000) / 10 : null }
}

/** Grams on the wire (up to 2 decimals) to whole milligrams, and back. */
export const gToMg = (g: number): number => Math.round(g * 1000)
export const mgToG = (mg: number): number => Math.round(mg) / 1000

/**
 * Loss tolerances per kind of work (% of the metal issued for it) that a new workshop starts with. These are the usual
 * figures of bench practice — common practice, no published source; the owner sets the workshop's own.
 */
export const DEFAULT_LOSS_TOLERANCE_PCT: Record<string, number> = {
  forging: 1,
  sawing: 2,
  filing: 3,
  soldering: 0.5,
  drilling: 1,
  setting: 1,
  polishing: 1.5,
  etching: 1,
  inspection: 0.2,
  casting: 5,
  hallmarking: 0.2,
}
/** For a kind of work with no tolerance of its own (common practice, no source). */
export const FALLBACK_LOSS_TOLERANCE_PCT = 2
export const TOLERANCE_NOTE = 'Loss tolerances start at the usual figures of bench practice (common practice, no published source); set your workshop’s own.'

/** Metal codes of a job bag's piece (order form) → the alloy metal and fineness they mean. */
export const PIECE_METAL_ALLOY: Record<string, { metal: AlloyMetal; fineness: number } | undefined> = {
  'silver-925': { metal: 'silver', fineness: 925 },
  'gold-9ct': { metal: 'gold', fineness: 375 },
  'gold-14k': { metal: 'gold', fineness: 585 },
  'gold-18ct': { metal: 'gold', fineness: 750 },
  'platinum-950': { metal: 'platinum', fineness: 950 },
  'palladium-950': { metal: 'palladium', fineness: 950 },
}

/**
 * Whether a job bag's work is on the customer's own piece — a repair: the piece comes in from the customer, so its first weighing
 * out is theirs, not metal from stock. A routing of the repair kind says so, and so does a resize recorded on the piece (the ring
 * being resized is the customer's), whatever its routing.
 */
export function worksOnCustomersPiece(
  routing: { kind: RoutingKind } | null | undefined,
  params: { resizeFrom?: unknown; resizeTo?: unknown } | null | undefined,
): boolean {
  if (params?.resizeFrom || params?.resizeTo) return true
  return routing?.kind === 'repair'
}
