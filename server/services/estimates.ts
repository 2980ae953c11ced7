// Learning estimates from actual times: finished work with its actual minutes, robust fits per kind and step, people's speed, accepted suggestions.
import { and, asc, desc, eq, gte, inArray, isNotNull, lt } from 'drizzle-orm'
import {
  median,
  medianAbsoluteDeviation,
  quantile,
  ratioOfMedians,
  ratioBelieved,
  routingStepMinutes,
  sizeBandOf,
  SIZE_BANDS,
  theilSen,
  threePointEstimate,
  type Point,
} from '../../shared/domain/estimate'
import type { PieceParams } from '../../shared/schemas/order'
import type {
  AcceptSuggestionInput,
  History,
  InsightFilter,
  KindFigure,
  LearnedEstimates,
  PersonFigure,
  StepChange,
  StepSuggestion,
  ThreePointEstimate,
  ThreePointInput,
} from '../../shared/schemas/insights'
import type { EffectiveTimeRecord } from '../../shared/schemas/job-bag'
import type { Db, Tx } from '../db/client'
import {
  jobBags,
  operationKinds,
  operations,
  orders,
  people,
  personSkills,
  routings,
  routingStepChanges,
  routingSteps,
  users,
  workshops,
} from '../db/schema/index'
import { AppError, notFound } from '../errors/app-error'
import type { Actor, Deps } from '../lib/route'
import { dayjs } from '../lib/time'
import { audit } from './audit'
import { actualMinutesByOperation, effectiveRecords } from './time-records'

/** Whether a finished operation's actual ÷ estimate is inside the believed band (shared/domain/estimate.ts). */
const believed = (o: Pick<FinishedOperation, 'estimateMinutes' | 'actualMinutes'>): boolean => ratioBelieved(o.actualMinutes / o.estimateMinutes)
import { updateVersioned } from './versioned'

/** Fewer finished operations than this: no learned figure, a three-point estimate instead. */
export const MIN_HISTORY = 5

/** A finished bench operation with its actual minutes (time records after corrections). */
export interface FinishedOperation {
  id: number
  key: string
  name: string
  kindId: number
  kindCode: string
  kindName: string
  kindColor: string
  routingId: number | null
  routingName: string | null
  orderId: number
  orderNumber: string
  orderTitle: string
  customerId: number
  jobBagId: number
  jobBagNumber: string
  piece: string
  params: PieceParams
  estimateMinutes: number
  estimateSource: string
  plannedPersonId: number | null
  finishedAt: string
  /** Local month of finishing, YYYY-MM. */
  month: string
  actualMinutes: number
  /** The person who recorded most of the minutes. */
  personId: number
  personName: string
  /** The configured speed of that person for this kind (1 when none). */
  speed: number
  records: EffectiveTimeRecord[]
}

export async function workshopZone(db: Tx, workshopId: number): Promise<string> {
  const [w] = await db.select({ tz: workshops.timeZone }).from(workshops).where(eq(workshops.id, workshopId))
  return w?.tz ?? 'Europe/London'
}

/**
 * Actual minutes of operations: the bench floor's effective records (corrections applied, voided records count 0).
 * The one place actual minutes come from.
 */
export async function actualMinutes(db: Tx, operationIds: number[]): Promise<{ byOperation: Map<number, number>; records: EffectiveTimeRecord[] }> {
  const records = await effectiveRecords(db, operationIds)
  return { byOperation: actualMinutesByOperation(records), records }
}

