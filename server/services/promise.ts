// Promise dates for sales: the earliest completion of a prospective piece on the live plan (and re-planned), its
// confidence range, and turning it into an order with the promised date (an existing order's forecast: order-forecast.ts).
import { cachedOr } from '../lib/cache'
import { and, asc, eq } from 'drizzle-orm'
import { quantileSorted } from 'simple-statistics'
import type { PromiseAcceptInput, PromiseCheckInput, PromiseCheckResult } from '../../shared/schemas/promise'
import type { OrderInput } from '../../shared/schemas/order'
import { routingStepMinutes } from '../../shared/domain/estimate'
import * as s from '../db/schema/index'
import { AppError, invalid } from '../errors/app-error'
import type { Actor, Deps } from '../lib/route'
import { dayjs, formatDayWithYear } from '../lib/time'
import { clipToWindows, jointWindows } from '../scheduler/calendar.ts'
import { checkProblem, promise, solve, type Job, type Operation, type Plan, type PlannedOperation, type Problem } from '../scheduler/index.ts'
import { compile, decode, toPlan } from '../scheduler/decode.ts'
import { topologicalOrder } from '../scheduler/search.ts'
import type { Db, Trx } from '../db/client'
import { audit } from './audit'
import { sendPromiseConfirmation } from './mail'
import { getOrder, refusePastDates, takeOrder } from './orders'
import { engineId, type Assignments } from '../planning/assignments'
import { bookPromise, readLivePlan, type Booking } from '../planning/live-plan'
import { loadPlanningData, localTime, operationOptions, weightOfPriority, type PlanningData } from '../planning/problem'
import { planningError } from '../planning/runs'
import { ASSUMPTION, DEFAULT_RUNS, kindSpreads, simulateCompletions, type KindSpread } from './promise-range'

/** Search budget of the "everything re-planned" answer; the fixed answer is one decode. */
export const REPLAN_MS = 80
const QUICK_PLAN_MS = 120
const CACHE_MS = 5 * 60_000
export const PROSPECTIVE_JOB = 'prospective'

// Per workshop, in the app's cache: the quick plan used when nothing is published, the duration spreads, the planning
// data and the answers. Dropped on any change in the workshop (on any instance), and after CACHE_MS.
function cached<T>(deps: Deps, workshopId: number, key: string, load: () => Promise<T> | T, replace = false): Promise<T> {
  return cachedOr(deps.cache, workshopId, key, load, { ttlMs: CACHE_MS, verify: true, replace })
}

const local = localTime

/** The live plan (operations' planned fields) as an engine plan; assignments that no longer fit the calendars are left free. */
export function planFromAssignments(data: PlanningData, live: Assignments): Plan {
  const c = data.clock
  const p = data.problem
  const engineOps = new Map(p.operations.map((o) => [o.id, o]))
  const joint = jointWindows(p)
  const operations: PlannedOperation[] = []
  for (const a of live.values()) {
    const id = String(a.operationId)
    const op = engineOps.get(id)
    if (!op || op.done) continue
    const start = c.toMinute(a.start),
      end = Math.max(start, c.toMinute(a.end))
    const outside = !!op.outsideWorkingDays
    let segments = [{ start, end }]
    if (!outside) {
      const w = joint.both(a.benchId ? String(a.benchId) : null, a.personId ? String(a.personId) : null)
      if (!w) continue
      if (!w.some((x) => x.start <= start && start < x.end)) continue
      segments = clipToWindows(w, start, end)
    }
    operations.push({
      operationId: id,
      jobId: op.jobId,
      benchId: outside ? null : engineId(a.benchId),
      personId: outside ? null : engineId(a.personId),
      start,
      end,
      segments,
      reason: { kind: 'fixed', detail: 'on the live plan' },
    })
  }
  const jobs = p.jobs.map((j) => {
    const completion = operations.filter((o) => o.jobId === j.id).reduce((m, o) => Math.max(m, o.end), p.now)
    const lateness = j.due === null ? 0 : completion - j.due
    return { jobId: j.id, completion, lateness, tardiness: Math.max(0, lateness) }
  })
  const weight = new Map(p.jobs.map((j) => [j.id, j.weight]))
  return {
    operations,
    jobs,
    score: {
      weightedTardiness: jobs.reduce((t, j) => t + j.tardiness * (weight.get(j.jobId) ?? 1), 0),
      makespan: operations.reduce((m, o) => Math.max(m, o.end), p.now),
      moves: 0,
      feasible: true,
      violations: [],
    },
    stats: { iterations: 0, elapsedMs: 0, firstPlanMs: 0 },
  }
}

