// Work at the bench: what is next for me, my work, and claim / start / pause / resume / finish — each replay-safe and pushed live.
import { and, asc, desc, eq, gt, inArray, isNull, ne, sql } from 'drizzle-orm'
import { alias } from 'drizzle-orm/pg-core'
import { STAFF } from '../../shared/domain/roles'
import { HELD_OPERATION, canMoveOperation, cautionsFor, type OperationStatus } from '../../shared/domain/status'
import * as rules from '../../shared/domain/rules'
import type { RuleViolation, StepRef } from '../../shared/domain/rules'
import type {
  BenchList,
  BenchOperation,
  BenchStones,
  ClaimInput,
  FinishInput,
  OutsideInput,
  PauseInput,
  ReleaseInput,
  StartInput,
  TransitionResult,
} from '../../shared/schemas/bench-floor'
import { stonesToSet } from '../../shared/domain/stones'
import { worksOnCustomersPiece } from '../../shared/domain/metal'
import type { Db, Trx, Tx } from '../db/client'
import {
  benchCapabilities,
  benchRequests,
  benches,
  jobBags,
  jobBagStones,
  operationKinds,
  operations,
  orders,
  people,
  personSkills,
  routingSteps,
  timeRecords,
} from '../db/schema/index'
import { AppError, notFound } from '../errors/app-error'
import type { Actor, Deps } from '../lib/route'
import { audit } from './audit'
import { depositHolds, heldForDeposit } from './deposit-hold'
import { lockJobBag, refreshReadiness, syncJobBagStatus, type BagChange } from './job-bag-state'
import { requirePauseReason } from './pause-reasons'
import { closeRecord, effectiveRecords, actualMinutesByOperation, openRecord } from './time-records'
import { LOCK } from '../lib/locks'
import { claimOnPlan, lockLivePlan } from '../planning/live-plan'

const claimer = alias(people, 'claimer')
const opFields = {
  id: operations.id,
  version: operations.version,
  status: operations.status,
  key: operations.key,
  name: operations.name,
  seq: operations.seq,
  kindId: operations.kindId,
  kindCode: operationKinds.code,
  kindName: operationKinds.name,
  hazards: operationKinds.hazards,
  outside: operationKinds.outside,
  requiredLevel: operations.requiredLevel,
  estimateMinutes: operations.estimateMinutes,
  estimateSource: operations.estimateSource,
  plannedStart: operations.plannedStart,
  claimedBy: operations.claimedBy,
  claimedByName: claimer.name,
  jobBagId: operations.jobBagId,
  jobBagNumber: jobBags.number,
  jobBagStatus: jobBags.status,
  piece: jobBags.piece,
  orderNumber: orders.number,
  dueDate: orders.dueDate,
  priority: orders.priority,
  after: operations.after,
  params: jobBags.params,
  routingId: jobBags.routingId,
  routingKind: jobBags.routingKind,
}
const baseQuery = (tx: Tx) =>
  tx
    .select(opFields)
    .from(operations)
    .innerJoin(jobBags, eq(jobBags.id, operations.jobBagId))
    .innerJoin(orders, eq(orders.id, jobBags.orderId))
    .innerJoin(operationKinds, eq(operationKinds.id, operations.kindId))
    .leftJoin(claimer, eq(claimer.id, operations.claimedBy))
type OpRow = Awaited<ReturnType<ReturnType<typeof baseQuery>['where']>>[number]

/** Rows → what the bench shows, with actual minutes and the open record's start. */
export async function toBenchOperations(tx: Tx, rows: OpRow[]): Promise<BenchOperation[]> {
  const records = await effectiveRecords(
    tx,
    rows.map((r) => r.id),
  )
  const actual = actualMinutesByOperation(records)
  const stones = await stonesByBag(tx, rows)
  const counting = await countingStones(tx, rows)
  return rows.map((r) => ({
    id: r.id,
    version: r.version,
    status: r.status,
    key: r.key,
    name: r.name,
    seq: r.seq,
    kindId: r.kindId,
    kindCode: r.kindCode,
    kindName: r.kindName,
    hazards: r.hazards,
    cautions: cautionsFor(r.hazards),
    requiredLevel: r.requiredLevel,
    estimateMinutes: r.estimateMinutes,
    estimateSource: r.estimateSource,
    estimateCountsStones: counting.has(r.id),
    actualMinutes: actual.get(r.id) ?? 0,
    runningSince: records.find((x) => x.operationId === r.id && !x.endedAt && !x.voided)?.startedAt ?? null,
    plannedStart: r.plannedStart ? new Date(r.plannedStart).toISOString() : null,
    claimedBy: r.claimedBy,
    claimedByName: r.claimedByName ?? null,
    jobBagId: r.jobBagId,
    jobBagNumber: r.jobBagNumber,
    piece: r.piece,
    orderNumber: r.orderNumber,
    dueDate: r.dueDate,
    priority: r.priority,
    stones: stones.get(r.jobBagId)!,
    metal: r.params?.metal ?? null,
    customerPiece: worksOnCustomersPiece({ kind: r.routingKind }, r.params),
  }))
}