/** Finished bench operations (not outside work) with actual time, finished in the filter's local date range. */
export async function finishedOperations(db: Db, workshopId: number, filter: InsightFilter = {}): Promise<FinishedOperation[]> {
  const tz = await workshopZone(db, workshopId)
  const where = [
    eq(jobBags.workshopId, workshopId),
    eq(operations.status, 'done'),
    isNotNull(operations.finishedAt),
    eq(operationKinds.outside, false),
    eq(operations.leadDays, 0),
  ]
  if (filter.from) where.push(gte(operations.finishedAt, dayjs.tz(`${filter.from} 00:00`, tz).toISOString()))
  if (filter.to) where.push(lt(operations.finishedAt, dayjs.tz(`${filter.to} 00:00`, tz).add(1, 'day').toISOString()))
  if (filter.routingId) where.push(eq(jobBags.routingId, filter.routingId))
  const rows = await db
    .select({ op: operations, bag: jobBags, kind: operationKinds, order: orders, routingName: routings.name })
    .from(operations)
    .innerJoin(jobBags, eq(jobBags.id, operations.jobBagId))
    .innerJoin(orders, eq(orders.id, jobBags.orderId))
    .innerJoin(operationKinds, eq(operationKinds.id, operations.kindId))
    .leftJoin(routings, eq(routings.id, jobBags.routingId))
    .where(and(...where))
    .orderBy(asc(operations.finishedAt), asc(operations.id))
  if (!rows.length) return []
  const { byOperation, records } = await actualMinutes(
    db,
    rows.map((r) => r.op.id),
  )
  const personIds = [...new Set(records.map((r) => r.personId))]
  const skills = personIds.length ? await db.select().from(personSkills).where(inArray(personSkills.personId, personIds)) : []
  const out: FinishedOperation[] = []
  for (const { op, bag, kind, order, routingName } of rows) {
    const actual = byOperation.get(op.id) ?? 0
    const mine = records.filter((r) => r.operationId === op.id)
    // Finished with time recorded, even none of it (started and finished in the same minute): its figures leave it out as
    // unbelievable and count it. Finished with no record at all, it has no one to name and no time: not listed.
    if (!mine.length || !(actual >= 0)) continue
    const byPerson = new Map<number, { minutes: number; name: string }>()
    for (const r of mine) {
      const p = byPerson.get(r.personId) ?? { minutes: 0, name: r.personName }
      p.minutes += r.minutes
      byPerson.set(r.personId, p)
    }
    const [personId, main] = [...byPerson.entries()].sort((a, b) => b[1].minutes - a[1].minutes || a[0] - b[0])[0]!
    const speed = skills.find((s) => s.personId === personId && s.kindId === op.kindId)?.speed ?? 1
    out.push({
      id: op.id,
      key: op.key,
      name: op.name,
      kindId: kind.id,
      kindCode: kind.code,
      kindName: kind.name,
      kindColor: kind.color,
      routingId: bag.routingId,
      routingName,
      orderId: order.id,
      orderNumber: order.number,
      orderTitle: order.title,
      customerId: order.customerId,
      jobBagId: bag.id,
      jobBagNumber: bag.number,
      piece: bag.piece,
      params: bag.params,
      estimateMinutes: op.estimateMinutes,
      estimateSource: op.estimateSource,
      plannedPersonId: op.plannedPersonId,
      finishedAt: new Date(op.finishedAt!).toISOString(),
      month: dayjs(op.finishedAt!).tz(tz).format('YYYY-MM'),
      actualMinutes: actual,
      personId,
      personName: main.name,
      speed: speed > 0 ? speed : 1,
      records: mine,
    })
  }
  return out
}

// ---------------------------------------------------------------------------------------------------------------
// Learning

const r2 = (n: number) => Math.round(n * 100) / 100
const r3 = (n: number) => Math.round(n * 1000) / 1000
const halfMinute = (n: number) => Math.round(n * 2) / 2

/**
 * n, date range and spread (quartiles and MAD of the given ratios) of the history behind a figure, and how many finished operations
 * of the same group were left out of it (actual ÷ estimate outside the believed band, as in every Insights table).
 */