/** The plan a promise is measured against: the live plan, or a quick plan of the open work when nothing is planned. */
async function basePlan(deps: Deps, workshopId: number, data: PlanningData) {
  const plan = planFromAssignments(data, (await readLivePlan(deps.db, workshopId)).assignments)
  if (plan.operations.length > 0) return { plan, basis: 'live-plan' as const, basisNote: 'Measured against the live plan; current work keeps its times.' }
  const quick = data.problem.operations.some((o) => !o.done)
    ? await cached(deps, workshopId, 'quick-plan', () => {
        try {
          return solve(data.problem, { seed: 1, timeLimitMs: QUICK_PLAN_MS })
        } catch (err) {
          throw planningError(err, data)
        }
      })
    : plan
  // Only operations still open in this problem (the cached plan may be a few minutes old).
  const ids = new Set(data.problem.operations.filter((o) => !o.done).map((o) => o.id))
  const kept = { ...quick, operations: quick.operations.filter((o) => ids.has(o.operationId) && o.start >= data.problem.now) }
  return { plan: kept, basis: 'quick-plan' as const, basisNote: 'No plan is published yet: measured against a quick plan of the open work.' }
}

/** The prospective job bag from a routing: operations with estimates and the bench × person options. */
async function prospectiveJob(
  deps: Deps,
  workshopId: number,
  data: PlanningData,
  input: Pick<PromiseCheckInput, 'routingId' | 'params' | 'priority' | 'wantedDate'>,
) {
  const [t] = await deps.db
    .select()
    .from(s.routings)
    .where(and(eq(s.routings.id, input.routingId), eq(s.routings.workshopId, workshopId)))
  if (!t) throw invalid('routingId', 'is not a routing of this workshop')
  const steps = await deps.db.select().from(s.routingSteps).where(eq(s.routingSteps.routingId, t.id)).orderBy(asc(s.routingSteps.seq))
  if (!steps.length) throw invalid('routingId', 'has no steps')
  const idOf = (key: string) => `${PROSPECTIVE_JOB}:${key}`
  const keys = new Set(steps.map((x) => x.key))
  const summary: PromiseCheckResult['operations'] = []
  const operations: Operation[] = steps.map((st) => {
    const kind = data.meta.kinds.get(st.kindId)!
    const outside = kind.outside || st.leadDays > 0
    const minutes = outside ? 0 : routingStepMinutes(st, t, input.params)
    summary.push({ key: st.key, name: st.name, kind: kind.code, minutes, outsideDays: outside ? Math.max(1, st.leadDays) : 0 })
    const base: Operation = {
      id: idOf(st.key),
      jobId: PROSPECTIVE_JOB,
      name: st.name,
      kind: kind.code,
      options: [],
      predecessors: st.after.filter((k) => keys.has(k)).map(idOf),
      ...(st.waitAfterMinutes > 0 ? { waitAfter: st.waitAfterMinutes } : {}),
    }
    if (outside) return { ...base, outsideWorkingDays: Math.max(1, st.leadDays) }
    return { ...base, options: operationOptions(data.meta, st.kindId, st.requiredLevel, (speed) => Math.max(1, Math.ceil(minutes / speed))) }
  })
  const c = data.clock
  // Without a wanted date the re-plan still treats it as wanted now, weighed by its priority against the other work.
  const due = input.wantedDate ? c.at(dayjs(input.wantedDate).add(1, 'day').format('YYYY-MM-DD')) : data.problem.now
  const job: Job = { id: PROSPECTIVE_JOB, name: `Enquiry: ${t.name}`, release: data.problem.now, due, weight: weightOfPriority(input.priority) }
  return { routing: t, job, operations, summary }
}