/** The stones to set for each job bag, counted by the setting estimate's rule (its stone list, else its piece figures). */
async function stonesByBag(tx: Tx, rows: Pick<OpRow, 'jobBagId' | 'params'>[]): Promise<Map<number, BenchStones>> {
  const ids = [...new Set(rows.map((r) => r.jobBagId))]
  const lines = ids.length
    ? await tx
        .select({ jobBagId: jobBagStones.jobBagId, sizeMm: jobBagStones.sizeMm, count: jobBagStones.count })
        .from(jobBagStones)
        .where(inArray(jobBagStones.jobBagId, ids))
    : []
  return new Map(
    rows.map((r) => [
      r.jobBagId,
      stonesToSet(
        r.params,
        lines.filter((l) => l.jobBagId === r.jobBagId),
      ),
    ]),
  )
}

/** Operations whose planned minutes count stones: their routing step has minutes per stone and no lead days (as recomputeStoneSteps). */
async function countingStones(tx: Tx, rows: Pick<OpRow, 'id' | 'key' | 'routingId'>[]): Promise<Set<number>> {
  const routingIds = [...new Set(rows.map((r) => r.routingId).filter((x): x is number => x !== null))]
  if (!routingIds.length) return new Set()
  const steps = await tx
    .select({ routingId: routingSteps.routingId, key: routingSteps.key })
    .from(routingSteps)
    .where(and(inArray(routingSteps.routingId, routingIds), gt(routingSteps.perStoneMinutes, 0), eq(routingSteps.leadDays, 0)))
  return new Set(rows.filter((r) => steps.some((st) => st.routingId === r.routingId && st.key === r.key)).map((r) => r.id))
}

/** The bench-facing rows of some operations. */
export const benchRowsById = (tx: Tx, ids: number[]) => baseQuery(tx).where(inArray(operations.id, ids))

export async function benchOperation(tx: Tx, workshopId: number, id: number): Promise<BenchOperation> {
  const rows = await baseQuery(tx).where(and(eq(operations.id, id), eq(jobBags.workshopId, workshopId)))
  if (!rows[0]) throw notFound('Operation')
  return (await toBenchOperations(tx, rows))[0]!
}

interface Person {
  id: number
  name: string
}

/** The person the actor works for: themselves, or (owner/manager only) the person they name. */
async function personFor(tx: Tx, actor: Actor, personId: number | undefined): Promise<Person | null> {
  if (personId !== undefined && personId !== actor.personId) {
    if (!STAFF.includes(actor.role))
      throw new AppError({ code: 'forbidden', message: 'At the bench you act for yourself only; a manager can act on behalf of someone else' })
    const [p] = await tx
      .select({ id: people.id, name: people.name, active: people.active })
      .from(people)
      .where(and(eq(people.id, personId), eq(people.workshopId, actor.workshopId)))
    if (!p)
      throw new AppError({
        code: 'validation',
        message: 'personId: is not a person of this workshop',
        fields: { personId: 'is not a person of this workshop' },
      })
    if (!p.active) throw new AppError({ code: 'unprocessable', message: `${p.name} is switched off and cannot take work` })
    return p
  }
  if (actor.personId === null) return null
  const [p] = await tx.select({ id: people.id, name: people.name }).from(people).where(eq(people.id, actor.personId))
  return p ?? null
}
const notLinked = () =>
  new AppError({
    code: 'unprocessable',
    message: 'Your account is not linked to a person at a bench; ask the owner to link it, or name the person you act for',
  })

async function requirePerson(tx: Tx, actor: Actor, personId: number | undefined) {
  const p = await personFor(tx, actor, personId)
  if (!p) throw notLinked()
  return p
}