export function historyOf(ops: readonly Pick<FinishedOperation, 'finishedAt'>[], ratios: readonly number[], leftOut = 0): History {
  const dates = ops.map((o) => o.finishedAt).sort()
  return {
    n: ops.length,
    leftOut,
    from: dates[0]?.slice(0, 10) ?? null,
    to: dates[dates.length - 1]?.slice(0, 10) ?? null,
    spread: ratios.length
      ? { q1: r3(quantile(ratios, 0.25)), median: r3(median(ratios)), q3: r3(quantile(ratios, 0.75)), mad: r3(medianAbsoluteDeviation(ratios)) }
      : null,
  }
}

/** Actual minutes of one unit at standard speed: what the routing's per-unit estimate should have been. */
const standardUnitMinutes = (o: FinishedOperation) => (o.actualMinutes * o.speed) / Math.max(1, o.params.quantity)

export interface StepFit {
  baseMinutes: number
  perStoneMinutes: number
  method: 'theil-sen' | 'ratio-of-medians'
  medianAbsResidual: number
}

/**
 * Fits one routing step from its history (points: stones → standard minutes per unit). Theil–Sen when the step counts
 * stones and the history has at least two stone counts, kept only if it fits clearly better (10 %) than scaling the
 * routing by the ratio of medians; otherwise the ratio of medians.
 */
export function fitStep(current: { baseMinutes: number; perStoneMinutes: number }, points: readonly Point[]): StepFit {
  const routingAt = (x: number) => current.baseMinutes + current.perStoneMinutes * x
  const k = ratioOfMedians(
    points.map((p) => p.y),
    points.map((p) => routingAt(p.x)),
  )
  const scale = Number.isFinite(k) ? k : 1
  const ratioFit = { baseMinutes: current.baseMinutes * scale, perStoneMinutes: current.perStoneMinutes * scale }
  const residual = (f: { baseMinutes: number; perStoneMinutes: number }) => median(points.map((p) => Math.abs(p.y - f.baseMinutes - f.perStoneMinutes * p.x)))
  const ratioResult: StepFit = { ...ratioFit, method: 'ratio-of-medians', medianAbsResidual: residual(ratioFit) }
  const distinctX = new Set(points.map((p) => p.x)).size
  if (current.perStoneMinutes > 0 && distinctX >= 2) {
    const line = theilSen(points)
    const ts = { baseMinutes: Math.max(0, line.intercept), perStoneMinutes: Math.max(0, line.slope) }
    const tsResult: StepFit = { ...ts, method: 'theil-sen', medianAbsResidual: residual(ts) }
    if (tsResult.medianAbsResidual < 0.9 * ratioResult.medianAbsResidual) return tsResult
  }
  return ratioResult
}

function kindFigure(
  kind: { id: number; code: string; name: string },
  ops: FinishedOperation[],
  stepsOf: (o: FinishedOperation) => { baseMinutes: number; perStoneMinutes: number } | null,
  leftOut = 0,
): KindFigure {
  const ratios = ops.map((o) => (o.actualMinutes * o.speed) / o.estimateMinutes).filter((x) => Number.isFinite(x) && x > 0)
  const est = ops.filter((o) => o.estimateMinutes > 0)
  const ratio = est.length
    ? ratioOfMedians(
        est.map((o) => o.actualMinutes * o.speed),
        est.map((o) => o.estimateMinutes),
      )
    : NaN
  // Stones: only steps that count stones per stone; y = standard minutes per unit above the step's base.
  const stoneOps = ops.flatMap((o) => {
    const s = stepsOf(o)
    return s && s.perStoneMinutes > 0 && o.params.stoneCount > 0 ? [{ o, x: o.params.stoneCount, y: standardUnitMinutes(o) - s.baseMinutes }] : []
  })
  let perStone: number | null = null
  let extra: number | null = null
  const sizeBands: KindFigure['sizeBands'] = []
  if (stoneOps.length >= MIN_HISTORY && new Set(stoneOps.map((p) => p.x)).size >= 2) {
    const line = theilSen(stoneOps)
    perStone = r2(line.slope)
    extra = r2(line.intercept)
    if (line.slope > 0) {
      for (const band of SIZE_BANDS) {
        const inBand = stoneOps.filter((p) => sizeBandOf(p.o.params.stoneSizeMm) === band)
        if (inBand.length >= MIN_HISTORY)
          sizeBands.push({ band, factor: r3(median(inBand.map((p) => (p.y - line.intercept) / (line.slope * p.x)))), n: inBand.length })
      }
    }
  }
  return {
    kindId: kind.id,
    code: kind.code,
    name: kind.name,
    method: perStone !== null ? 'theil-sen' : 'ratio-of-medians',
    ratio: Number.isFinite(ratio) ? r3(ratio) : null,
    perStoneMinutes: perStone,
    extraBaseMinutes: extra,
    sizeBands,
    history: historyOf(ops, ratios, leftOut),
  }
}

