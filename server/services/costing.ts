// Job costing for sales and the owner alike: the estimated cost of pieces (ordered or not) and an order's actual cost from its metal
// ledger, stone counts, outside costs and time records — one function per side, all in integer minor units (shared/domain/costing.ts).
import { and, asc, eq, inArray } from 'drizzle-orm'
import {
  CUSTOMERS_METAL_CAVEAT,
  METAL_AS_ESTIMATED_WORDS,
  WORKSHOP_MARGIN_PCT,
  addBreakdowns,
  mulDivRound,
  breakdown,
  customersMetalNote,
  customersPieceNote,
  labourMinor,
  margin,
  marginCaveat,
  metalActual,
  metalMinor,
  stonesMinor,
  suggestedPriceMinor,
  type CostBreakdown,
  type Missing,
} from '../../shared/domain/costing'
import { routingStepMinutes } from '../../shared/domain/estimate'
import { PIECE_METAL_ALLOY, gToMg, mgToG, worksOnCustomersPiece } from '../../shared/domain/metal'
import { countsOf } from '../../shared/domain/stones'
import type { CostingEstimate, CostingEstimateInput, CostingSide, OrderCosting, PieceEstimate } from '../../shared/schemas/costing'
import type { PieceParams } from '../../shared/schemas/order'
import type { Tx } from '../db/client'
import {
  alloyPrices,
  alloys,
  jobBagStones,
  jobBags,
  metalMovements,
  operationCosts,
  operationKinds,
  operations,
  orders,
  people,
  routings,
  stoneMovements,
  routingStepCosts,
  routingSteps,
  workshops,
} from '../db/schema/index'
import { invalid, notFound } from '../errors/app-error'
import { dayjs } from '../lib/time'
import { actualMinutes } from './estimates'

type Alloy = typeof alloys.$inferSelect
interface StoneLine {
  count: number
  costEachMinor: number | null
  customerOwned: boolean
}

async function workshopOf(db: Tx, workshopId: number) {
  const [w] = await db.select({ tz: workshops.timeZone, currency: workshops.currency }).from(workshops).where(eq(workshops.id, workshopId))
  return { tz: w?.tz ?? 'Europe/London', currency: w?.currency ?? 'GBP' }
}

/** Every price of the workshop's alloys, so a price on any day is found without a query per line. */
async function priceBook(db: Tx, workshopId: number) {
  const list = await db.select().from(alloys).where(eq(alloys.workshopId, workshopId)).orderBy(asc(alloys.id))
  const prices = list.length
    ? await db
        .select()
        .from(alloyPrices)
        .where(
          inArray(
            alloyPrices.alloyId,
            list.map((a) => a.id),
          ),
        )
        .orderBy(asc(alloyPrices.effectiveOn), asc(alloyPrices.id))
    : []
  return {
    alloys: list,
    /** The price in force on a day: the latest effective on or before it. */
    on(alloyId: number, day: string) {
      let p: { pricePerGramMinor: number; effectiveOn: string } | null = null
      for (const r of prices) if (r.alloyId === alloyId && r.effectiveOn <= day) p = { pricePerGramMinor: r.pricePerGramMinor, effectiveOn: r.effectiveOn }
      return p
    },
    /** The alloy a piece's metal code means (an active one first; among several, the first set up). */
    forPiece(metal: string): Alloy | undefined {
      const m = PIECE_METAL_ALLOY[metal]
      if (!m) return undefined
      const fits = list.filter((a) => a.metal === m.metal && a.fineness === m.fineness)
      return fits.find((a) => a.active) ?? fits[0]
    },
  }
}
type PriceBook = Awaited<ReturnType<typeof priceBook>>

const side = (cost: CostBreakdown, priceMinor: number, missing: Missing[]): CostingSide => {
  const m = margin(priceMinor, cost.totalMinor)
  const seen = [...new Set(missing)]
  return { cost, marginMinor: m.marginMinor, marginPct: m.marginPct, missing: seen, caveat: marginCaveat(seen) }
}