async function requireBench(tx: Tx, workshopId: number, benchId: number, kindId: number, kindName: string, step: StepRef) {
  const [b] = await tx
    .select({ id: benches.id, name: benches.name, active: benches.active })
    .from(benches)
    .where(and(eq(benches.id, benchId), eq(benches.workshopId, workshopId)))
  if (!b)
    throw new AppError({ code: 'validation', message: 'benchId: is not a bench of this workshop', fields: { benchId: 'is not a bench of this workshop' } })
  if (!b.active) throw new AppError({ code: 'unprocessable', message: `${b.name} is switched off`, fields: { benchId: 'is switched off' } })
  const [cap] = await tx
    .select()
    .from(benchCapabilities)
    .where(and(eq(benchCapabilities.benchId, benchId), eq(benchCapabilities.kindId, kindId)))
  const v = rules.benchCapability(step, { benchName: b.name, kindName, capable: !!cap })
  if (v)
    throw new AppError({
      code: 'unprocessable',
      message: `${v.message} Take it at a bench that is.`,
      fields: { benchId: `cannot do ${kindName}` },
      details: { rule: v.rule },
    })
  return b
}

const label = (op: Pick<OpRow, 'name' | 'jobBagNumber'>) => `“${op.name}” (job bag ${op.jobBagNumber})`
const stepOf = (op: Pick<OpRow, 'id' | 'jobBagId' | 'name' | 'jobBagNumber'>): StepRef => ({
  operationId: op.id,
  jobId: op.jobBagId,
  name: op.name,
  bag: `job bag ${op.jobBagNumber}`,
})
/** A rule book finding as the tablet's refusal (422), with the facts the tablet shows beside it. */
const ruleError = (v: RuleViolation, details: Record<string, unknown>) =>
  new AppError({ code: 'unprocessable', message: v.message, details: { rule: v.rule, ...details } })

function refuseMove(op: OpRow, to: OperationStatus, person: Person | null): never {
  const held = (HELD_OPERATION as readonly string[]).includes(op.status)
  if (to === 'claimed' && held) {
    const who = op.claimedBy === person?.id ? 'you' : (op.claimedByName ?? 'someone else')
    throw new AppError({
      code: 'conflict',
      message: `${label(op)} has been taken already by ${who}`,
      details: { claimedBy: op.claimedBy, claimedByName: op.claimedByName, status: op.status },
    })
  }
  if (op.status === 'done' || op.status === 'skipped')
    throw new AppError({
      code: 'conflict',
      message: `${label(op)} is ${op.status === 'done' ? 'finished' : 'removed from the routing'} already`,
      details: { status: op.status },
    })
  const need: Partial<Record<OperationStatus, string>> = { running: 'claimed (or paused)', paused: 'running', done: 'running or paused', ready: 'claimed' }
  throw new AppError({
    code: 'conflict',
    message: `${label(op)} is ${op.status}; it must be ${need[to] ?? 'ready'} to do this`,
    details: { status: op.status },
  })
}

async function pendingReason(tx: Tx, op: OpRow) {
  const preds = op.after.length
    ? await tx
        .select({ key: operations.key, name: operations.name, status: operations.status })
        .from(operations)
        .where(and(eq(operations.jobBagId, op.jobBagId), inArray(operations.key, op.after)))
    : []
  const open = preds.filter((p) => p.status !== 'done' && p.status !== 'skipped')
  const v = rules.predecessorsFinished(stepOf(op), { open: open.length ? open.map((p) => p.name) : ['an earlier step'] })!
  return ruleError(v, { waitingFor: open.map((p) => p.key) })
}

/** A step waits out its predecessors' wait-after (pickle, glue cure) before anyone takes it up. */
async function requireRested(tx: Tx, op: OpRow, now: Date) {
  if (!op.after.length) return
  const preds = await tx
    .select({ name: operations.name, finishedAt: operations.finishedAt, waitAfter: operations.waitAfterMinutes })
    .from(operations)
    .where(and(eq(operations.jobBagId, op.jobBagId), inArray(operations.key, op.after)))
  for (const p of preds) {
    if (!p.finishedAt || p.waitAfter <= 0) continue
    const left = Math.ceil((new Date(p.finishedAt).getTime() + p.waitAfter * 60_000 - now.getTime()) / 60_000)
    const v = rules.predecessorsFinished(stepOf(op), { open: [], waitMinutesLeft: left, waitingOn: p.name, waitAfter: p.waitAfter })
    if (v) throw ruleError(v, { waitMinutesLeft: left })
  }
}

