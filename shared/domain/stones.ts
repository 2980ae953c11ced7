// Stones: carat estimates for round brilliants, the count reconciliation of stones issued to the setter, and the setting step's minutes from a piece's stone list.
import { sizeBandFactor, wrightTotal, type RoutingModel, type RoutingStepModel } from './estimate'
import type { PieceParams } from '../schemas/order'

export const STONE_ROLES = ['centre', 'side', 'halo', 'pave'] as const
export type StoneRole = (typeof STONE_ROLES)[number]
export const STONE_ROLE_LABELS: Record<StoneRole, string> = { centre: 'Centre', side: 'Side', halo: 'Halo', pave: 'Pavé' }

/** Counted movements the setter (or the bench) records; 'checked-back' is the customer's own stones handed back at collection. */
export const STONE_COUNT_KINDS = ['issued', 'set', 'returned', 'broken', 'lost'] as const
export type StoneCountKind = (typeof STONE_COUNT_KINDS)[number]
export const STONE_MOVEMENT_KINDS = [...STONE_COUNT_KINDS, 'checked-back'] as const
export type StoneMovementKind = (typeof STONE_MOVEMENT_KINDS)[number]
export const STONE_MOVEMENT_LABELS: Record<StoneMovementKind, string> = {
  issued: 'Given to the setter',
  set: 'Set in the piece',
  returned: 'Back unused',
  broken: 'Broken',
  lost: 'Lost',
  'checked-back': 'Handed back to the customer',
}

// ---------------------------------------------------------------------------------------------------------------
// Carat estimates (round brilliant cut)

/** The weight formula's constant for round brilliants, with diameter and depth in mm. */
export const ROUND_BRILLIANT_FACTOR = 0.0061
/** A slightly thick girdle adds about 2 %. */
export const THICK_GIRDLE_FACTOR = 1.02
/**
 * Depth assumed when only the diameter is known: total depth 60 % of the diameter, a usual proportion of a well-cut round
 * brilliant (common practice, no source). We estimate from this depth ratio, not from a size table.
 */
export const ASSUMED_DEPTH_RATIO = 0.6

/** carat ≈ diameter² × depth × 0.0061 (mm), × 1.02 for a slightly thick girdle. */
export function caratFromDiameterAndDepth(diameterMm: number, depthMm: number, o: { thickGirdle?: boolean } = {}): number {
  if (!(diameterMm > 0) || !(depthMm > 0)) return 0
  return diameterMm * diameterMm * depthMm * ROUND_BRILLIANT_FACTOR * (o.thickGirdle ? THICK_GIRDLE_FACTOR : 1)
}

/** From the diameter alone, with the assumed depth ratio. Melee (below 1.5 mm) comes out light: treat it as rough. */
export function caratFromDiameter(diameterMm: number): number {
  return caratFromDiameterAndDepth(diameterMm, diameterMm * ASSUMED_DEPTH_RATIO)
}

/** Carats shown to people: three decimals below 0.1 ct, two above. */
export function roundCarat(ct: number): number {
  return ct < 0.1 ? Math.round(ct * 1000) / 1000 : Math.round(ct * 100) / 100
}

/** Only round diamonds get an estimate from their size (the formula is for diamond); other stones and shapes need their weight entered. */
export const canEstimateCarat = (shape: string, stone = 'diamond') => shape.trim().toLowerCase() === 'round' && stone.trim().toLowerCase() === 'diamond'

// ---------------------------------------------------------------------------------------------------------------
// Reconciliation: issued = set + returned + broken + lost

export interface StoneCounts {
  issued: number
  set: number
  returned: number
  broken: number
  lost: number
  checkedBack: number
}
export interface Reconciliation extends StoneCounts {
  /** set + returned + broken + lost */
  accounted: number
  /** issued − accounted: above 0 stones not yet counted back, below 0 more counted back than were given out. */
  difference: number
  balanced: boolean
}

export const emptyCounts = (): StoneCounts => ({ issued: 0, set: 0, returned: 0, broken: 0, lost: 0, checkedBack: 0 })

/** Sums signed movements (corrections included) by kind. */
export function countsOf(movements: readonly { kind: string; count: number }[]): StoneCounts {
  const c = emptyCounts()
  for (const m of movements) {
    if (m.kind === 'checked-back') c.checkedBack += m.count
    else if ((STONE_COUNT_KINDS as readonly string[]).includes(m.kind)) c[m.kind as StoneCountKind] += m.count
  }
  return c
}

export function reconcile(c: StoneCounts): Reconciliation {
  const accounted = c.set + c.returned + c.broken + c.lost
  const difference = c.issued - accounted
  return { ...c, accounted, difference, balanced: difference === 0 }
}

/** How many of a customer's own stones go back to them at collection: the line's count less those broken or lost. */
export const toHandBack = (lineCount: number, c: StoneCounts) => Math.max(0, lineCount - c.broken - c.lost)

/** In words, for the page and the bench: "2 not counted back" / "1 more counted back than given out" / "all counted". */
export function differenceWords(r: Pick<Reconciliation, 'difference'> & Partial<Pick<Reconciliation, 'issued'>>): string {
  if (r.issued === 0 && r.difference === 0) return 'none given out yet'
  if (r.difference === 0) return 'all counted'
  if (r.difference > 0) return `${r.difference} not counted back`
  return `${-r.difference} more counted back than given out`
}

// ---------------------------------------------------------------------------------------------------------------
// Setting minutes from the stone list

