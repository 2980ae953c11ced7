// What job costing leaves out: the caveat shown beside every margin and written into the costing CSV.

/** How much of an order's outside work carries a cost (entered on the routing step or invoiced). */
export interface OutsideCoverage {
  /** Finished outside-work steps (castings, hallmarking …) of the order or orders. */
  outsideSteps: number
  /** Of those, the steps with no cost entered: nothing expected on the routing and nothing invoiced. */
  outsideUncosted: number
}

/**
 * The words beside a margin: costing counts bench labour, and outside work only where a figure was entered;
 * metal and stones are never counted yet, so a margin is an upper bound, not a profit.
 */
export function marginCaveat(c: OutsideCoverage): string {
  if (c.outsideSteps === 0) return 'labour only — metal and stones not yet counted'
  if (c.outsideUncosted === 0) return 'labour and outside work — metal and stones not yet counted'
  if (c.outsideUncosted < c.outsideSteps) return 'labour and some outside work — metal, stones and the rest of the outside work not yet counted'
  return 'labour only — metal, stones and outside work not yet counted'
}

/** The note under the costing CSV and beside the table: what every margin figure leaves out. */
export const COSTING_NOTE = 'Margins count bench labour (hours × each person’s rate) and outside work only where its cost was entered; metal and stones are not yet counted, so real margins are lower.'