/** The one who holds the operation must be the one acting (a manager may act on their behalf). */
async function holderFor(tx: Tx, actor: Actor, op: OpRow, personId: number | undefined): Promise<Person> {
  if (STAFF.includes(actor.role) && personId === undefined && op.claimedBy !== null && op.claimedBy !== actor.personId)
    return { id: op.claimedBy, name: op.claimedByName ?? '' }
  const p = await requirePerson(tx, actor, personId)
  if (op.claimedBy !== p.id) {
    throw new AppError({
      code: 'conflict',
      message: op.claimedBy
        ? `${label(op)} is held by ${op.claimedByName}, not by ${p.id === actor.personId ? 'you' : p.name}`
        : `${label(op)} is not claimed; claim it first`,
      details: { claimedBy: op.claimedBy, claimedByName: op.claimedByName },
    })
  }
  return p
}

/** Refuses a second running operation for one person (409 naming the running one). Call with the person lock held. */
async function requireNothingElseRunning(tx: Tx, person: Person, operationId: number, isSelf: boolean) {
  await tx.execute(sql`select pg_advisory_xact_lock(${LOCK.personAtBench}, ${person.id})`)
  const [other] = await tx
    .select({ id: operations.id, name: operations.name, number: jobBags.number })
    .from(timeRecords)
    .innerJoin(operations, eq(operations.id, timeRecords.operationId))
    .innerJoin(jobBags, eq(jobBags.id, operations.jobBagId))
    .where(and(eq(timeRecords.personId, person.id), isNull(timeRecords.endedAt), eq(operations.status, 'running'), ne(operations.id, operationId)))
  if (other)
    throw new AppError({
      code: 'conflict',
      message: `${isSelf ? 'You are' : `${person.name} is`} working on “${other.name}” (job bag ${other.number}) already; pause or finish it first`,
      details: { runningOperationId: other.id },
    })
}

interface Work {
  tx: Trx
  op: OpRow
  now: Date
}
interface WorkResult {
  status: OperationStatus
  readied?: number[]
  bag?: BagChange
}

type ReplayStored = { status: number; body: unknown }

/**
 * Runs one transition exactly once per requestId: the request row is written first (a concurrent replay waits on it),
 * the work runs in a savepoint with the job bag and the operation locked, and its answer — success or refusal — is kept for replays.
 */