/**
 * Metal at estimate: the piece's typical weight × quantity at its alloy's price on the day. When the work is on the customer's own
 * piece (`customersPiece`), that weight is the metal added from stock — charged the same way — and the piece says so (`note`).
 * On a piece made from the customer's own metal (`customersMetalMg`: what they brought in, as its ledger shows once it is weighed
 * out as theirs), that metal covers the weight first and is not charged, as at actual; the piece says how much it covered.
 */
function metalEstimate(book: PriceBook, params: PieceParams, day: string, customersPiece: boolean, customersMetalMg = 0) {
  const alloy = book.forPiece(params.metal)
  const price = alloy ? book.on(alloy.id, day) : null
  const missing: Missing[] = []
  let minor = 0,
    coveredMg = 0
  if (!PIECE_METAL_ALLOY[params.metal]) missing.push('metal-not-priced')
  else if (params.metalWeightG === undefined) missing.push('no-metal-weight')
  else if (!price) missing.push('no-metal-price')
  else {
    const estimatedMg = gToMg(params.metalWeightG) * params.quantity
    coveredMg = customersPiece ? 0 : Math.min(estimatedMg, Math.max(0, customersMetalMg))
    minor = metalMinor(estimatedMg - coveredMg, price.pricePerGramMinor)
  }
  return {
    minor,
    missing,
    alloyName: alloy?.name ?? null,
    pricePerGramMinor: price?.pricePerGramMinor ?? null,
    priceOn: price?.effectiveOn ?? null,
    customersPiece,
    customersMetal: !customersPiece && customersMetalMg > 0,
    note: customersPiece
      ? customersPieceNote(params.metalWeightG, params.quantity)
      : customersMetalMg > 0
        ? customersMetalNote(coveredMg, customersMetalMg)
        : null,
  }
}

type Movement = typeof metalMovements.$inferSelect
/**
 * The customer's own metal a job bag brought in, in mg by alloy: its weighings out as the customer's (corrections applied), less
 * what such a weighing only took of the piece weighed back before it (the same metal out again for its next step) — as the stock
 * counts metal come in from customers. `rows`: the bag's ledger rows, oldest first.
 */
function customersMetalIn(rows: readonly Movement[]): Map<number, number> {
  const effective = new Map<number, number>()
  for (const m of rows) effective.set(m.correctsId ?? m.id, (effective.get(m.correctsId ?? m.id) ?? 0) + m.weightMg)
  const waiting = new Map<number, number>()
  const brought = new Map<number, number>()
  for (const m of rows) {
    if (m.correctsId !== null) continue
    const mg = Math.max(0, effective.get(m.id) ?? 0)
    if (m.kind === 'returned' && m.form === 'piece') waiting.set(m.alloyId, (waiting.get(m.alloyId) ?? 0) + mg)
    else if (m.kind === 'issued') {
      const again = Math.min(waiting.get(m.alloyId) ?? 0, mg)
      if (m.source === 'customer') brought.set(m.alloyId, (brought.get(m.alloyId) ?? 0) + mg - again)
      waiting.delete(m.alloyId)
    }
  }
  return brought
}

/**
 * Stones at estimate: the stone list (cost each × count per piece × quantity) — an order's piece's own, else the stones its quote
 * was written with — else the piece's count × its typical cost.
 */
function stonesEstimate(params: PieceParams, lines: readonly StoneLine[] | undefined) {
  const missing: Missing[] = []
  let minor = 0
  if (lines && lines.length) {
    for (const l of lines) {
      if (l.customerOwned) continue
      if (l.costEachMinor === null) missing.push('stone-costs')
      else minor += stonesMinor(l.costEachMinor, l.count * params.quantity)
    }
  } else if (params.stoneCount > 0) {
    if (params.stoneCostEachMinor === undefined) missing.push('stone-costs')
    else minor = stonesMinor(params.stoneCostEachMinor, params.stoneCount * params.quantity)
  }
  return { minor, missing }
}