/** Everything learned from finished work: per kind, per person, and per routing step with suggestions. */
export async function learnEstimates(db: Db, workshopId: number, filter: InsightFilter = {}): Promise<LearnedEstimates> {
  // A record left running for days or started and finished within seconds teaches nothing about the work: learned figures rest
  // only on operations whose actual ÷ estimate is believed (as the promise check's and Insights' tables), and say how many were not.
  const all = await finishedOperations(db, workshopId, filter)
  const ops = all.filter(believed)
  const outOf = (keep: (o: FinishedOperation) => boolean) => all.filter((o) => keep(o) && !believed(o)).length
  const kinds = await db
    .select()
    .from(operationKinds)
    .where(and(eq(operationKinds.workshopId, workshopId), eq(operationKinds.outside, false)))
    .orderBy(asc(operationKinds.name))
  const ownRoutings = await db.select().from(routings).where(eq(routings.workshopId, workshopId)).orderBy(asc(routings.name))
  const steps = ownRoutings.length
    ? await db
        .select()
        .from(routingSteps)
        .where(
          inArray(
            routingSteps.routingId,
            ownRoutings.map((t) => t.id),
          ),
        )
        .orderBy(asc(routingSteps.seq))
    : []
  const stepOf = (o: FinishedOperation) => steps.find((s) => s.routingId === o.routingId && s.key === o.key) ?? null

  const kindFigures = kinds
    .map((k) =>
      kindFigure(
        k,
        ops.filter((o) => o.kindId === k.id),
        stepOf,
        outOf((o) => o.kindId === k.id),
      ),
    )
    .filter((k) => k.history.n + k.history.leftOut > 0)

  const staff = await db.select({ id: people.id, name: people.name }).from(people).where(eq(people.workshopId, workshopId)).orderBy(asc(people.name))
  const skills = staff.length
    ? await db
        .select()
        .from(personSkills)
        .where(
          inArray(
            personSkills.personId,
            staff.map((p) => p.id),
          ),
        )
    : []
  const personFigures: PersonFigure[] = staff.map((p) => {
    const mine = ops.filter((o) => o.personId === p.id && o.estimateMinutes > 0)
    const ratios = mine.map((o) => o.estimateMinutes / o.actualMinutes)
    const kindIds = [...new Set([...mine.map((o) => o.kindId), ...skills.filter((s) => s.personId === p.id).map((s) => s.kindId)])]
    return {
      personId: p.id,
      name: p.name,
      speed: ratios.length ? r3(median(ratios)) : null,
      history: historyOf(
        mine,
        ratios,
        outOf((o) => o.personId === p.id && o.estimateMinutes > 0),
      ),
      kinds: kindIds
        .map((kindId) => {
          const k = mine.filter((o) => o.kindId === kindId)
          return {
            kindId,
            kind: kinds.find((x) => x.id === kindId)?.name ?? '',
            n: k.length,
            learned: k.length ? r3(median(k.map((o) => o.estimateMinutes / o.actualMinutes))) : null,
            configured: skills.find((s) => s.personId === p.id && s.kindId === kindId)?.speed ?? null,
          }
        })
        .filter((k) => k.kind !== '')
        .sort((a, b) => b.n - a.n || a.kind.localeCompare(b.kind)),
    }
  })

  const suggestions: StepSuggestion[] = []
  for (const t of ownRoutings) {
    for (const s of steps.filter((x) => x.routingId === t.id && x.leadDays === 0)) {
      const kind = kinds.find((k) => k.id === s.kindId)
      if (!kind) continue
      const mine = ops.filter((o) => o.routingId === t.id && o.key === s.key)
      const points = mine.map((o) => ({ x: o.params.stoneCount, y: standardUnitMinutes(o) }))
      // Actual (at standard speed) against what the routing's whole step model gives for that job bag.
      const ratios = mine.map((o) => (o.actualMinutes * o.speed) / Math.max(0.1, routingStepMinutes(s, t, o.params)))
      const thin = mine.length < MIN_HISTORY
      // The fit below learns base and per-stone minutes only: a step that also counts the piece's size, stone size bands or a
      // learning curve would get a figure that leaves those out, so it is not offered one.
      const unfitted = s.perMmMinutes > 0 || Object.keys(s.sizeBandFactors ?? {}).length > 0 || t.learningRate !== null
      let suggested: StepSuggestion['suggested'] = null
      if (!thin && !unfitted) {
        const fit = fitStep(s, points)
        const next = { baseMinutes: halfMinute(fit.baseMinutes), perStoneMinutes: halfMinute(fit.perStoneMinutes * 2) / 2 }
        // Change at the typical stone count of the history.
        const x = median(points.map((p) => p.x))
        const before = s.baseMinutes + s.perStoneMinutes * x
        const after = next.baseMinutes + next.perStoneMinutes * x
        const changePct = before > 0 ? r2(((after - before) / before) * 100) : 0
        // Offered only when the middle half of the history sits on one side of the routing (not just noise) and the change is worth it.
        const q1 = quantile(ratios, 0.25)
        const q3 = quantile(ratios, 0.75)
        const oneSided = q1 > 1 || q3 < 1
        if (oneSided && Math.abs(changePct) >= 5 && (next.baseMinutes !== s.baseMinutes || next.perStoneMinutes !== s.perStoneMinutes)) {
          suggested = { ...next, method: fit.method, changePct }
        }
      }
      suggestions.push({
        routingId: t.id,
        routingName: t.name,
        routingVersion: t.version,
        stepKey: s.key,
        stepName: s.name,
        kindId: kind.id,
        kind: kind.name,
        current: { baseMinutes: s.baseMinutes, perStoneMinutes: s.perStoneMinutes },
        suggested,
        thin,
        unfitted: unfitted && !thin,
        history: historyOf(
          mine,
          ratios,
          outOf((o) => o.routingId === t.id && o.key === s.key),
        ),
      })
    }
  }
  return { asOf: new Date().toISOString(), kinds: kindFigures, people: personFigures, steps: suggestions }
}