/**
 * The workshop's planning data, reused for up to a minute between promise checks (any change event in the workshop drops
 * it): sales try several variants in a row, and loading is most of the cost. `now` is moved to the current minute.
 */
async function planningData(deps: Deps, workshopId: number, now: Date): Promise<PlanningData> {
  const key = 'planning-data'
  const hit = await cached(deps, workshopId, key, async () => ({ at: Date.now(), data: await loadPlanningData(deps.db, workshopId, now) }))
  const nowMin = hit.data.clock.toMinute(now)
  if (Date.now() - hit.at > 60_000 || nowMin < hit.data.problem.now || nowMin >= hit.data.problem.horizon - 7 * 1440) {
    const fresh = { at: Date.now(), data: await loadPlanningData(deps.db, workshopId, now) }
    await cached(deps, workshopId, key, () => fresh, true)
    return fresh.data
  }
  return { ...hit.data, problem: { ...hit.data.problem, now: nowMin } }
}

/**
 * The same question about the same workshop state gets the same answer: repeated checks (and identical checks arriving
 * together) share one computation until the workshop changes or the minute turns.
 */
const inFlight = new Map<string, Promise<PromiseCheckResult>>()
export async function checkPromise(deps: Deps, actor: Actor, input: PromiseCheckInput, now = new Date()): Promise<PromiseCheckResult> {
  const key = `answer|${Math.floor(now.getTime() / 60_000)}|${JSON.stringify(input)}`
  const running = inFlight.get(`${actor.workshopId}|${key}`)
  if (running) return running
  const work = cached(deps, actor.workshopId, key, () => computePromise(deps, actor, input, now)).finally(() => inFlight.delete(`${actor.workshopId}|${key}`))
  inFlight.set(`${actor.workshopId}|${key}`, work)
  return work
}

async function computePromise(deps: Deps, actor: Actor, input: PromiseCheckInput, now: Date): Promise<PromiseCheckResult> {
  const t0 = performance.now()
  const data = await planningData(deps, actor.workshopId, now)
  const [pj, base] = await Promise.all([prospectiveJob(deps, actor.workshopId, data, input), basePlan(deps, actor.workshopId, data)])
  let result
  try {
    result = promise(data.problem, base.plan, { job: pj.job, operations: pj.operations }, { seed: input.seed, timeLimitMs: REPLAN_MS })
  } catch (err) {
    throw planningError(err, data)
  }
  const before = new Map(base.plan.jobs.map((j) => [j.jobId, j.tardiness]))
  const delayed = result.withReplan.plan.jobs.filter((j) => j.jobId !== PROSPECTIVE_JOB && j.tardiness > (before.get(j.jobId) ?? 0)).length
  const fixedPlan = { ...local(data, result.withPlanFixed.completion), feasible: result.withPlanFixed.feasible }
  const replanned = { ...local(data, result.withReplan.completion), delayedJobBags: delayed }

  let range: PromiseCheckResult['range'] = null
  if (input.range) {
    const spreads = await cached(deps, actor.workshopId, 'spreads', () => kindSpreads(deps.db, actor.workshopId))
    range = confidenceRange(data, base.plan, pj.operations, spreads, input.runs ?? DEFAULT_RUNS, input.seed, input.sample)
  }
  return {
    now: now.toISOString(),
    timeZone: data.clock.timeZone,
    basis: base.basis,
    basisNote: base.basisNote,
    routing: { id: pj.routing.id, name: pj.routing.name },
    operations: pj.summary,
    fixedPlan,
    replanned,
    wanted: input.wantedDate
      ? { date: input.wantedDate, fixedPlanMeets: fixedPlan.date <= input.wantedDate, replannedMeets: replanned.date <= input.wantedDate }
      : null,
    range,
    elapsedMs: Math.round(performance.now() - t0),
  }
}