async function averageRateMinor(db: Tx, workshopId: number) {
  const staff = await db.select({ id: people.id, rate: people.hourlyRateMinor, active: people.active }).from(people).where(eq(people.workshopId, workshopId))
  const active = staff.filter((p) => p.active).map((p) => p.rate)
  // The average of the rates (integer minor units), rounded once, half away from zero.
  const average = active.length
    ? mulDivRound(
        active.reduce((s, x) => s + x, 0),
        1,
        active.length,
      )
    : 0
  return { average, rateOf: new Map(staff.map((p) => [p.id, p.rate])) }
}

/** The estimated cost of pieces not yet ordered: routing minutes × the workshop's average rate, the routing's outside costs, metal at today's price. */
export async function estimate(db: Tx, workshopId: number, input: CostingEstimateInput): Promise<CostingEstimate> {
  const { tz, currency } = await workshopOf(db, workshopId)
  const day = dayjs().tz(tz).format('YYYY-MM-DD')
  const book = await priceBook(db, workshopId)
  const { average } = await averageRateMinor(db, workshopId)
  const ids = [...new Set(input.pieces.map((p) => p.routingId))]
  const found = await db
    .select()
    .from(routings)
    .where(and(eq(routings.workshopId, workshopId), inArray(routings.id, ids)))
  const steps = ids.length
    ? await db
        .select({ s: routingSteps, outside: operationKinds.outside })
        .from(routingSteps)
        .innerJoin(operationKinds, eq(operationKinds.id, routingSteps.kindId))
        .where(inArray(routingSteps.routingId, ids))
        .orderBy(asc(routingSteps.seq))
    : []
  const costs = ids.length ? await db.select().from(routingStepCosts).where(inArray(routingStepCosts.routingId, ids)) : []
  const pieces: PieceEstimate[] = input.pieces.map((p, i) => {
    const t = found.find((x) => x.id === p.routingId)
    if (!t) throw invalid(`pieces.${i}.routingId`, 'is not a routing of this workshop')
    const missing: Missing[] = []
    let minutes = 0,
      labour = 0,
      outside = 0,
      outsideSteps = 0,
      uncosted = 0
    for (const { s, outside: isOutside } of steps.filter((x) => x.s.routingId === t.id)) {
      if (isOutside || s.leadDays > 0) {
        outsideSteps++
        const perUnit = costs.find((c) => c.routingId === t.id && c.stepKey === s.key)?.outsideCostMinor ?? null
        if (perUnit === null) uncosted++
        else outside += perUnit * p.params.quantity
        continue
      }
      const m = routingStepMinutes(s, t, p.params)
      minutes += m
      labour += labourMinor(m, average)
    }
    if (uncosted) missing.push(uncosted === outsideSteps ? 'outside-uncosted' : 'some-outside-uncosted')
    const metal = metalEstimate(book, p.params, day, worksOnCustomersPiece(t, p.params))
    const stones = stonesEstimate(p.params, p.stones)
    return {
      piece: p.piece,
      quantity: p.params.quantity,
      metalWeightG: p.params.metalWeightG ?? null,
      alloyName: metal.alloyName,
      pricePerGramMinor: metal.pricePerGramMinor,
      priceOn: metal.priceOn,
      labourMinutes: Math.round(minutes),
      customersPiece: metal.customersPiece,
      metalNote: metal.note,
      cost: breakdown({ metalMinor: metal.minor, stonesMinor: stones.minor, outsideMinor: outside, labourMinor: labour }),
      missing: [...metal.missing, ...stones.missing, ...missing],
    }
  })
  const cost = addBreakdowns(pieces.map((p) => p.cost))
  const priceMinor = input.priceQuotedMinor
  return {
    priceMinor,
    estimate: side(
      cost,
      priceMinor,
      pieces.flatMap((p) => p.missing),
    ),
    pieces,
    marginTargetPct: WORKSHOP_MARGIN_PCT,
    suggestedPriceMinor: suggestedPriceMinor(cost.totalMinor, WORKSHOP_MARGIN_PCT, currency),
    currency,
    pricedOn: day,
    customersMetalCaveat: pieces.some((p) => p.customersPiece) ? CUSTOMERS_METAL_CAVEAT : null,
  }
}

