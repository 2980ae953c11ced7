// What a routing makes: a new piece, a repair of the customer's own piece, or a production run of many of the same piece.
export const ROUTING_KINDS = ['piece', 'repair', 'run'] as const
export type RoutingKind = (typeof ROUTING_KINDS)[number]

export const ROUTING_KIND_LABELS: Record<RoutingKind, string> = { piece: 'New piece', repair: 'Repair', run: 'Production run' }

/** What each kind means for the work, as the routing editor explains it (the bench can still pick another source when weighing). */
export const ROUTING_KIND_NOTES: Record<RoutingKind, string> = {
  piece: 'Made new at the bench: weighing out starts from stock.',
  repair: 'Work on the customer’s own piece: weighing out starts from their piece, not from stock.',
  run: 'Many of the same piece made together: weighing out starts from stock.',
}