// ---------------------------------------------------------------------------------------------------------------
// The owner accepts a suggestion into the routing

export async function acceptSuggestion({ db, realtime }: Deps, actor: Actor, input: AcceptSuggestionInput) {
  const learned = await learnEstimates(db, actor.workshopId)
  const basisOf = learned.steps.find((s) => s.routingId === input.routingId && s.stepKey === input.stepKey)
  const change = await db.transaction(async (tx) => {
    const [step] = await tx
      .select({ s: routingSteps })
      .from(routingSteps)
      .innerJoin(routings, eq(routings.id, routingSteps.routingId))
      .where(and(eq(routingSteps.routingId, input.routingId), eq(routingSteps.key, input.stepKey), eq(routings.workshopId, actor.workshopId)))
    if (!step) {
      const [t] = await tx
        .select({ id: routings.id })
        .from(routings)
        .where(and(eq(routings.id, input.routingId), eq(routings.workshopId, actor.workshopId)))
      throw t
        ? new AppError({ code: 'validation', message: `stepKey: no such step in this routing`, fields: { stepKey: 'is not a step of this routing' } })
        : notFound('Routing')
    }
    if (step.s.leadDays > 0)
      throw new AppError({ code: 'unprocessable', message: 'Outside work has lead days, not bench minutes', fields: { stepKey: 'is outside work' } })
    const t = await updateVersioned(tx, routings, 'Routing', {
      id: input.routingId,
      workshopId: actor.workshopId,
      version: input.routingVersion,
      values: {},
    })
    await tx.update(routingSteps).set({ baseMinutes: input.baseMinutes, perStoneMinutes: input.perStoneMinutes }).where(eq(routingSteps.id, step.s.id))
    const h = basisOf?.history
    const basis = {
      n: h?.n ?? 0,
      from: h?.from ?? null,
      to: h?.to ?? null,
      method: basisOf?.suggested?.method ?? 'owner',
      spread: h?.spread ? { ...h.spread } : {},
    }
    const [row] = await tx
      .insert(routingStepChanges)
      .values({
        workshopId: actor.workshopId,
        routingId: input.routingId,
        stepKey: input.stepKey,
        kindId: step.s.kindId,
        fromBaseMinutes: step.s.baseMinutes,
        fromPerStoneMinutes: step.s.perStoneMinutes,
        toBaseMinutes: input.baseMinutes,
        toPerStoneMinutes: input.perStoneMinutes,
        routingVersion: t.version,
        basis,
        reason: input.reason,
        acceptedBy: actor.userId,
      })
      .returning()
    await audit(tx, actor, 'accept-estimate', 'routing', input.routingId, {
      stepKey: input.stepKey,
      from: { baseMinutes: step.s.baseMinutes, perStoneMinutes: step.s.perStoneMinutes },
      to: { baseMinutes: input.baseMinutes, perStoneMinutes: input.perStoneMinutes },
      basis,
      reason: input.reason,
    })
    return { id: row!.id, version: t.version }
  })
  realtime.emit(actor.workshopId, 'masterdata:changed', { entity: 'routing', id: input.routingId, version: change.version })
  return (await listStepChanges(db, actor.workshopId)).find((c) => c.id === change.id)!
}

