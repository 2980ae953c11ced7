// Words and tag colours for order, job bag and operation states, and for metals.
import type { OrderStatus } from '@shared/domain/status'
import type { CostingEstimate } from '@shared/schemas/costing'
import { METAL_NAMES, type METALS } from '@shared/schemas/order'

type TagType = 'primary' | 'success' | 'warning' | 'danger' | 'info'

export const ORDER_STATUS_LABELS: Record<OrderStatus, string> = {
  quoted: 'Quoted',
  open: 'Open',
  'in-work': 'In work',
  ready: 'Ready to collect',
  collected: 'Collected',
  cancelled: 'Cancelled',
}
export const ORDER_STATUS_TAGS: Record<OrderStatus, TagType> = {
  quoted: 'info',
  open: 'primary',
  'in-work': 'warning',
  ready: 'success',
  collected: 'info',
  cancelled: 'danger',
}
const WORK_TAGS: Record<string, TagType> = {
  waiting: 'info',
  pending: 'info',
  ready: 'primary',
  claimed: 'primary',
  running: 'warning',
  'in-work': 'warning',
  paused: 'warning',
  'on-hold': 'warning',
  done: 'success',
  complete: 'success',
  skipped: 'info',
  cancelled: 'danger',
}
export const workTag = (status: string): TagType => WORK_TAGS[status] ?? 'info'
export const workLabel = (status: string) => status.replace('-', ' ')

/** Metal names live in the shared list so the printed ticket uses the same words. */
export const METAL_LABELS: Record<(typeof METALS)[number], string> = METAL_NAMES

export const PRIORITY_LABELS: Record<number, string> = { 1: '1 · when there is time', 2: '2 · low', 3: '3 · usual', 4: '4 · high', 5: '5 · urgent' }

/**
 * Where a step stands in its piece's routing, by the names people know the steps by: "after Clean up and size", "after Saw
 * and Solder", or "first". `after` (the step's) holds routing keys; each is named by the step of the same job bag with that key (a key
 * with no such step is shown as it is).
 */
export function stepOrderLabel(after: string[], steps: { key: string; name: string }[]): string {
  if (!after.length) return 'first'
  const names = after.map((k) => steps.find((s) => s.key === k)?.name ?? k)
  return `after ${names.length > 1 ? `${names.slice(0, -1).join(', ')} and ${names[names.length - 1]}` : names[0]}`
}

/**
 * The order form's metal weight: the metal in a new piece, or — on the customer's own piece (a repair) — only the metal the workshop
 * adds from its stock, since their piece is never charged.
 */
export const metalWeightLabel = (onCustomersPiece: boolean) =>
  onCustomersPiece ? 'Metal added to their piece (g, typical)' : 'Metal in one piece (g, typical)'
export const METAL_ADDED_HELP = 'The customer’s own piece is not charged; enter only the metal you add.'

/** Each piece's word on how its metal was counted ("Ring — customer’s own piece: not charged; metal added 0.4 g"), for pieces that have one. */
export const metalNotes = (c: Pick<CostingEstimate, 'pieces'>) => c.pieces.filter((p) => p.metalNote).map((p) => `${p.piece} — ${p.metalNote}`)
/** A note of the costing's as a sentence of its own: capital first, full stop after. */
export const asSentence = (words: string) => `${words.charAt(0).toUpperCase()}${words.slice(1)}.`
