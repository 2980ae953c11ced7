// The template estimate of one routing step for one piece: base minutes plus per-stone minutes, times quantity.
import type { PieceParams } from '../schemas/order'

export interface StepEstimateInputs { baseMinutes: number; perStoneMinutes: number }

/** Minutes for the whole job bag (all units), before any person's speed factor. */
export function templateEstimate(step: StepEstimateInputs, params: Pick<PieceParams, 'stoneCount' | 'quantity'>): number {
  const perUnit = step.baseMinutes + step.perStoneMinutes * params.stoneCount
  return Math.round(perUnit * params.quantity * 10) / 10
}