export async function listStepChanges(db: Db, workshopId: number): Promise<StepChange[]> {
  const rows = await db
    .select({ c: routingStepChanges, routingName: routings.name, stepName: routingSteps.name, kind: operationKinds.name, by: users.name })
    .from(routingStepChanges)
    .innerJoin(routings, eq(routings.id, routingStepChanges.routingId))
    .leftJoin(routingSteps, and(eq(routingSteps.routingId, routingStepChanges.routingId), eq(routingSteps.key, routingStepChanges.stepKey)))
    .innerJoin(operationKinds, eq(operationKinds.id, routingStepChanges.kindId))
    .innerJoin(users, eq(users.id, routingStepChanges.acceptedBy))
    .where(eq(routingStepChanges.workshopId, workshopId))
    .orderBy(desc(routingStepChanges.id))
  return rows.map(({ c, routingName, stepName, kind, by }) => ({
    id: c.id,
    routingId: c.routingId,
    routingName,
    stepKey: c.stepKey,
    stepName: stepName ?? c.stepKey,
    kind,
    from: { baseMinutes: c.fromBaseMinutes, perStoneMinutes: c.fromPerStoneMinutes },
    to: { baseMinutes: c.toBaseMinutes, perStoneMinutes: c.toPerStoneMinutes },
    routingVersion: c.routingVersion,
    basis: c.basis,
    reason: c.reason,
    acceptedBy: by,
    at: new Date(c.createdAt).toISOString(),
  }))
}

/** PERT figure for a step with thin history (the caller enters optimistic / most likely / pessimistic minutes). */
export function threePoint(input: ThreePointInput): ThreePointEstimate {
  return threePointEstimate(input)
}