async function transition(
  deps: Deps,
  actor: Actor,
  o: { requestId: string; action: string; operationId: number; livePlan?: boolean },
  work: (w: Work) => Promise<WorkResult>,
): Promise<TransitionResult> {
  const { db, realtime } = deps
  const outcome = await db.transaction(async (tx) => {
    const mine = await tx
      .insert(benchRequests)
      .values({ requestId: o.requestId, workshopId: actor.workshopId, userId: actor.userId, action: o.action, operationId: null })
      .onConflictDoNothing()
      .returning({ requestId: benchRequests.requestId })
    if (!mine.length) {
      const [prev] = await tx.select().from(benchRequests).where(eq(benchRequests.requestId, o.requestId))
      if (!prev || prev.userId !== actor.userId || prev.action !== o.action || (prev.operationId !== null && prev.operationId !== o.operationId))
        throw new AppError({ code: 'conflict', message: 'This request id was used for a different request; the tablet must send a new id for each tap' })
      return { replay: { status: prev.status, body: prev.response } as ReplayStored }
    }
    try {
      const r = await tx.transaction(async (sp) => {
        const [found] = await sp
          .select({ jobBagId: operations.jobBagId })
          .from(operations)
          .innerJoin(jobBags, eq(jobBags.id, operations.jobBagId))
          .where(and(eq(operations.id, o.operationId), eq(jobBags.workshopId, actor.workshopId)))
        if (!found) throw notFound('Operation')
        // Every transition of one job bag runs one at a time, so successors see all their predecessors' finishes.
        // A transition that changes the live plan takes its lock first, in the order every plan change takes it.
        if (o.livePlan) await lockLivePlan(sp, actor.workshopId)
        await lockJobBag(sp, found.jobBagId)
        const [op] = await baseQuery(sp).where(eq(operations.id, o.operationId)).for('update', { of: operations })
        const result = await work({ tx: sp, op: op!, now: new Date() })
        const bag = result.bag ?? (await syncJobBagStatus(sp, actor, op!.jobBagId))
        const operation = await benchOperation(sp, actor.workshopId, o.operationId)
        const body: TransitionResult = { operation, jobBag: bag.jobBag, readied: result.readied ?? [], cautions: operation.cautions }
        return { body, bag }
      })
      await tx
        .update(benchRequests)
        .set({ status: 200, response: r.body as unknown as Record<string, unknown>, operationId: o.operationId })
        .where(eq(benchRequests.requestId, o.requestId))
      return { done: r }
    } catch (err) {
      if (!(err instanceof AppError) || err.status >= 500) throw err
      const stored = { error: err.message, code: err.code, fields: err.fields, details: err.details }
      await tx
        .update(benchRequests)
        .set({ status: err.status, response: stored as Record<string, unknown>, operationId: err.code === 'not-found' ? null : o.operationId })
        .where(eq(benchRequests.requestId, o.requestId))
      return { refused: err }
    }
  })
  if ('replay' in outcome) {
    const { status, body } = outcome.replay!
    if (status >= 400) {
      const b = body as { error: string; code: AppError['code']; fields?: Record<string, string>; details?: unknown }
      throw new AppError({ code: b.code, status, message: b.error, fields: b.fields, details: b.details })
    }
    return body as TransitionResult
  }
  if ('refused' in outcome) throw outcome.refused
  const { body, bag } = outcome.done!
  realtime.emit(actor.workshopId, 'operation:changed', { id: body.operation.id, version: body.operation.version, status: body.operation.status })
  for (const r of bag.readied) realtime.emit(actor.workshopId, 'operation:changed', { id: r.id, version: r.version, status: 'ready' })
  if (bag.statusChanged) realtime.emit(actor.workshopId, 'jobBag:changed', { id: bag.jobBag.id, version: bag.jobBag.version, status: bag.jobBag.status })
  if (bag.order) realtime.emit(actor.workshopId, 'order:updated', { id: bag.order.id, version: bag.order.version })
  return body
}

async function move(tx: Tx, op: OpRow, to: OperationStatus, set: Record<string, unknown> = {}) {
  const [u] = await tx
    .update(operations)
    .set({ ...set, status: to, version: sql`${operations.version} + 1` })
    .where(and(eq(operations.id, op.id), eq(operations.status, op.status)))
    .returning({ id: operations.id })
  if (!u) throw new AppError({ code: 'conflict', message: `${label(op)} changed meanwhile; reload and try again` })
}

function requireWorkable(op: OpRow) {
  if (op.jobBagStatus === 'on-hold')
    throw new AppError({ code: 'unprocessable', message: `Job bag ${op.jobBagNumber} is on hold; ask the manager`, details: { jobBagStatus: op.jobBagStatus } })
  if (op.jobBagStatus === 'cancelled')
    throw new AppError({ code: 'unprocessable', message: `Job bag ${op.jobBagNumber} is cancelled`, details: { jobBagStatus: op.jobBagStatus } })
}

/** Casting and forging wait for the order's deposit when the workshop says so ("no metal before deposit"). */
async function requireDepositIn(tx: Tx, workshopId: number, op: OpRow) {
  const h = await heldForDeposit(tx, workshopId, op.jobBagId, op.id)
  if (h)
    throw new AppError({
      code: 'unprocessable',
      message: `${label(op)} is ${h.reason}: order ${op.orderNumber} has not paid its deposit, and no metal is cast or forged before it is in`,
      details: { reason: h.reason, orderNumber: op.orderNumber },
    })
}

/**
 * Everything that refuses a claim before the claim itself, in the order the tablet hears it: a step still waiting (its
 * predecessors or their wait-after), one taken or finished already, a bag on hold, outside work, a deposit not in, a skill
 * level too low, a bench not equipped. Without a bench (none chosen yet) the bench is not checked.
 */