/** The raw figures of an order: its actual side counts only what was recorded (`atActual` adds unweighed metal as estimated). */
export interface CostedOrder extends Omit<OrderCosting, 'metalAsEstimatedMinor'> {
  estimateMinutes: number
  actualMinutes: number
  outsideSteps: number
  outsideUncosted: number
  /** The estimate's metal of the pieces in precious metal with nothing weighed (minor units): what the owner's table counts for them at actual. */
  metalNotWeighedMinor: number
}

/**
 * Orders at estimate and at actual. Estimate: each step's estimate minutes at the rate of whoever did it, else the average (as the
 * quote and the order dialog priced it; never the person the plan happens to hold it for), the routing's outside costs, the piece's typical metal at the price on the day the order was taken, the stone list
 * (before the piece has one, the stones as quoted).
 * Actual: time records at each person's rate, outside work as invoiced (else expected), metal from the ledger, stones as counted.
 */
export async function costOrders(db: Tx, workshopId: number, orderIds: number[]): Promise<Map<number, CostedOrder>> {
  const out = new Map<number, CostedOrder>()
  if (!orderIds.length) return out
  const { tz, currency } = await workshopOf(db, workshopId)
  const localDay = (d: unknown) =>
    dayjs(new Date(d as string))
      .tz(tz)
      .format('YYYY-MM-DD')
  const book = await priceBook(db, workshopId)
  const { average, rateOf } = await averageRateMinor(db, workshopId)
  const orderRows = await db
    .select()
    .from(orders)
    .where(and(eq(orders.workshopId, workshopId), inArray(orders.id, orderIds)))
  const bags = await db.select().from(jobBags).where(inArray(jobBags.orderId, orderIds)).orderBy(asc(jobBags.id))
  const bagIds = [...bags.map((b) => b.id), -1]
  const ops = await db
    .select({ op: operations, outside: operationKinds.outside })
    .from(operations)
    .innerJoin(operationKinds, eq(operationKinds.id, operations.kindId))
    .where(inArray(operations.jobBagId, bagIds))
    .orderBy(asc(operations.seq))
  const routingIds = [...new Set(bags.map((b) => b.routingId).filter((x): x is number => x !== null)), -1]
  const stepCosts = await db.select().from(routingStepCosts).where(inArray(routingStepCosts.routingId, routingIds))
  const opIds = [...ops.map((o) => o.op.id), -1]
  const opCosts = await db.select().from(operationCosts).where(inArray(operationCosts.operationId, opIds))
  const { byOperation, records } = await actualMinutes(
    db,
    ops.filter((o) => o.op.status === 'done').map((o) => o.op.id),
  )
  const moves = await db
    .select()
    .from(metalMovements)
    .where(and(eq(metalMovements.workshopId, workshopId), inArray(metalMovements.jobBagId, bagIds)))
    .orderBy(asc(metalMovements.recordedAt), asc(metalMovements.id))
  const lines = await db.select().from(jobBagStones).where(inArray(jobBagStones.jobBagId, bagIds)).orderBy(asc(jobBagStones.id))
  const stoneMoves = lines.length
    ? await db
        .select()
        .from(stoneMovements)
        .where(
          inArray(
            stoneMovements.stoneLineId,
            lines.map((l) => l.id),
          ),
        )
    : []

  for (const order of orderRows) {
    const orderDay = localDay(order.createdAt)
    const est: CostBreakdown[] = [],
      act: CostBreakdown[] = []
    const missEst: Missing[] = [],
      missAct: Missing[] = []
    const pieces: PieceEstimate[] = []
    let estMin = 0,
      actMin = 0,
      outsideSteps = 0,
      outsideUncosted = 0,
      estOutsideSteps = 0,
      estUncosted = 0,
      customerLossMg = 0,
      metalNotWeighedMinor = 0,
      workRecorded = false,
      customersMetal = false
    const myBags = bags.filter((b) => b.orderId === order.id)
    let weighedBags = 0,
      preciousBags = 0
    for (const bag of myBags) {
      const params = bag.params
      let labourEst = 0,
        labourAct = 0,
        outsideEst = 0,
        outsideAct = 0,
        bagMinutes = 0
      for (const { op, outside } of ops.filter((o) => o.op.jobBagId === bag.id)) {
        if (op.status === 'skipped') continue
        if (op.status === 'done') workRecorded = true
        const mine = records.filter((r) => r.operationId === op.id)
        const byPerson = new Map<number, number>()
        for (const r of mine) byPerson.set(r.personId, (byPerson.get(r.personId) ?? 0) + r.minutes)
        if (!outside && op.leadDays === 0) {
          // Not the person the live plan has put on it: that changes with every plan and bar moved, and the quote and the order
          // dialog, which priced the piece, could not know it — so a step nobody has worked is at the average rate, as they counted it.
          const main = [...byPerson.entries()].sort((a, b) => b[1] - a[1] || a[0] - b[0])[0]?.[0]
          const rate = main !== undefined ? (rateOf.get(main) ?? average) : average
          estMin += op.estimateMinutes
          bagMinutes += op.estimateMinutes
          labourEst += labourMinor(op.estimateMinutes, rate)
          if (op.status === 'done') {
            actMin += byOperation.get(op.id) ?? 0
            // One line per person on the step: their minutes at their rate, rounded once.
            for (const [personId, minutes] of byPerson) labourAct += labourMinor(minutes, rateOf.get(personId) ?? average)
          }
          continue
        }
        const perUnit = stepCosts.find((c) => c.routingId === bag.routingId && c.stepKey === op.key)?.outsideCostMinor ?? null
        const expected = perUnit === null ? 0 : perUnit * Math.max(1, params.quantity)
        const invoicedRow = opCosts.find((c) => c.operationId === op.id)
        const invoiced = invoicedRow?.outsideCostMinor ?? null
        estOutsideSteps++
        if (perUnit === null) estUncosted++
        outsideEst += expected
        if (op.status === 'done') {
          outsideSteps++
          if (perUnit === null && invoiced === null) outsideUncosted++
          outsideAct += invoiced !== null ? invoiced : expected
        }
      }
      // The customer's own metal the bag brought in (none until it is weighed out as theirs), by alloy: at estimate and at actual
      // alike it is theirs, never charged.
      const bagLedger = moves.filter((m) => m.jobBagId === bag.id)
      const customersIn = customersMetalIn(bagLedger)
      const customersInMg = [...customersIn.values()].reduce((a, b) => a + b, 0)
      // Metal at estimate, on the day the order was taken (on the customer's own piece: the metal added, as the dialog counted it;
      // on a piece made from their metal: what it does not cover).
      const mEst = metalEstimate(book, params, orderDay, worksOnCustomersPiece({ kind: bag.routingKind }, params), customersInMg)
      if (mEst.customersMetal) customersMetal = true
      const sLines = lines.filter((l) => l.jobBagId === bag.id)
      // The piece's own stone list; until it has one, the stones its quote was written with, at the quote's costs.
      const sEst = stonesEstimate(
        params,
        sLines.length
          ? sLines.map((l) => ({ count: l.count, costEachMinor: l.costEachMinor, customerOwned: l.customerOwned }))
          : bag.quotedStones?.map((l) => ({ count: l.count, costEachMinor: l.costEachMinor, customerOwned: false })),
      )
      missEst.push(...mEst.missing, ...sEst.missing)
      const bagEst = breakdown({ metalMinor: mEst.minor, stonesMinor: sEst.minor, outsideMinor: outsideEst, labourMinor: labourEst })
      est.push(bagEst)
      pieces.push({
        piece: bag.piece,
        quantity: params.quantity,
        metalWeightG: params.metalWeightG ?? null,
        alloyName: mEst.alloyName,
        pricePerGramMinor: mEst.pricePerGramMinor,
        priceOn: mEst.priceOn,
        labourMinutes: Math.round(bagMinutes),
        customersPiece: mEst.customersPiece,
        metalNote: mEst.note,
        cost: bagEst,
        missing: [...mEst.missing, ...sEst.missing],
      })

      // Metal at actual: per alloy of the bag, the last piece weighing and the loss at the price on the day of its first issue.
      let metalAct = 0
      const bagMoves = bagLedger.filter((m) => m.kind === 'issued' || m.kind === 'returned')
      // The customer's piece handed back lighter (or heavier) than held: their metal lost (or gained), on this order.
      customerLossMg += bagLedger.filter((m) => m.kind === 'customer-loss').reduce((t, m) => t + m.weightMg, 0)
      if (PIECE_METAL_ALLOY[params.metal] || bagMoves.length) preciousBags++
      if (bagMoves.length) {
        weighedBags++
        workRecorded = true
      } else if (PIECE_METAL_ALLOY[params.metal]) metalNotWeighedMinor += mEst.minor
      for (const alloyId of new Set(bagMoves.map((m) => m.alloyId))) {
        const mine = bagMoves.filter((m) => m.alloyId === alloyId)
        const issued = mine.filter((m) => m.kind === 'issued')
        const issuedMg = issued.reduce((s, m) => s + m.weightMg, 0)
        const returnedMg = mine.filter((m) => m.kind === 'returned').reduce((s, m) => s + m.weightMg, 0)
        const lastPiece = mine.filter((m) => m.kind === 'returned' && m.form === 'piece' && m.correctsId === null).at(-1)
        const pieceMg = lastPiece ? lastPiece.weightMg + mine.filter((m) => m.correctsId === lastPiece.id).reduce((s, m) => s + m.weightMg, 0) : 0
        const firstIssue = issued.find((m) => m.correctsId === null)
        const price = firstIssue ? book.on(alloyId, localDay(firstIssue.recordedAt)) : null
        if (!price) {
          missAct.push('no-metal-price')
          continue
        }
        const r = metalActual({ pieceMg, lossMg: issuedMg - returnedMg, customerMg: customersIn.get(alloyId) ?? 0, pricePerGramMinor: price.pricePerGramMinor })
        metalAct += r.minor
        customerLossMg += r.customerLossMg
      }
      if (!bagMoves.length && !PIECE_METAL_ALLOY[params.metal]) missAct.push('metal-not-priced')
      // Stones at actual: cost each × (set + broken + lost) as counted; the customer's own cost nothing.
      let stonesAct = 0
      if (sLines.length) {
        for (const l of sLines) {
          const c = countsOf(stoneMoves.filter((m) => m.stoneLineId === l.id))
          if (c.issued === 0) missAct.push('stones-not-counted')
          else workRecorded = true
          if (l.customerOwned) continue
          if (l.costEachMinor === null) missAct.push('stone-costs')
          else stonesAct += stonesMinor(l.costEachMinor, c.set + c.broken + c.lost)
        }
      } else {
        // No stone list: as at estimate (the stones as quoted, else the piece's count at its typical cost).
        stonesAct = sEst.minor
        missAct.push(...sEst.missing)
      }
      act.push(breakdown({ metalMinor: metalAct, stonesMinor: stonesAct, outsideMinor: outsideAct, labourMinor: labourAct }))
    }
    if (preciousBags > 0 && weighedBags === 0) missAct.push('no-metal-weighed')
    else if (weighedBags > 0 && weighedBags < preciousBags) missAct.push('some-metal-weighed')
    if (estUncosted) missEst.push(estUncosted === estOutsideSteps ? 'outside-uncosted' : 'some-outside-uncosted')
    if (outsideUncosted) missAct.push(outsideUncosted === outsideSteps ? 'outside-uncosted' : 'some-outside-uncosted')
    const estCost = addBreakdowns(est)
    const priceMinor = order.priceQuotedMinor
    out.set(order.id, {
      orderId: order.id,
      orderNumber: order.number,
      priceMinor,
      estimate: side(estCost, priceMinor, missEst),
      actual: side(addBreakdowns(act), priceMinor, missAct),
      pieces,
      marginTargetPct: WORKSHOP_MARGIN_PCT,
      suggestedPriceMinor: suggestedPriceMinor(estCost.totalMinor, WORKSHOP_MARGIN_PCT, currency),
      currency,
      pricedOn: orderDay,
      customersMetalCaveat: customersMetal || pieces.some((p) => p.customersPiece) ? CUSTOMERS_METAL_CAVEAT : null,
      customerMetalLossG: mgToG(customerLossMg),
      workRecorded,
      estimateMinutes: estMin,
      actualMinutes: actMin,
      outsideSteps,
      outsideUncosted,
      metalNotWeighedMinor,
    })
  }
  return out
}

