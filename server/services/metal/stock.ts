// Metal, stock: the balance of each alloy (bought, issued and returned, refining, adjustments, delivered) with its fine weight and
// value at today's price, and finished pieces leaving stock when their order is collected.
import { and, asc, eq, inArray, sql } from 'drizzle-orm'
import { fineMg, mgToG } from '../../../shared/domain/metal'
import { type StockRow } from '../../../shared/schemas/metal'
import type { Db, Tx } from '../../db/client'
import { alloys, jobBags, metalMovements } from '../../db/schema/index'
import type { Actor } from '../../lib/route'
import { audit } from '../audit'
import { today, currentPrices } from './common'

export async function stock(db: Db, workshopId: number): Promise<StockRow[]> {
  const list = await db.select().from(alloys).where(eq(alloys.workshopId, workshopId)).orderBy(asc(alloys.metal), asc(alloys.fineness), asc(alloys.name))
  const sums = await db
    .select({
      alloyId: metalMovements.alloyId,
      kind: metalMovements.kind,
      source: metalMovements.source,
      mg: sql<number>`sum(${metalMovements.weightMg})::bigint`,
    })
    .from(metalMovements)
    .where(eq(metalMovements.workshopId, workshopId))
    .groupBy(metalMovements.alloyId, metalMovements.kind, metalMovements.source)
  const prices = await currentPrices(
    db,
    list.map((a) => a.id),
    await today(db, workshopId),
  )
  return list.map((a) => {
    const s = (kind: string, source?: string) =>
      sums.filter((x) => x.alloyId === a.id && x.kind === kind && (source === undefined || x.source === source)).reduce((t, x) => t + Number(x.mg), 0)
    const boughtMg = s('bought'),
      fromCustomerMg = s('issued', 'customer'),
      issuedMg = s('issued'),
      returnedMg = s('returned')
    const toRefiningMg = s('to-refining'),
      fromRefiningMg = s('from-refining'),
      adjustedMg = s('adjusted'),
      deliveredMg = s('delivered')
    const balanceMg = boughtMg + fromCustomerMg - issuedMg + returnedMg - toRefiningMg + fromRefiningMg + adjustedMg - deliveredMg
    const p = prices.get(a.id)
    const fine = fineMg(balanceMg, a.fineness)
    return {
      alloyId: a.id,
      code: a.code,
      name: a.name,
      metal: a.metal,
      fineness: a.fineness,
      boughtMg,
      fromCustomerMg,
      issuedMg,
      returnedMg,
      toRefiningMg,
      fromRefiningMg,
      adjustedMg,
      deliveredMg,
      balanceMg,
      balanceG: mgToG(balanceMg),
      fineMg: fine,
      fineG: mgToG(fine),
      pricePerGramMinor: p?.pricePerGramMinor ?? null,
      priceOn: p?.effectiveOn ?? null,
      valueMinor: p ? Math.round((balanceMg * p.pricePerGramMinor) / 1000) : null,
    }
  })
}

// ---------------------------------------------------------------------------------------------------------------
// Finished pieces leave stock

/**
 * When an order is collected its pieces leave the workshop: for each job bag and alloy whose last weighing of the piece (an
 * issue or the piece coming back, corrections applied; scrap and lemel handed in after it do not count) was the piece coming
 * back, that weight leaves stock as a 'delivered' row. A piece last seen going out to the bench, or a bag already delivered,
 * writes nothing. Runs inside the order's own transaction.
 */
export async function deliverOrderMetal(tx: Tx, actor: Actor, orderId: number): Promise<number> {
  const rows = await tx
    .select({ m: metalMovements })
    .from(metalMovements)
    .innerJoin(jobBags, eq(jobBags.id, metalMovements.jobBagId))
    .where(
      and(eq(jobBags.orderId, orderId), eq(metalMovements.workshopId, actor.workshopId), inArray(metalMovements.kind, ['issued', 'returned', 'delivered'])),
    )
    .orderBy(asc(metalMovements.recordedAt), asc(metalMovements.id))
  const effective = new Map<number, number>()
  for (const { m } of rows) effective.set(m.correctsId ?? m.id, (effective.get(m.correctsId ?? m.id) ?? 0) + m.weightMg)
  const last = new Map<string, typeof metalMovements.$inferSelect>()
  const delivered = new Set<string>()
  for (const { m } of rows) {
    const key = `${m.jobBagId}:${m.alloyId}`
    if (m.kind === 'delivered') {
      delivered.add(key)
      continue
    }
    if (m.correctsId !== null || (effective.get(m.id) ?? 0) === 0) continue
    // Scrap and lemel handed in say nothing of where the piece is: only an issue or the piece coming back does.
    if (m.kind === 'returned' && m.form !== 'piece') continue
    last.set(key, m)
  }
  let written = 0
  const at = new Date().toISOString()
  for (const [key, m] of last) {
    if (delivered.has(key) || m.kind !== 'returned' || m.form !== 'piece') continue
    const weightMg = effective.get(m.id) ?? 0
    if (weightMg <= 0) continue
    const [row] = await tx
      .insert(metalMovements)
      .values({
        workshopId: actor.workshopId,
        alloyId: m.alloyId,
        kind: 'delivered',
        weightMg,
        jobBagId: m.jobBagId,
        personId: null,
        operationId: null,
        reason: 'collected with its order',
        recordedBy: actor.userId,
        recordedAt: at,
      })
      .returning({ id: metalMovements.id })
    await audit(tx, actor, 'deliver', 'metal-movement', row!.id, { orderId, jobBagId: m.jobBagId, alloyId: m.alloyId, weightMg })
    written++
  }
  return written
}