async function claimChecks(tx: Tx, actor: Actor, op: OpRow, o: { personId?: number; benchId: number | null; now: Date }) {
  const person = await requirePerson(tx, actor, o.personId)
  if (op.status === 'pending') throw await pendingReason(tx, op)
  await requireRested(tx, op, o.now)
  if (!canMoveOperation(op.status, 'claimed')) refuseMove(op, 'claimed', person)
  requireWorkable(op)
  if (op.outside) throw new AppError({ code: 'unprocessable', message: `${label(op)} is outside work; the manager sends it out and books it back` })
  await requireDepositIn(tx, actor.workshopId, op)
  const [skill] = await tx
    .select({ level: personSkills.level })
    .from(personSkills)
    .where(and(eq(personSkills.personId, person.id), eq(personSkills.kindId, op.kindId)))
  const unskilled = rules.skill(stepOf(op), { personName: person.name, kindName: op.kindName, level: skill?.level ?? null, required: op.requiredLevel })
  if (unskilled) throw ruleError(unskilled, { requiredLevel: op.requiredLevel, level: skill?.level ?? 0 })
  const bench = o.benchId === null ? null : await requireBench(tx, actor.workshopId, o.benchId, op.kindId, op.kindName, stepOf(op))
  return { person, bench }
}

/**
 * Why the one asking could not take this ready step now — the words a claim would be refused with — or null when they could
 * (or when no one is named yet: a station tablet before a PIN). The job bag page shows it instead of offering the step.
 */
export async function claimRefusal(tx: Tx, actor: Actor, operationId: number, benchId: number | null): Promise<string | null> {
  if (actor.personId === null && actor.station) return null
  const [op] = await baseQuery(tx).where(and(eq(operations.id, operationId), eq(jobBags.workshopId, actor.workshopId)))
  if (!op || op.status !== 'ready') return null
  try {
    await claimChecks(tx, actor, op, { benchId, now: new Date() })
    return null
  } catch (err) {
    if (err instanceof AppError && err.status < 500) return err.message
    throw err
  }
}

export function claim(deps: Deps, actor: Actor, operationId: number, input: ClaimInput) {
  return transition(deps, actor, { requestId: input.requestId, action: 'claim', operationId, livePlan: true }, async ({ tx, op, now }) => {
    const checked = await claimChecks(tx, actor, op, { personId: input.personId, benchId: input.benchId, now })
    const person = checked.person
    const bench = checked.bench!
    // The conditional update is the last guard: only a still unclaimed, ready operation is taken.
    const [won] = await tx
      .update(operations)
      .set({ status: 'claimed', claimedBy: person.id, version: sql`${operations.version} + 1` })
      .where(and(eq(operations.id, op.id), eq(operations.status, 'ready'), isNull(operations.claimedBy)))
      .returning({ id: operations.id })
    if (!won) refuseMove({ ...op, status: 'claimed' }, 'claimed', person)
    // On the live plan the step moves to the claimer and this bench (through the planning module).
    const plan = await claimOnPlan(tx, actor, { operationId: op.id, person, bench })
    await audit(tx, actor, 'claim', 'operation', op.id, {
      from: op.status,
      to: 'claimed',
      personId: person.id,
      personName: person.name,
      benchId: bench.id,
      benchName: bench.name,
      jobBagId: op.jobBagId,
      ...(plan ? { plan } : {}),
    })
    return { status: 'claimed' }
  })
}

export function release(deps: Deps, actor: Actor, operationId: number, input: ReleaseInput) {
  return transition(deps, actor, { requestId: input.requestId, action: 'release', operationId }, async ({ tx, op }) => {
    if (!canMoveOperation(op.status, 'ready') || op.status !== 'claimed') refuseMove(op, 'ready', null)
    const person = await holderFor(tx, actor, op, input.personId)
    await move(tx, op, 'ready', { claimedBy: null })
    await audit(tx, actor, 'release', 'operation', op.id, { from: op.status, to: 'ready', personId: person.id, jobBagId: op.jobBagId })
    return { status: 'ready' }
  })
}

export function start(deps: Deps, actor: Actor, operationId: number, input: StartInput) {
  return transition(deps, actor, { requestId: input.requestId, action: 'start', operationId }, async ({ tx, op, now }) => {
    if (op.status === 'ready')
      throw new AppError({ code: 'conflict', message: `${label(op)} is not claimed yet; claim it first`, details: { status: op.status } })
    if (op.status !== 'claimed') refuseMove(op, 'running', null)
    requireWorkable(op)
    const person = await holderFor(tx, actor, op, input.personId)
    const cautions = cautionsFor(op.hazards)
    if (cautions.length && !input.acknowledgeHazards)
      throw new AppError({
        code: 'unprocessable',
        message: `${label(op)} is hazardous: read and confirm the cautions before starting`,
        details: { needsAcknowledgement: true, hazards: op.hazards, cautions },
      })
    const bench = input.benchId ? await requireBench(tx, actor.workshopId, input.benchId, op.kindId, op.kindName, stepOf(op)) : null
    await requireNothingElseRunning(tx, person, op.id, person.id === actor.personId)
    await openRecord(tx, { operationId: op.id, personId: person.id, benchId: bench?.id ?? null, at: now, clientId: input.requestId })
    await move(tx, op, 'running')
    await audit(tx, actor, 'start', 'operation', op.id, {
      from: op.status,
      to: 'running',
      personId: person.id,
      benchId: bench?.id ?? null,
      acknowledgedHazards: cautions.length ? op.hazards : [],
      jobBagId: op.jobBagId,
    })
    return { status: 'running' }
  })
}