const ESTIMATE_METAL_GAPS: readonly Missing[] = ['no-metal-weight', 'no-metal-price', 'metal-not-priced']
/**
 * An order at actual as the owner's job costing and the order's own costing count it: unweighed metal is never free — a piece in
 * precious metal with nothing weighed counts the estimate's metal (and whatever the estimate could not price is then missing here
 * too), and the words say so.
 */
export function atActual(c: CostedOrder) {
  const a = c.actual
  const asEstimated = a.missing.includes('no-metal-weighed') || a.missing.includes('some-metal-weighed')
  const missing: Missing[] = asEstimated ? [...new Set([...a.missing, ...c.estimate.missing.filter((m) => ESTIMATE_METAL_GAPS.includes(m))])] : a.missing
  const totalMinor = a.cost.totalMinor + c.metalNotWeighedMinor
  const m = margin(c.priceMinor, totalMinor)
  return {
    cost: a.cost,
    notWeighed: a.missing.includes('no-metal-weighed'),
    asEstimated,
    metalAsEstimatedMinor: c.metalNotWeighedMinor,
    totalMinor,
    marginMinor: m.marginMinor,
    marginPct: m.marginPct,
    missing,
    caveat: marginCaveat(missing, METAL_AS_ESTIMATED_WORDS),
  }
}

/**
 * One order's costing (GET /orders/:id/costing). At actual it follows the owner's job costing (`atActual`): the metal of pieces with
 * nothing weighed counts as estimated — inside the metal figure, and named on its own — never as free.
 */
export async function orderCosting(db: Tx, workshopId: number, orderId: number): Promise<OrderCosting> {
  const c = (await costOrders(db, workshopId, [orderId])).get(orderId)
  if (!c) throw notFound('Order')
  const { estimateMinutes: _e, actualMinutes: _a, outsideSteps: _o, outsideUncosted: _u, metalNotWeighedMinor: _m, ...rest } = c
  const a = atActual(c)
  return {
    ...rest,
    actual: {
      cost: { ...a.cost, metalMinor: a.cost.metalMinor + a.metalAsEstimatedMinor, totalMinor: a.totalMinor },
      marginMinor: a.marginMinor,
      marginPct: a.marginPct,
      missing: a.missing,
      caveat: a.caveat,
    },
    metalAsEstimatedMinor: a.metalAsEstimatedMinor,
  }
}
