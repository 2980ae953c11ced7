// Demo costing: each piece's typical metal weight, the routings' outside costs (caster and assay office), and every order's price
// quoted from its estimated cost (metal, stones, outside work, labour) at a margin most workshops would recognise, a few thin.
import { and, eq, inArray } from 'drizzle-orm'
import type { Trx } from './client'
import * as s from './schema/index'
import { costOrders } from '../services/costing'

/** Typical metal in one finished piece (g) by routing; invented for the demo but in the range of such pieces. */
const METAL_G: Record<string, number> = {
  'pave-pendant': 3.5,
  'bezel-ring': 4.5,
  'wedding-pair': 9,
  'retip-claws': 0.3,
  'stud-run': 0.8,
  'ring-resize': 0.4,
  'etched-cuff': 28,
  'signet-ring': 9,
  'halo-ring': 4.2,
  'chain-repair': 0.2,
}
/** What the caster and the assay office charge per piece, in pence (invented demo figures: £24.00 and £2.80). */
const OUTSIDE_PER_UNIT_MINOR: Record<string, number> = { casting: 2400, hallmarking: 280 }

export async function seedCosting(tx: Trx, workshopId: number): Promise<void> {
  let a = 604_12
  // Park–Miller: its own numbers, so the prices are the same on every machine whatever else the demo draws.
  const rand = () => (a = (a * 16_807) % 2_147_483_647) / 2_147_483_647
  const routings = await tx.select().from(s.routings).where(eq(s.routings.workshopId, workshopId))
  const steps = await tx
    .select({ st: s.routingSteps, code: s.operationKinds.code })
    .from(s.routingSteps)
    .innerJoin(s.operationKinds, eq(s.operationKinds.id, s.routingSteps.kindId))
    .where(inArray(s.routingSteps.routingId, [...routings.map((t) => t.id), -1]))
  const costs = steps
    .filter((x) => OUTSIDE_PER_UNIT_MINOR[x.code] !== undefined)
    .map((x) => ({ routingId: x.st.routingId, stepKey: x.st.key, outsideCostMinor: OUTSIDE_PER_UNIT_MINOR[x.code]! }))
  if (costs.length) await tx.insert(s.routingStepCosts).values(costs)
  const bags = await tx.select().from(s.jobBags).where(eq(s.jobBags.workshopId, workshopId))
  for (const bag of bags) {
    const code = routings.find((t) => t.id === bag.routingId)?.code ?? ''
    if (METAL_G[code] !== undefined)
      await tx
        .update(s.jobBags)
        .set({ params: { ...bag.params, metalWeightG: METAL_G[code] } })
        .where(eq(s.jobBags.id, bag.id))
  }
  // Priced from the estimate: most at 30–55 % of the price, one in eight thin (8–15 %): a favour to a regular or a price held from last year.
  const orderIds = [...new Set(bags.map((b) => b.orderId))]
  const costed = await costOrders(tx, workshopId, orderIds)
  for (const [orderId, c] of costed) {
    const cost = c.estimate.cost.totalMinor
    if (cost <= 0) continue
    const m = rand() < 0.125 ? 0.08 + rand() * 0.07 : 0.3 + rand() * 0.25
    // Whole pounds, up to the next 5 (the demo workshop prices in GBP), in pence.
    const price = Math.ceil(cost / (1 - m) / 500) * 500
    await tx
      .update(s.orders)
      .set({ priceQuotedMinor: price })
      .where(and(eq(s.orders.id, orderId), eq(s.orders.workshopId, workshopId)))
  }
}