export function pause(deps: Deps, actor: Actor, operationId: number, input: PauseInput) {
  return transition(deps, actor, { requestId: input.requestId, action: 'pause', operationId }, async ({ tx, op, now }) => {
    if (op.status !== 'running' || !canMoveOperation(op.status, 'paused')) refuseMove(op, 'paused', null)
    const person = await holderFor(tx, actor, op, input.personId)
    const reason = await requirePauseReason(tx, actor.workshopId, input.reason, input.note)
    const r = await closeRecord(tx, op.id, now, reason.code, input.note)
    await move(tx, op, 'paused')
    await audit(tx, actor, 'pause', 'operation', op.id, {
      from: op.status,
      to: 'paused',
      personId: person.id,
      reason: reason.code,
      reasonLabel: reason.label,
      note: input.note,
      timeRecordId: r?.id ?? null,
      jobBagId: op.jobBagId,
    })
    return { status: 'paused' }
  })
}

export function resume(deps: Deps, actor: Actor, operationId: number, input: StartInput) {
  return transition(deps, actor, { requestId: input.requestId, action: 'resume', operationId }, async ({ tx, op, now }) => {
    if (op.status !== 'paused') refuseMove(op, 'running', null)
    requireWorkable(op)
    const person = await holderFor(tx, actor, op, input.personId)
    const bench = input.benchId ? await requireBench(tx, actor.workshopId, input.benchId, op.kindId, op.kindName, stepOf(op)) : null
    await requireNothingElseRunning(tx, person, op.id, person.id === actor.personId)
    await openRecord(tx, { operationId: op.id, personId: person.id, benchId: bench?.id ?? null, at: now, clientId: input.requestId })
    await move(tx, op, 'running')
    await audit(tx, actor, 'resume', 'operation', op.id, {
      from: op.status,
      to: 'running',
      personId: person.id,
      benchId: bench?.id ?? null,
      jobBagId: op.jobBagId,
    })
    return { status: 'running' }
  })
}

export function finish(deps: Deps, actor: Actor, operationId: number, input: FinishInput) {
  return transition(deps, actor, { requestId: input.requestId, action: 'finish', operationId }, async ({ tx, op, now }) => {
    if (!canMoveOperation(op.status, 'done') || op.outside) refuseMove(op, 'done', null)
    const person = await holderFor(tx, actor, op, input.personId)
    const r = op.status === 'running' ? await closeRecord(tx, op.id, now, 'finished', input.note) : null
    await move(tx, op, 'done', { finishedAt: now.toISOString() })
    await audit(tx, actor, 'finish', 'operation', op.id, {
      from: op.status,
      to: 'done',
      personId: person.id,
      note: input.note,
      timeRecordId: r?.id ?? null,
      jobBagId: op.jobBagId,
    })
    const readied = await refreshReadiness(tx, actor, op.jobBagId)
    const bag = await syncJobBagStatus(tx, actor, op.jobBagId, readied)
    return { status: 'done', readied: readied.map((x) => x.id), bag }
  })
}

/** Outside work (casting, hallmarking): a manager sends it out… */
export function sendOut(deps: Deps, actor: Actor, operationId: number, input: OutsideInput) {
  return transition(deps, actor, { requestId: input.requestId, action: 'send-out', operationId }, async ({ tx, op, now }) => {
    if (!op.outside) throw new AppError({ code: 'unprocessable', message: `${label(op)} is bench work; it is claimed at a bench` })
    if (op.status === 'pending') throw await pendingReason(tx, op)
    if (op.status !== 'ready') refuseMove(op, 'running', null)
    requireWorkable(op)
    await requireDepositIn(tx, actor.workshopId, op)
    // The day it left counts for the planner: its working days away run from here.
    await move(tx, op, 'running', { plannedStart: now.toISOString(), plannedBenchId: null, plannedPersonId: null })
    await audit(tx, actor, 'send-out', 'operation', op.id, { from: op.status, to: 'running', note: input.note, jobBagId: op.jobBagId })
    return { status: 'running' }
  })
}

