// Metal, stock: the balance of each alloy (bought, issued and returned, refining, adjustments, delivered) with its fine weight, of it
// the customers' own pieces waiting to be collected, the value of the workshop's own at today's price, finished pieces leaving
// stock when their order is collected, and the customer's pieces of a cancelled order or job bag handed back (what the counter
// weighs against what was held is the customer's metal lost or gained, never the workshop's).
import { and, asc, eq, inArray, ne, sql } from 'drizzle-orm'
import { fineMg, gToMg, mgToG } from '../../../shared/domain/metal'
import { type HeldPiece, type StockRow } from '../../../shared/schemas/metal'
import type { Db, Tx } from '../../db/client'
import { alloys, jobBags, metalMovements } from '../../db/schema/index'
import { invalid } from '../../errors/app-error'
import type { Actor } from '../../lib/route'
import { audit } from '../audit'
import { today, currentPrices, lockMetal } from './common'

type Movement = typeof metalMovements.$inferSelect
/**
 * Where each job bag's piece is, per bag and alloy, from the bag's issues, returns and deliveries in the order they were
 * recorded: each row's weight after its corrections (`effective`, by original row id), the last issue or return as the piece
 * (`last`; scrap and lemel handed in say nothing of where the piece is, and a weighing corrected to 0 does not count), the
 * bags already delivered, and where the bag's metal first came from (its first issue that counts: stock or the customer's own).
 */
function whereThePiecesAre(rows: readonly Movement[]) {
  const effective = new Map<number, number>()
  for (const m of rows) effective.set(m.correctsId ?? m.id, (effective.get(m.correctsId ?? m.id) ?? 0) + m.weightMg)
  const last = new Map<string, Movement>()
  const delivered = new Set<string>()
  const firstSource = new Map<string, string | null>()
  for (const m of rows) {
    const key = `${m.jobBagId}:${m.alloyId}`
    if (m.kind === 'delivered') {
      delivered.add(key)
      continue
    }
    if (m.kind !== 'issued' && m.kind !== 'returned') continue
    if (m.correctsId !== null || (effective.get(m.id) ?? 0) === 0) continue
    if (m.kind === 'issued' && !firstSource.has(key)) firstSource.set(key, m.source)
    if (m.kind === 'returned' && m.form !== 'piece') continue
    last.set(key, m)
  }
  return { effective, last, delivered, firstSource }
}

/**
 * The customers' own metal in the workshop, in mg by alloy: the piece of each job bag whose metal came in from the customer
 * (a repair, or their own gold to remake), as last weighed back from the bench and not yet collected. It is in the stock
 * balance, since it came in and went back, but it is theirs; at the bench it is in no balance, and once collected it has left.
 */
async function customersPiecesInStock(db: Db, workshopId: number): Promise<{ held: Map<number, number>; reissued: Map<number, number> }> {
  const customersBags = db
    .select({ id: metalMovements.jobBagId })
    .from(metalMovements)
    .where(and(eq(metalMovements.workshopId, workshopId), eq(metalMovements.kind, 'issued'), eq(metalMovements.source, 'customer')))
  const rows = await db
    .select()
    .from(metalMovements)
    .where(
      and(
        eq(metalMovements.workshopId, workshopId),
        inArray(metalMovements.kind, ['issued', 'returned', 'delivered']),
        inArray(metalMovements.jobBagId, customersBags),
      ),
    )
    .orderBy(asc(metalMovements.recordedAt), asc(metalMovements.id))
  const { effective, last, delivered, firstSource } = whereThePiecesAre(rows)
  const held = new Map<number, number>()
  for (const [key, m] of last) {
    if (delivered.has(key) || firstSource.get(key) !== 'customer' || m.kind !== 'returned') continue
    held.set(m.alloyId, (held.get(m.alloyId) ?? 0) + (effective.get(m.id) ?? 0))
  }
  // The customer's piece weighed back and then out again for the next step (still marked as theirs) came from the balance it
  // went back into, not from the customer a second time: by alloy, what such issues took of the piece waiting.
  const reissued = new Map<number, number>()
  const waiting = new Map<string, number>()
  for (const m of rows) {
    if (m.correctsId !== null) continue
    const key = `${m.jobBagId}:${m.alloyId}`
    const mg = effective.get(m.id) ?? 0
    if (m.kind === 'returned' && m.form === 'piece') waiting.set(key, (waiting.get(key) ?? 0) + mg)
    else if (m.kind === 'issued') {
      const back = waiting.get(key) ?? 0
      if (back > 0 && m.source === 'customer') reissued.set(m.alloyId, (reissued.get(m.alloyId) ?? 0) + Math.min(back, Math.max(0, mg)))
      waiting.delete(key)
    }
  }
  return { held, reissued }
}

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
  const { held: customers, reissued } = await customersPiecesInStock(db, workshopId)
  const prices = await currentPrices(
    db,
    list.map((a) => a.id),
    await today(db, workshopId),
  )
  return list.map((a) => {
    const s = (kind: string, source?: string) =>
      sums.filter((x) => x.alloyId === a.id && x.kind === kind && (source === undefined || x.source === source)).reduce((t, x) => t + Number(x.mg), 0)
    const boughtMg = s('bought'),
      // Metal that came in from customers: their pieces' first weighing out, not the same piece weighed out again.
      fromCustomerMg = s('issued', 'customer') - (reissued.get(a.id) ?? 0),
      issuedMg = s('issued'),
      returnedMg = s('returned')
    const toRefiningMg = s('to-refining'),
      fromRefiningMg = s('from-refining'),
      adjustedMg = s('adjusted'),
      deliveredMg = s('delivered'),
      // The customer's piece weighed lighter (or heavier) at the counter than held: theirs, so it leaves the balance with the piece.
      customersLossMg = s('customer-loss')
    const balanceMg = boughtMg + fromCustomerMg - issuedMg + returnedMg - toRefiningMg + fromRefiningMg + adjustedMg - deliveredMg - customersLossMg
    const customersMg = customers.get(a.id) ?? 0
    const ownMg = balanceMg - customersMg
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
      customersLossMg,
      balanceMg,
      balanceG: mgToG(balanceMg),
      customersMg,
      ownMg,
      fineMg: fine,
      fineG: mgToG(fine),
      pricePerGramMinor: p?.pricePerGramMinor ?? null,
      priceOn: p?.effectiveOn ?? null,
      valueMinor: p ? Math.round((ownMg * p.pricePerGramMinor) / 1000) : null,
      customersValueMinor: p ? Math.round((customersMg * p.pricePerGramMinor) / 1000) : null,
    }
  })
}