function confidenceRange(
  data: PlanningData,
  plan: Plan,
  operations: Operation[],
  spreads: Map<string, KindSpread>,
  runs: number,
  seed: number,
  withSample: boolean,
): NonNullable<PromiseCheckResult['range']> {
  const now = data.problem.now
  const sample = simulateCompletions({ problem: data.problem, plan, operations, spreads, runs, seed }).map((m) => m - now)
  const sorted = [...sample].sort((a, b) => a - b)
  const q = { p50: quantileSorted(sorted, 0.5), p80: quantileSorted(sorted, 0.8), p95: quantileSorted(sorted, 0.95) }
  const at = (m: number) => local(data, now + Math.round(m))
  const used = new Set(operations.map((o) => o.kind))
  return {
    runs,
    seed,
    method:
      'The current plan stays as it is; the new job bag is walked through its gaps in each run with every duration drawn — bench work in minutes, outside work in working days — from how long each kind of work really took against its estimate.',
    assumption: ASSUMPTION,
    p50: at(q.p50),
    p80: at(q.p80),
    p95: at(q.p95),
    quantileMinutes: q,
    kinds: [...spreads.values()]
      .filter((k) => used.has(k.kind))
      .map(({ ratios: _r, ...k }) => ({ ...k, p10: round2(k.p10), p50: round2(k.p50), p90: round2(k.p90) })),
    ...(withSample ? { sampleMinutes: sample } : {}),
  }
}
const round2 = (n: number) => Math.round(n * 100) / 100

/** Where a promise finds room now: the prospective job decoded into the gaps of the live plan, nothing else moving. */
export function placeInGaps(problem: Problem, live: Plan, job: Job, operations: Operation[]) {
  const planned = new Map(live.operations.map((p) => [p.operationId, p]))
  const pinned = problem.operations.map((op) => {
    const p = planned.get(op.id)
    return op.done || !p ? op : { ...op, fixed: { benchId: p.benchId, personId: p.personId, start: p.start, end: p.end } }
  })
  const fixedProblem: Problem = { ...problem, jobs: [...problem.jobs, job], operations: [...pinned, ...operations] }
  checkProblem(fixedProblem)
  const c = compile(fixedProblem)
  const key = new Float64Array(c.n)
  topologicalOrder(c).forEach((i, rank) => {
    key[i] = rank
  })
  const d = decode(c, key, new Int32Array(c.n).fill(-1))
  const ids = new Set(operations.map((o) => o.id))
  const feasible = d.overflow < 0 || !ids.has(c.ops[d.overflow]!.id)
  const steps = toPlan(c, d, { iterations: 0, elapsedMs: 0, firstPlanMs: 0 }).operations.filter((o) => ids.has(o.operationId))
  return { feasible, steps, completion: steps.reduce((m, o) => Math.max(m, o.end), problem.now) }
}

export type { Booking }

/** The planned steps of the new job bag, checked free and written inside the order's transaction (the planning module's booking); or why not. */
export function bookSlot(tx: Trx, actor: Actor, data: PlanningData, orderId: number, placed: ReturnType<typeof placeInGaps>): Promise<Booking> {
  const prefix = `${PROSPECTIVE_JOB}:`
  const steps = placed.steps.map((st) => ({
    key: st.operationId.slice(prefix.length),
    benchId: st.benchId,
    personId: st.personId,
    start: st.start,
    end: st.end,
    segments: st.segments,
  }))
  return bookPromise(tx, actor, { data, orderId, steps, completion: placed.completion })
}

/** Where an order's piece finds room in the live plan now, for `bookSlot` in the order's transaction; or why it is not booked. */
export type Room = { data: PlanningData; placed: ReturnType<typeof placeInGaps> } | { reason: string }

/**
 * Where the piece of an order about to be taken finds room in the live plan now (the promise's fixed answer: the gaps, nothing
 * else moving), ending by the order's promised date (by its due date when nothing was promised). Fresh data, not the promise
 * cache: the booking must be against the plan as it is now. A routing the plan cannot place still makes an order; it is only
 * not booked.
 */