/** …and books it back, which readies the next steps. */
export function receive(deps: Deps, actor: Actor, operationId: number, input: OutsideInput) {
  return transition(deps, actor, { requestId: input.requestId, action: 'receive', operationId }, async ({ tx, op, now }) => {
    if (!op.outside) throw new AppError({ code: 'unprocessable', message: `${label(op)} is bench work; it is finished at a bench` })
    if (op.status !== 'running') refuseMove(op, 'done', null)
    await move(tx, op, 'done', { finishedAt: now.toISOString() })
    await audit(tx, actor, 'receive', 'operation', op.id, { from: op.status, to: 'done', note: input.note, jobBagId: op.jobBagId })
    const readied = await refreshReadiness(tx, actor, op.jobBagId)
    const bag = await syncJobBagStatus(tx, actor, op.jobBagId, readied)
    return { status: 'done', readied: readied.map((x) => x.id), bag }
  })
}

/**
 * Ready operations this person can do at this bench (skill level at or above the step's, bench equipped for the kind),
 * in the plan's order: planned start if set, else the order's due date, then priority (5 = most urgent), then job bag number.
 */
export async function nextForMe(db: Db, actor: Actor, q: { benchId: number; personId?: number }): Promise<BenchList> {
  const person = await personFor(db, actor, q.personId)
  if (!person) throw notLinked()
  const [b] = await db
    .select({ id: benches.id })
    .from(benches)
    .where(and(eq(benches.id, q.benchId), eq(benches.workshopId, actor.workshopId)))
  if (!b)
    throw new AppError({ code: 'validation', message: 'benchId: is not a bench of this workshop', fields: { benchId: 'is not a bench of this workshop' } })
  const rows = await baseQuery(db)
    .innerJoin(benchCapabilities, and(eq(benchCapabilities.kindId, operations.kindId), eq(benchCapabilities.benchId, q.benchId)))
    .innerJoin(
      personSkills,
      and(eq(personSkills.kindId, operations.kindId), eq(personSkills.personId, person.id), sql`${personSkills.level} >= ${operations.requiredLevel}`),
    )
    .where(
      and(
        eq(jobBags.workshopId, actor.workshopId),
        eq(operations.status, 'ready'),
        eq(operationKinds.outside, false),
        sql`${jobBags.status} not in ('on-hold', 'cancelled', 'complete')`,
        sql`${orders.status} not in ('cancelled', 'collected', 'quoted')`,
        // Not while a predecessor's wait-after (pickle, cure) is still running.
        sql`not exists (select 1 from operations p where p.job_bag_id = ${operations.jobBagId} and p.key = any(${operations.after}) and p.finished_at is not null and p.finished_at + p.wait_after_minutes * interval '1 minute' > now())`,
      ),
    )
    .orderBy(sql`${operations.plannedStart} asc nulls last`, asc(orders.dueDate), desc(orders.priority), asc(jobBags.number), asc(operations.seq))
    .limit(50)
  // Metal work waiting for the deposit is not offered.
  const holds = await depositHolds(db, actor.workshopId, [...new Set(rows.map((r) => r.jobBagId))])
  const held = new Set([...holds.values()].flatMap((h) => h.operationIds))
  return {
    person,
    items: await toBenchOperations(
      db,
      rows.filter((r) => !held.has(r.id)),
    ),
  }
}

/** What this person holds: running first, then paused, then claimed. */
export async function myWork(db: Db, actor: Actor, q: { personId?: number }): Promise<BenchList> {
  const person = await personFor(db, actor, q.personId)
  if (!person) throw notLinked()
  const rows = await baseQuery(db)
    .where(and(eq(jobBags.workshopId, actor.workshopId), eq(operations.claimedBy, person.id), inArray(operations.status, [...HELD_OPERATION])))
    .orderBy(sql`case ${operations.status} when 'running' then 0 when 'paused' then 1 else 2 end`, asc(orders.dueDate), asc(jobBags.number))
  return { person, items: await toBenchOperations(db, rows) }
}
