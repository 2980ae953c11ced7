// The demo's metal: the usual alloys of a UK workshop with dated prices, loss tolerances, stock bought, a month of metal weighed out
// and back on the finished job bags (at the start and end of each step's own time records, so inside working time and before now),
// a few losses above tolerance, one correction, and refining lots (one sent and settled, one still collecting).
import { and, asc, eq, gte, inArray, isNotNull } from 'drizzle-orm'
import { DEFAULT_LOSS_TOLERANCE_PCT, FALLBACK_LOSS_TOLERANCE_PCT, PIECE_METAL_ALLOY, fineMg } from '../../shared/domain/metal'
import type { Trx } from './client'
import * as s from './schema/index'
import { dayjs } from '../lib/time'

/**
 * Densities: sterling, 14K and 18K yellow from Rio Grande ("How To Determine Metal Weight for Wax Trees"); platinum 950 inside
 * Chards'/Stuller's 20.1–20.8; 9 ct, 18 ct white and palladium 950 are usual trade figures (common practice, no source).
 * Prices (pence per gram) are invented for the demo.
 */
const ALLOYS = [
  { code: 'ag925', name: 'Sterling silver 925', metal: 'silver', fineness: 925, density: 10.36, prices: [92, 98] },
  { code: 'au375y', name: '9 ct yellow gold', metal: 'gold', fineness: 375, density: 11.2, prices: [3650, 3780] },
  { code: 'au585y', name: '14 ct yellow gold', metal: 'gold', fineness: 585, density: 13.07, prices: [5650, 5840] },
  { code: 'au750y', name: '18 ct yellow gold', metal: 'gold', fineness: 750, density: 15.58, prices: [7200, 7450] },
  { code: 'au750w', name: '18 ct white gold', metal: 'gold', fineness: 750, density: 15.9, prices: [7350, 7600] },
  { code: 'pt950', name: 'Platinum 950', metal: 'platinum', fineness: 950, density: 20.4, prices: [2950, 3050] },
  { code: 'pd950', name: 'Palladium 950', metal: 'palladium', fineness: 950, density: 12.0, prices: [2800, 2900] },
] as const

/** Grams bought into stock at the start of the month. */
const BOUGHT_G: Record<string, number> = { ag925: 1500, au375y: 220, au585y: 120, au750y: 160, au750w: 60, pt950: 60, pd950: 40 }
/** A new piece's metal in grams (low, high) by metal. */
const START_G: Record<string, [number, number]> = { silver: [8, 32], gold: [3, 10], platinum: [5, 11], palladium: [3, 8] }
/** Work that takes metal off the piece; the rest (inspection, outside work) does not weigh it out. */
const METAL_KINDS = new Set(['forging', 'sawing', 'filing', 'soldering', 'drilling', 'setting', 'polishing', 'etching'])
const HISTORY_DAYS = 31
/**
 * What a step usually loses for good, in % of the metal weighed out for it: the dust, fire scale and filings that neither the bench
 * skin nor the sweeps catch (what they catch comes back as lemel). From memory of bench practice (common practice, no published
 * source): filing and polishing lose the most, setting and soldering (whose solder adds a little back) the least — all well inside
 * the usual tolerances of shared/domain/metal.ts.
 */
const TYPICAL_LOSS_PCT: Record<string, number> = {
  forging: 0.3,
  sawing: 0.4,
  filing: 0.8,
  soldering: 0.1,
  drilling: 0.3,
  setting: 0.1,
  polishing: 0.9,
  etching: 0.6,
}

/** Its own seeded generator, so the metal is the same on every machine whatever else the demo draws. */
function rng(seed: number) {
  let a = seed >>> 0
  return () => {
    a = (a + 0x6d2b79f5) >>> 0
    let t = a
    t = Math.imul(t ^ (t >>> 15), t | 1)
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61)
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296
  }
}