/**
 * How long a stone of each role takes to set against a pavé stone of the same size (the per-stone minutes a step learns from
 * whole pieces are mostly small pavé and halo stones): a centre stone gets its own seat cut in each claw, squared up and checked
 * from every side; a side stone is matched to the centre; a halo stone is set in a tight ring round the centre. Common practice,
 * no source — a step's own role factors (set on the routing step) replace these.
 */
export const DEFAULT_ROLE_FACTORS: Readonly<Record<StoneRole, number>> = { centre: 3, side: 1.5, halo: 1.2, pave: 1 }

/** The factor on the per-stone minutes for a stone's role: the step's own, else the usual one above. */
export function roleFactor(role: StoneRole | undefined, factors: Partial<Record<StoneRole, number>> | undefined = {}): number {
  if (!role) return 1
  const f = factors?.[role]
  return f !== undefined && Number.isFinite(f) && f > 0 ? f : DEFAULT_ROLE_FACTORS[role]
}

export interface StoneLineForMinutes {
  sizeMm: number
  count: number
  role?: StoneRole
}
export type RoleFactors = Partial<Record<StoneRole, number>>

/**
 * Bench minutes of a step for a piece with a stone list: per piece base + Σ lines (per-stone minutes × count × the band factor
 * of the line's size × the factor of its role) + per-mm × size; then × quantity (or Wright's total for a run, as in
 * routingStepMinutes), rounded to 0.1.
 */
export function stoneListStepMinutes(
  step: RoutingStepModel & { roleFactors?: RoleFactors },
  routing: RoutingModel,
  params: Pick<PieceParams, 'sizeMm' | 'quantity'>,
  lines: readonly StoneLineForMinutes[],
): number {
  const stones = lines.reduce(
    (s, l) => s + step.perStoneMinutes * l.count * sizeBandFactor(l.sizeMm, step.sizeBandFactors) * roleFactor(l.role, step.roleFactors),
    0,
  )
  const unit = step.baseMinutes + stones + (step.perMmMinutes ?? 0) * params.sizeMm
  const all = routing.learningRate !== null && params.quantity > 1 ? wrightTotal(unit, params.quantity, routing.learningRate) : unit * params.quantity
  return Math.round(all * 10) / 10
}

// ---------------------------------------------------------------------------------------------------------------
// The stones a setter sets: one count for the bench, the stone list and the setting estimate

/** What the count was taken from: the job bag's own stone list, or the order's piece figures when the bag has no list. */
export type StoneSource = 'stone-list' | 'piece-figures'

export interface StonesToSet {
  source: StoneSource
  perPiece: number
  pieces: number
  /** perPiece × pieces */
  total: number
  /** The one stone size (mm); null when not given or when the list has several sizes. */
  sizeMm: number | null
  /** Smallest and largest size when the list has several; null otherwise. */
  sizeRangeMm: { min: number; max: number } | null
  /** The piece figures, when the list is counted and they say otherwise (another count, or a size not on the list); else null. */
  pieceFigures: { perPiece: number; sizeMm: number | null } | null
}

/**
 * The stones to set for a job bag, by the same rule as the setting estimate (recomputeStoneSteps): a bag with its own stone
 * list is counted from the list (each line's count is per piece); a bag without one from the piece figures. Pieces always
 * come from the piece figures' quantity.
 */
export function stonesToSet(
  params: Partial<Pick<PieceParams, 'stoneCount' | 'stoneSizeMm' | 'quantity'>> | null | undefined,
  lines: readonly Pick<StoneLineForMinutes, 'sizeMm' | 'count'>[],
): StonesToSet {
  const pieces = Math.max(1, Math.round(params?.quantity ?? 1))
  const figCount = Math.max(0, Math.round(params?.stoneCount ?? 0))
  const figSize = params?.stoneSizeMm && params.stoneSizeMm > 0 ? params.stoneSizeMm : null
  if (!lines.length)
    return { source: 'piece-figures', perPiece: figCount, pieces, total: figCount * pieces, sizeMm: figSize, sizeRangeMm: null, pieceFigures: null }
  const perPiece = lines.reduce((n, l) => n + l.count, 0)
  const sizes = [...new Set(lines.map((l) => l.sizeMm))].sort((a, b) => a - b)
  const one = sizes.length === 1 ? sizes[0]! : null
  // Figures that give no count say nothing against the list; a size is checked only when the figures give one.
  const differs = figCount > 0 && (figCount !== perPiece || (figSize !== null && !sizes.includes(figSize)))
  return {
    source: 'stone-list',
    perPiece,
    pieces,
    total: perPiece * pieces,
    sizeMm: one,
    sizeRangeMm: one === null ? { min: sizes[0]!, max: sizes[sizes.length - 1]! } : null,
    pieceFigures: differs ? { perPiece: figCount, sizeMm: figSize } : null,
  }
}

/** "1 × 6.5 mm round diamond, 1.00 ct est."; with a measured depth "1 × 6.5 mm round diamond, 3.9 mm deep, 0.98 ct est." */
export function stoneLineWords(l: {
  count: number
  sizeMm: number
  shape: string
  stone: string
  caratEach: number | null
  caratEstimated: boolean
  depthMm?: number | null
}): string {
  const depth = l.depthMm ? `, ${l.depthMm} mm deep` : ''
  const ct = l.caratEach !== null ? `, ${l.caratEach.toFixed(l.caratEach < 0.1 ? 3 : 2)} ct${l.caratEstimated ? ' est.' : ''}` : ''
  return `${l.count} × ${l.sizeMm} mm ${l.shape} ${l.stone}${depth}${ct}`
}