// ---------------------------------------------------------------------------------------------------------------
// Finished pieces leave stock

/**
 * When an order is collected its pieces leave the workshop: for each job bag still in the order (not cancelled) and alloy whose
 * last weighing of the piece (an issue or the piece coming back, corrections applied; scrap and lemel handed in after it do not
 * count) was the piece coming back, that weight leaves stock as a 'delivered' row. A piece last seen going out to the bench, a
 * bag already delivered, or a cancelled bag writes nothing: a cancelled bag's metal stays in stock (the workshop's own), or was
 * handed back when it was the customer's. Runs inside the order's own transaction.
 */
export async function deliverOrderMetal(tx: Tx, actor: Actor, orderId: number): Promise<number> {
  const rows = await tx
    .select({ m: metalMovements })
    .from(metalMovements)
    .innerJoin(jobBags, eq(jobBags.id, metalMovements.jobBagId))
    .where(
      and(
        eq(jobBags.orderId, orderId),
        ne(jobBags.status, 'cancelled'),
        eq(metalMovements.workshopId, actor.workshopId),
        inArray(metalMovements.kind, ['issued', 'returned', 'delivered']),
      ),
    )
    .orderBy(asc(metalMovements.recordedAt), asc(metalMovements.id))
  const { effective, last, delivered } = whereThePiecesAre(rows.map((r) => r.m))
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

// ---------------------------------------------------------------------------------------------------------------
// A cancelled order's customer's pieces go back to them

/**
 * The customer's own pieces an order holds: for each of its job bags and alloys whose metal first came from the customer, the
 * piece as last weighed back from the bench (corrections applied), not yet delivered — what the stock counts as the customers'
 * own for that order. A piece last seen going out to the bench is at the bench, not held.
 */
export async function heldCustomersPieces(db: Tx, workshopId: number, orderId: number): Promise<HeldPiece[]> {
  const rows = await db
    .select({ m: metalMovements, number: jobBags.number, piece: jobBags.piece, alloyName: alloys.name })
    .from(metalMovements)
    .innerJoin(jobBags, eq(jobBags.id, metalMovements.jobBagId))
    .innerJoin(alloys, eq(alloys.id, metalMovements.alloyId))
    .where(and(eq(jobBags.orderId, orderId), eq(metalMovements.workshopId, workshopId), inArray(metalMovements.kind, ['issued', 'returned', 'delivered'])))
    .orderBy(asc(metalMovements.recordedAt), asc(metalMovements.id))
  const { effective, last, delivered, firstSource } = whereThePiecesAre(rows.map((r) => r.m))
  const out: HeldPiece[] = []
  for (const [key, m] of last) {
    if (delivered.has(key) || firstSource.get(key) !== 'customer' || m.kind !== 'returned') continue
    const weightMg = effective.get(m.id) ?? 0
    if (weightMg <= 0) continue
    const r = rows.find((x) => x.m.id === m.id)!
    out.push({ jobBagId: m.jobBagId!, number: r.number, piece: r.piece, alloyId: m.alloyId, alloyName: r.alloyName, weightMg, weightG: mgToG(weightMg) })
  }
  return out.sort((a, b) => a.number.localeCompare(b.number) || a.alloyId - b.alloyId)
}

/** A piece given back to the customer as the office weighed it at the counter: by job bag and alloy, in grams. */
export interface PieceHandedBack {
  jobBagId: number
  alloyId: number
  weightG: number
}
/** A ledger row a hand-back wrote, for its event after commit. */
export interface HandBackRow {
  id: number
  kind: 'delivered' | 'customer-loss'
  alloyId: number
  jobBagId: number
}

/**
 * When an order (or one of its job bags) is cancelled its customer's pieces go back to them: each piece it holds (of that bag
 * only, with `jobBagId`) leaves stock as a 'delivered' row (the kind a collected piece leaves by), at the weight the office handed
 * over (`given`, by job bag and alloy) or else at the weight held. The piece is the customer's metal, all of it: a weight handed
 * over lighter or heavier than held is their metal lost or gained, not the workshop's stock, so the difference (held − handed
 * over; negative when heavier) is written beside it as a 'customer-loss' row of that bag, and the workshop's own metal is what it
 * was. A piece named that the bag or order does not hold is refused (400 on `handBack.<i>`). Runs inside the order's or bag's
 * transaction, after its row lock; returns the rows written, for their events after commit.
 */
export async function handBackCustomersPieces(
  tx: Tx,
  actor: Actor,
  orderId: number,
  given: readonly PieceHandedBack[] = [],
  scope: { jobBagId?: number } = {},
): Promise<HandBackRow[]> {
  await lockMetal(tx, actor.workshopId)
  const held = (await heldCustomersPieces(tx, actor.workshopId, orderId)).filter((h) => scope.jobBagId === undefined || h.jobBagId === scope.jobBagId)
  const holds = scope.jobBagId === undefined ? 'this order holds' : 'this job bag holds'
  const weighed = new Map<string, number>()
  for (const [i, g] of given.entries()) {
    const key = `${g.jobBagId}:${g.alloyId}`
    if (!held.some((h) => `${h.jobBagId}:${h.alloyId}` === key)) throw invalid(`handBack.${i}`, `is not a customer’s piece ${holds}`)
    if (weighed.has(key)) throw invalid(`handBack.${i}`, 'names the same piece twice')
    weighed.set(key, gToMg(g.weightG))
  }
  const why = scope.jobBagId === undefined ? 'order cancelled' : 'job bag cancelled'
  const at = new Date().toISOString()
  const written: HandBackRow[] = []
  const write = async (h: HeldPiece, kind: HandBackRow['kind'], weightMg: number, reason: string) => {
    const [row] = await tx
      .insert(metalMovements)
      .values({
        workshopId: actor.workshopId,
        alloyId: h.alloyId,
        kind,
        weightMg,
        jobBagId: h.jobBagId,
        personId: null,
        operationId: null,
        reason,
        recordedBy: actor.userId,
        recordedAt: at,
      })
      .returning({ id: metalMovements.id })
    written.push({ id: row!.id, kind, alloyId: h.alloyId, jobBagId: h.jobBagId })
    return row!.id
  }
  for (const h of held) {
    const weightMg = weighed.get(`${h.jobBagId}:${h.alloyId}`) ?? h.weightMg
    const differenceMg = h.weightMg - weightMg
    const id = await write(h, 'delivered', weightMg, `handed back to the customer, ${why}`)
    await audit(tx, actor, 'hand-back', 'metal-movement', id, { orderId, jobBagId: h.jobBagId, alloyId: h.alloyId, weightMg, heldMg: h.weightMg, differenceMg })
    if (differenceMg === 0) continue
    const reason = `${differenceMg > 0 ? 'lost from' : 'gained by'} the customer’s metal: handed back at ${fmt3(weightMg)} g, held at ${fmt3(h.weightMg)} g`
    const lossId = await write(h, 'customer-loss', differenceMg, reason)
    await audit(tx, actor, 'customer-loss', 'metal-movement', lossId, { orderId, jobBagId: h.jobBagId, alloyId: h.alloyId, weightMg: differenceMg })
  }
  return written
}

/** Milligrams as grams to the milligram, as the hand-back dialog and the stock show them (6180 → "6.180"). */
const fmt3 = (mg: number) => (mg / 1000).toFixed(3)