export async function seedMetal(tx: Trx, o: { workshopId: number; now: Date }) {
  const { workshopId, now } = o
  const rand = rng(925750)
  const [w] = await tx.select().from(s.workshops).where(eq(s.workshops.id, workshopId))
  const zone = w!.timeZone
  const localDay = (d: Date | string, plus = 0) => dayjs(d).tz(zone).add(plus, 'day').format('YYYY-MM-DD')
  const [owner] = await tx
    .select()
    .from(s.users)
    .where(and(eq(s.users.workshopId, workshopId), eq(s.users.role, 'owner')))
  const [manager] = await tx
    .select()
    .from(s.users)
    .where(and(eq(s.users.workshopId, workshopId), eq(s.users.role, 'manager')))

  const alloys = await tx
    .insert(s.alloys)
    .values(ALLOYS.map((a) => ({ workshopId, code: a.code, name: a.name, metal: a.metal, fineness: a.fineness, densityGPerCm3: a.density })))
    .returning()
  await tx.insert(s.alloyPrices).values(
    ALLOYS.flatMap((a, i) => [
      // The year before: 4 % under the first price, so the demo's older orders have a price on the day they were taken.
      { alloyId: alloys[i]!.id, pricePerGramMinor: Math.round(a.prices[0] * 0.96), effectiveOn: localDay(now, -400), setBy: owner!.id },
      { alloyId: alloys[i]!.id, pricePerGramMinor: a.prices[0], effectiveOn: localDay(now, -45), setBy: owner!.id },
      { alloyId: alloys[i]!.id, pricePerGramMinor: a.prices[1], effectiveOn: localDay(now, -12), setBy: owner!.id },
    ]),
  )
  const kinds = await tx.select().from(s.operationKinds).where(eq(s.operationKinds.workshopId, workshopId))
  await tx
    .insert(s.lossTolerances)
    .values(kinds.map((k) => ({ kindId: k.id, tolerancePct: DEFAULT_LOSS_TOLERANCE_PCT[k.code] ?? FALLBACK_LOSS_TOLERANCE_PCT })))
  const tolOf = new Map(kinds.map((k) => [k.id, DEFAULT_LOSS_TOLERANCE_PCT[k.code] ?? FALLBACK_LOSS_TOLERANCE_PCT]))
  const kindCode = new Map(kinds.map((k) => [k.id, k.code]))
  // Repairs work on the customer's own piece: it comes out of their hands, not out of stock, and with nothing to spare.
  const repairRoutings = new Set(
    (
      await tx
        .select({ id: s.routings.id })
        .from(s.routings)
        .where(and(eq(s.routings.workshopId, workshopId), eq(s.routings.kind, 'repair')))
    ).map((r) => r.id),
  )
  const alloyFor = (metalCode: string) => {
    const m = PIECE_METAL_ALLOY[metalCode]
    return m ? alloys.find((a) => a.metal === m.metal && a.fineness === m.fineness) : undefined
  }

  // Time records of finished work in the last month: each step's metal is weighed out at its first start and back at its last end.
  const since = new Date(now.getTime() - HISTORY_DAYS * 86_400_000).toISOString()
  const records = await tx
    .select({ r: s.timeRecords, op: s.operations, bag: s.jobBags, order: s.orders, userId: s.people.userId })
    .from(s.timeRecords)
    .innerJoin(s.operations, eq(s.operations.id, s.timeRecords.operationId))
    .innerJoin(s.jobBags, eq(s.jobBags.id, s.operations.jobBagId))
    .innerJoin(s.orders, eq(s.orders.id, s.jobBags.orderId))
    .innerJoin(s.people, eq(s.people.id, s.timeRecords.personId))
    .where(and(eq(s.jobBags.workshopId, workshopId), isNotNull(s.timeRecords.endedAt), gte(s.timeRecords.startedAt, since)))
    .orderBy(asc(s.timeRecords.startedAt))
  const moments = records
    .map((x) => new Date(x.r.endedAt as unknown as string))
    .filter((d) => d <= now)
    .sort((a, b) => a.getTime() - b.getTime())
  /** A moment someone was at work, about `daysAgo` days before now. */
  const workMomentNear = (daysAgo: number) => moments.find((m) => m.getTime() >= now.getTime() - daysAgo * 86_400_000) ?? moments.at(-1) ?? now
  const iso = (d: Date | string) => new Date(d).toISOString()

  const rows: (typeof s.metalMovements.$inferInsert)[] = []
  const bought = workMomentNear(HISTORY_DAYS + 1)
  for (const a of alloys)
    rows.push({
      workshopId,
      alloyId: a.id,
      kind: 'bought',
      weightMg: BOUGHT_G[a.code]! * 1000,
      costMinor: BOUGHT_G[a.code]! * ALLOYS.find((x) => x.code === a.code)!.prices[0],
      recordedBy: manager!.id,
      recordedAt: iso(bought),
      reason: 'Monthly stock order',
    })

  // Steps per job bag (only bags whose whole metal work falls in the month, so each account starts with its first issue).
  const bags = new Map<
    number,
    {
      bag: typeof s.jobBags.$inferSelect
      order: typeof s.orders.$inferSelect
      steps: Map<number, { op: typeof s.operations.$inferSelect; personId: number; userId: number | null; start: string; end: string }>
    }
  >()
  for (const x of records) {
    if (!METAL_KINDS.has(kindCode.get(x.op.kindId) ?? '') || x.bag.status !== 'complete') continue
    const b = bags.get(x.bag.id) ?? bags.set(x.bag.id, { bag: x.bag, order: x.order, steps: new Map() }).get(x.bag.id)!
    const st = b.steps.get(x.op.id)
    if (!st) b.steps.set(x.op.id, { op: x.op, personId: x.r.personId, userId: x.userId, start: iso(x.r.startedAt), end: iso(x.r.endedAt!) })
    else if (iso(x.r.endedAt!) > st.end) st.end = iso(x.r.endedAt!)
  }
  const allFirst = await tx
    .select({ jobBagId: s.operations.jobBagId, started: s.timeRecords.startedAt })
    .from(s.timeRecords)
    .innerJoin(s.operations, eq(s.operations.id, s.timeRecords.operationId))
    .where(inArray(s.operations.jobBagId, [...bags.keys(), -1]))
  const startedBefore = new Set(allFirst.filter((r) => iso(r.started) < since).map((r) => r.jobBagId))

  const scrapOf: Record<string, number> = { forging: 0.04, sawing: 0.1, filing: 0.01, drilling: 0.005, setting: 0.003, soldering: 0, polishing: 0, etching: 0 }
  const lemelOf: Record<string, number> = {
    forging: 0,
    sawing: 0.01,
    filing: 0.025,
    drilling: 0.004,
    setting: 0.004,
    soldering: 0,
    polishing: 0.006,
    etching: 0,
  }
  for (const { bag, order, steps } of bags.values()) {
    if (startedBefore.has(bag.id)) continue
    const alloy = alloyFor((bag.params as { metal?: string }).metal ?? '')
    if (!alloy) continue
    const [lo, hi] = START_G[alloy.metal]!
    let pieceMg = Math.round((lo + rand() * (hi - lo)) * 1000)
    const oldGold = alloy.metal === 'gold' && rand() < 0.15
    const repair = bag.routingId !== null && repairRoutings.has(bag.routingId)
    const fromCustomer = oldGold || repair
    const ordered = [...steps.values()].sort((a, b) => a.op.seq - b.op.seq)
    const lastBack = { at: '', weightMg: 0 }
    ordered.forEach((st, i) => {
      const code = kindCode.get(st.op.kindId)!
      // The first step takes the sheet or wire with some to spare; later steps take the piece as it came back.
      const issued = i === 0 && !repair ? Math.round(pieceMg * 1.12) : pieceMg
      const tol = tolOf.get(st.op.kindId)!
      // Most steps lose about what their kind of work usually loses; now and then one goes well over its tolerance (a lost offcut, a bad sweep).
      const over = rand() < 0.06
      const lossMg = Math.round((issued * (over ? tol * (1.4 + rand() * 1.4) : (TYPICAL_LOSS_PCT[code] ?? 0) * (0.7 + rand() * 0.6))) / 100)
      const scrap = Math.round(issued * (i === 0 && !repair ? Math.max(0.1, scrapOf[code] ?? 0) : (scrapOf[code] ?? 0)) * (0.6 + rand() * 0.8))
      const lemel = Math.round(issued * (lemelOf[code] ?? 0) * (0.6 + rand() * 0.8))
      const piece = issued - lossMg - scrap - lemel
      if (piece <= 0) return
      const common = { workshopId, alloyId: alloy.id, jobBagId: bag.id, operationId: st.op.id, personId: st.personId, recordedBy: st.userId }
      rows.push({
        ...common,
        kind: 'issued',
        weightMg: issued,
        // The piece weighed out again for its next step is still what the bag was first weighed out as (the customer's, or stock).
        source: fromCustomer ? 'customer' : 'stock',
        recordedAt: st.start,
        reason: i === 0 && repair ? 'The customer’s piece, for repair' : i === 0 && fromCustomer ? 'Customer’s old gold, melted and rolled' : '',
      })
      rows.push({ ...common, kind: 'returned', form: 'piece', weightMg: piece, recordedAt: st.end })
      if (scrap > 0) rows.push({ ...common, kind: 'returned', form: 'scrap', weightMg: scrap, recordedAt: st.end })
      if (lemel > 0) rows.push({ ...common, kind: 'returned', form: 'lemel', weightMg: lemel, recordedAt: st.end })
      pieceMg = piece
      Object.assign(lastBack, { at: st.end, weightMg: piece })
    })
    // A collected order's piece, as last weighed back, left the workshop with the customer when it was collected; a finished
    // piece not collected yet is still in the workshop.
    if (lastBack.weightMg > 0 && order.status === 'collected')
      rows.push({
        workshopId,
        alloyId: alloy.id,
        kind: 'delivered',
        weightMg: lastBack.weightMg,
        jobBagId: bag.id,
        recordedBy: manager!.id,
        recordedAt: iso(order.updatedAt),
        reason: 'collected with its order',
      })
  }
  const inserted = await tx.insert(s.metalMovements).values(rows).returning()

  // One weighing corrected by the manager: the scale was not tared with the tray on it.
  const toCorrect = inserted.find((m) => m.kind === 'returned' && m.form === 'scrap' && m.weightMg > 800)
  if (toCorrect) {
    await tx.insert(s.metalMovements).values({
      ...withoutId(toCorrect),
      weightMg: -300,
      correctsId: toCorrect.id,
      reason: 'Weighed with the tray on; scale not tared',
      recordedBy: manager!.id,
      recordedAt: iso(new Date(new Date(toCorrect.recordedAt as unknown as string).getTime() + 5 * 60_000)),
    })
  }

  // Refining: the silver scrap and lemel of the first three weeks went in lot RL-0001, sent and settled; 9 ct scrap collects in RL-0002.
  const silver = alloys.find((a) => a.code === 'ag925')!
  const nine = alloys.find((a) => a.code === 'au375y')!
  const collectedBy = workMomentNear(14)
  const sentAt = workMomentNear(12)
  const settledAt = workMomentNear(4)
  const scrapOfAlloy = (alloyId: number, form: 'scrap' | 'lemel', before: Date) =>
    inserted
      .filter((m) => m.alloyId === alloyId && m.kind === 'returned' && m.form === form && new Date(m.recordedAt as unknown as string) < before)
      .reduce((t, m) => t + m.weightMg + (m.id === toCorrect?.id ? -300 : 0), 0)
  const agScrap = scrapOfAlloy(silver.id, 'scrap', collectedBy)
  const agLemel = scrapOfAlloy(silver.id, 'lemel', collectedBy)
  const fineSent = fineMg(agScrap, silver.fineness) + fineMg(agLemel, silver.fineness)
  // Scrap refines at about 98 %, lemel (with sweepings) lower: 95 % over the lot is a usual figure (common practice, no source).
  const credited = Math.round(fineSent * 0.95)
  const [lot1] = await tx
    .insert(s.refiningLots)
    .values({
      workshopId,
      number: 'RL-0001',
      status: 'settled',
      refiner: 'Severn Bullion Refiners',
      sentAt: iso(sentAt),
      settledAt: iso(settledAt),
      creditedFineMg: credited,
      creditedMinor: null,
      notes: 'Silver scrap and lemel; taken back as sterling casting grain',
      createdAt: collectedBy,
    })
    .returning()
  const grainMg = Math.floor((credited * 1000) / silver.fineness)
  const lotRows: (typeof s.metalMovements.$inferInsert)[] = []
  if (agScrap > 0)
    lotRows.push({
      workshopId,
      alloyId: silver.id,
      kind: 'to-refining',
      form: 'scrap',
      weightMg: agScrap,
      refiningLotId: lot1!.id,
      recordedBy: manager!.id,
      recordedAt: iso(collectedBy),
    })
  if (agLemel > 0)
    lotRows.push({
      workshopId,
      alloyId: silver.id,
      kind: 'to-refining',
      form: 'lemel',
      weightMg: agLemel,
      refiningLotId: lot1!.id,
      recordedBy: manager!.id,
      recordedAt: iso(collectedBy),
    })
  if (grainMg > 0)
    lotRows.push({
      workshopId,
      alloyId: silver.id,
      kind: 'from-refining',
      weightMg: grainMg,
      refiningLotId: lot1!.id,
      recordedBy: owner!.id,
      recordedAt: iso(settledAt),
      reason: 'Sterling casting grain from the credited fine silver',
    })
  const [lot2] = await tx
    .insert(s.refiningLots)
    .values({ workshopId, number: 'RL-0002', status: 'open', refiner: 'Severn Bullion Refiners', notes: '9 ct scrap', createdAt: workMomentNear(3) })
    .returning()
  const nineAt = workMomentNear(2)
  const nineScrap = scrapOfAlloy(nine.id, 'scrap', nineAt)
  if (nineScrap > 0)
    lotRows.push({
      workshopId,
      alloyId: nine.id,
      kind: 'to-refining',
      form: 'scrap',
      weightMg: nineScrap,
      refiningLotId: lot2!.id,
      recordedBy: manager!.id,
      recordedAt: iso(nineAt),
    })
  if (lotRows.length) await tx.insert(s.metalMovements).values(lotRows)
}

function withoutId<T extends { id: number; createdAt?: unknown; clientId?: unknown }>(m: T) {
  const { id: _id, createdAt: _c, clientId: _k, ...rest } = m
  return rest
}