export async function roomFor(deps: Deps, actor: Actor, order: OrderInput, now: Date): Promise<Room> {
  const piece = order.pieces[0]
  if (!piece) return { reason: 'it has no piece made from a routing' }
  const data = await loadPlanningData(deps.db, actor.workshopId, now)
  const live = planFromAssignments(data, (await readLivePlan(deps.db, actor.workshopId)).assignments)
  if (!live.operations.length) return { reason: 'no plan is published yet; the manager plans it with the first plan' }
  const pj = await prospectiveJob(deps, actor.workshopId, data, { routingId: piece.routingId, params: piece.params, priority: order.priority })
  let placed: ReturnType<typeof placeInGaps>
  try {
    placed = placeInGaps(data.problem, live, pj.job, pj.operations)
  } catch (err) {
    const e = planningError(err, data)
    if (!(e instanceof AppError)) throw e
    return { reason: `the plan cannot place it (${e.message})` }
  }
  if (!placed.feasible) return { reason: 'there is no room for it before the end of the calendar' }
  const ends = local(data, placed.completion).date
  if (ends > (order.promisedDate ?? order.dueDate))
    return {
      reason: `the room found now ends ${formatDayWithYear(ends)}, after the ${order.promisedDate ? 'promised' : 'due'} date; the manager plans it at the next re-plan`,
    }
  return { data, placed }
}

/**
 * Creates the order with the promised date (one job bag from the routing), books its steps into the live plan where the
 * promise finds room (nothing else moves; checked again inside the order's transaction), then sends the confirmation,
 * which says the piece is booked only when it is. Why it is not booked is kept in the audit, where the order's forecast reads it.
 */
export async function acceptPromise(deps: Deps, actor: Actor, input: PromiseAcceptInput, now = new Date()) {
  const [t] = await deps.db
    .select({ name: s.routings.name })
    .from(s.routings)
    .where(and(eq(s.routings.id, input.routingId), eq(s.routings.workshopId, actor.workshopId)))
  if (!t) throw invalid('routingId', 'is not a routing of this workshop')
  if (input.dueDate && input.dueDate < input.promisedDate) throw invalid('dueDate', 'must not be before the promised date')
  await refusePastDates(deps.db, actor.workshopId, { dueDate: input.dueDate, promisedDate: input.promisedDate })
  const orderInput: OrderInput = {
    customerId: input.customerId,
    title: input.title,
    dueDate: input.dueDate ?? input.promisedDate,
    promisedDate: input.promisedDate,
    priority: input.priority,
    priceQuotedMinor: input.priceQuotedMinor,
    notes: input.notes,
    pieces: [{ routingId: input.routingId, piece: input.piece ?? input.title, params: input.params }],
  }
  const room = await roomFor(deps, actor, orderInput, now)
  const { order, extra: taken } = await takeOrder(deps, actor, orderInput, async (tx, orderId) => {
    const booking: Booking = 'reason' in room ? { booked: false, reason: room.reason } : await bookSlot(tx, actor, room.data, orderId, room.placed)
    if (!booking.booked) await audit(tx, actor, 'not-booked', 'order', orderId, { reason: booking.reason })
    // With the job queue the confirmation is queued in the order's transaction: no order without its e-mail, nor the reverse.
    return { booking, queued: deps.jobs ? await sendPromiseConfirmation({ ...deps, db: tx as unknown as Db }, actor.workshopId, orderId, booking) : null }
  })
  const { booking } = taken
  const firstOp = order.jobBags[0]?.operations[0]
  if (booking.booked && firstOp) deps.realtime.emit(actor.workshopId, 'plan:changed', { id: firstOp.id, operationId: firstOp.id })
  const confirmation = taken.queued ?? (await sendPromiseConfirmation(deps, actor.workshopId, order.id, booking))
  return { order: booking.booked ? await getOrder(deps.db, actor.workshopId, order.id) : order, booking, confirmation }
}
