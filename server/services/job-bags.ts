// Job bags through their life: the routing (add, change, skip, reorder steps; estimates with reasons), readiness, status, history.
import { and, asc, desc, eq, ilike, inArray, or, sql } from 'drizzle-orm'
import { canMoveJobBag, deriveJobBagStatus } from '../../shared/domain/status'
import type {
  EffectiveTimeRecord,
  HistoryEntry,
  JobBagDetail,
  JobBagOperation,
  JobBagSummary,
  JobBagStatusInput,
  RingSizeChange,
  SequenceInput,
  StepAdd,
  StepSkip,
  StepUpdate,
} from '../../shared/schemas/job-bag'
import type { PieceParams, RingSizeValue } from '../../shared/schemas/order'
import { ringSizeToIso, ringSizeWords } from '../../shared/domain/ring-size'
import type { Db, Tx } from '../db/client'
import { auditLog, customers, estimateChanges, jobBags, operationKinds, operations, orders, users } from '../db/schema/index'
import { AppError, invalid, notFound, staleVersion } from '../errors/app-error'
import type { Actor, Deps } from '../lib/route'
import { audit } from './audit'
import { finished, lockJobBag, refreshReadiness, syncJobBagStatus, type OperationChange } from './job-bag-state'
import { benchRowsById, claimRefusal, toBenchOperations } from './bench-floor'
import { actualMinutesByOperation, effectiveRecords } from './time-records'
import { handBackCustomersPieces, type HandBackRow } from './metal'

export type { BagChange, OperationChange } from './job-bag-state'

export async function listJobBags(db: Db, workshopId: number, q: { orderId?: number; status?: string; q?: string }): Promise<JobBagSummary[]> {
  const rows = await db
    .select({
      id: jobBags.id,
      number: jobBags.number,
      piece: jobBags.piece,
      status: jobBags.status,
      version: jobBags.version,
      orderId: orders.id,
      orderNumber: orders.number,
      dueDate: orders.dueDate,
      priority: orders.priority,
      operations: sql<number>`(select count(*)::int from ${operations} where ${operations.jobBagId} = ${jobBags.id})`,
      finished: sql<number>`(select count(*)::int from ${operations} where ${operations.jobBagId} = ${jobBags.id} and ${operations.status} in ('done', 'skipped'))`,
    })
    .from(jobBags)
    .innerJoin(orders, eq(orders.id, jobBags.orderId))
    .where(
      and(
        eq(jobBags.workshopId, workshopId),
        q.orderId ? eq(jobBags.orderId, q.orderId) : undefined,
        q.status ? eq(jobBags.status, q.status) : undefined,
        q.q ? or(ilike(jobBags.number, `%${q.q}%`), ilike(jobBags.piece, `%${q.q}%`)) : undefined,
      ),
    )
    .orderBy(asc(orders.dueDate), asc(jobBags.number))
    .limit(500)
  return rows
}

/** One job bag; the customer's name only when asked for (the bench knows a piece by the customer's code, as its ticket does). */
export async function getJobBag(
  db: Tx,
  workshopId: number,
  id: number,
  opts: { customerName?: boolean; viewer?: { actor: Actor; benchId: number | null } } = {},
): Promise<JobBagDetail> {
  const [row] = await db
    .select({ b: jobBags, o: orders, customerReference: customers.reference, customerName: customers.name })
    .from(jobBags)
    .innerJoin(orders, eq(orders.id, jobBags.orderId))
    .innerJoin(customers, eq(customers.id, orders.customerId))
    .where(and(eq(jobBags.id, id), eq(jobBags.workshopId, workshopId)))
  if (!row) throw notFound('Job bag')
  const { b, o } = row
  const ops = await db
    .select({ op: operations, outside: operationKinds.outside })
    .from(operations)
    .innerJoin(operationKinds, eq(operationKinds.id, operations.kindId))
    .where(eq(operations.jobBagId, id))
    .orderBy(asc(operations.seq), asc(operations.id))
  const ids = ops.map((x) => x.op.id)
  const bench = ids.length ? await toBenchOperations(db, await benchRowsById(db, ids)) : []
  const records: EffectiveTimeRecord[] = await effectiveRecords(db, ids)
  const actual = actualMinutesByOperation(records)
  const est = ids.length
    ? await db
        .select({ e: estimateChanges, by: users.name })
        .from(estimateChanges)
        .innerJoin(users, eq(users.id, estimateChanges.changedBy))
        .where(inArray(estimateChanges.operationId, ids))
        .orderBy(asc(estimateChanges.id))
    : []
  const statusOf = new Map(ops.map((x) => [x.op.key, x.op.status]))
  const operationsOut: JobBagOperation[] = ops.map(({ op, outside }) => ({
    ...bench.find((x) => x.id === op.id)!,
    after: op.after,
    estimateSource: op.estimateSource,
    waitAfterMinutes: op.waitAfterMinutes,
    leadDays: op.leadDays,
    outside,
    plannedBenchId: op.plannedBenchId,
    plannedPersonId: op.plannedPersonId,
    finishedAt: op.finishedAt ? new Date(op.finishedAt).toISOString() : null,
    waitingFor: op.after.filter((k) => !finished(statusOf.get(k) ?? 'skipped')),
    estimateChanges: est
      .filter((x) => x.e.operationId === op.id)
      .map(({ e, by }) => ({ fromMinutes: e.fromMinutes, toMinutes: e.toMinutes, reason: e.reason, by, at: new Date(e.createdAt).toISOString() })),
  }))
  const audits = await db
    .select({ a: auditLog, who: users.name })
    .from(auditLog)
    .leftJoin(users, eq(users.id, auditLog.userId))
    .where(
      and(
        eq(auditLog.workshopId, workshopId),
        or(
          and(eq(auditLog.entity, 'job-bag'), eq(auditLog.entityId, id)),
          ids.length ? and(eq(auditLog.entity, 'operation'), inArray(auditLog.entityId, ids)) : undefined,
        ),
      ),
    )
    .orderBy(desc(auditLog.at), desc(auditLog.id))
    .limit(500)
  const history: HistoryEntry[] = [
    ...audits.map(({ a, who }) => ({
      at: new Date(a.at).toISOString(),
      kind: 'audit' as const,
      action: a.action,
      operationId: a.entity === 'operation' ? a.entityId : null,
      who: (typeof a.details.actingPersonName === 'string' ? a.details.actingPersonName : who) ?? '',
      details: a.details,
    })),
    ...records.map((r) => ({
      at: r.startedAt,
      kind: 'time' as const,
      action: r.voided ? 'time-voided' : r.endedAt ? 'time' : 'time-open',
      operationId: r.operationId,
      who: r.personName,
      details: {
        timeRecordId: r.id,
        startedAt: r.startedAt,
        endedAt: r.endedAt,
        minutes: r.minutes,
        endReason: r.endReason,
        note: r.note,
        corrected: r.corrections.some((c) => c.kind !== 'add'),
        added: r.corrections.some((c) => c.kind === 'add'),
      },
    })),
  ].sort((x, y) => y.at.localeCompare(x.at))
  const next = operationsOut.find((x) => x.status === 'ready') ?? operationsOut.find((x) => ['claimed', 'paused', 'running'].includes(x.status))
  // The page offers the next step only to someone who could take it; otherwise it says why, as the claim would.
  const nextStepRefusal = next && next.status === 'ready' && opts.viewer ? await claimRefusal(db, opts.viewer.actor, next.id, opts.viewer.benchId) : null
  return {
    id: b.id,
    number: b.number,
    piece: b.piece,
    status: b.status,
    version: b.version,
    params: b.params as unknown as Record<string, unknown>,
    order: {
      id: o.id,
      number: o.number,
      title: o.title,
      dueDate: o.dueDate,
      promisedDate: o.promisedDate,
      priority: o.priority,
      status: o.status,
      customerReference: row.customerReference,
      customerName: opts.customerName ? row.customerName : null,
    },
    operations: operationsOut,
    timeRecords: records,
    history,
    plannedMinutes: Math.round(operationsOut.filter((x) => x.status !== 'skipped').reduce((s, x) => s + x.estimateMinutes, 0) * 10) / 10,
    actualMinutes: Math.round([...actual.values()].reduce((s, x) => s + x, 0) * 10) / 10,
    nextOperationId: next?.id ?? null,
    nextStepRefusal,
  }
}

function requireEditable(bag: { status: string; number: string }) {
  if (bag.status === 'complete' || bag.status === 'cancelled')
    throw new AppError({ code: 'unprocessable', message: `Job bag ${bag.number} is ${bag.status}; its routing can no longer change` })
}

/** Refuses a routing with a loop (a step that would wait for itself). */
function requireNoCycle(steps: { key: string; after: string[] }[]) {
  const after = new Map(steps.map((s) => [s.key, s.after]))
  const state = new Map<string, 1 | 2>()
  const visit = (k: string, path: string[]): void => {
    if (state.get(k) === 2) return
    if (state.get(k) === 1)
      throw new AppError({
        code: 'unprocessable',
        message: `The routing would go round in a circle: ${[...path, k].join(' → ')}`,
        fields: { after: 'would make a loop' },
      })
    state.set(k, 1)
    for (const p of after.get(k) ?? []) visit(p, [...path, k])
    state.set(k, 2)
  }
  for (const s of steps) visit(s.key, [])
}

async function editRouting(
  deps: Deps,
  actor: Actor,
  jobBagId: number,
  bagVersion: number | null,
  fn: (tx: Tx, bag: typeof jobBags.$inferSelect) => Promise<OperationChange[]>,
) {
  const { db, realtime } = deps
  const out = await db.transaction(async (tx) => {
    const [owned] = await tx
      .select({ id: jobBags.id })
      .from(jobBags)
      .where(and(eq(jobBags.id, jobBagId), eq(jobBags.workshopId, actor.workshopId)))
    if (!owned) throw notFound('Job bag')
    const bag = await lockJobBag(tx, jobBagId)
    if (bagVersion !== null && bag.version !== bagVersion) throw staleVersion('Job bag')
    const touched = await fn(tx, bag)
    const readied = await refreshReadiness(tx, actor, jobBagId)
    const synced = await syncJobBagStatus(tx, actor, jobBagId, readied)
    let jobBag = synced.jobBag
    if (!synced.statusChanged) {
      const [u] = await tx
        .update(jobBags)
        .set({ version: sql`${jobBags.version} + 1` })
        .where(eq(jobBags.id, jobBagId))
        .returning({ id: jobBags.id, status: jobBags.status, version: jobBags.version })
      jobBag = u!
    }
    const latest = touched.length
      ? await tx
          .select({ id: operations.id, version: operations.version, status: operations.status })
          .from(operations)
          .where(
            inArray(
              operations.id,
              touched.map((t) => t.id),
            ),
          )
      : []
    return { jobBag, order: synced.order, changed: [...latest, ...readied.filter((r) => !latest.some((l) => l.id === r.id))] }
  })
  for (const c of out.changed) realtime.emit(actor.workshopId, 'operation:changed', { id: c.id, version: c.version, status: c.status })
  realtime.emit(actor.workshopId, 'jobBag:changed', { id: jobBagId, version: out.jobBag.version, status: out.jobBag.status })
  if (out.order) realtime.emit(actor.workshopId, 'order:updated', { id: out.order.id, version: out.order.version })
  return getJobBag(db, actor.workshopId, jobBagId, { viewer: { actor, benchId: actor.station?.benchId ?? null } })
}

const slug = (s: string) =>
  s
    .toLowerCase()
    .normalize('NFKD')
    .replace(/[^a-z0-9]+/g, '-')
    .replace(/^-+|-+$/g, '')
    .slice(0, 30) || 'step'

export function addStep(deps: Deps, actor: Actor, jobBagId: number, input: StepAdd) {
  return editRouting(deps, actor, jobBagId, input.version, async (tx, bag) => {
    requireEditable(bag)
    const [kind] = await tx
      .select()
      .from(operationKinds)
      .where(and(eq(operationKinds.id, input.kindId), eq(operationKinds.workshopId, actor.workshopId)))
    if (!kind) throw invalid('kindId', 'is not an operation kind of this workshop')
    const ops = await tx.select().from(operations).where(eq(operations.jobBagId, jobBagId)).orderBy(asc(operations.seq))
    const keys = new Set(ops.map((o) => o.key))
    let key = input.key ?? slug(input.name)
    if (input.key && keys.has(key)) throw invalid('key', 'is used by another step of this job bag')
    for (let n = 2; keys.has(key); n++) key = `${slug(input.name)}-${n}`
    for (const k of input.after) if (!keys.has(k)) throw invalid('after', `names a step that is not in this routing: ${k}`)
    const before = ops.filter((o) => input.before.includes(o.key))
    for (const k of input.before) if (!keys.has(k)) throw invalid('before', `names a step that is not in this routing: ${k}`)
    const started = before.find((o) => !['pending', 'ready'].includes(o.status))
    if (started)
      throw new AppError({
        code: 'unprocessable',
        message: `“${started.name}” is ${started.status}; a new step cannot go in front of it`,
        fields: { before: `${started.key} has begun` },
      })
    requireNoCycle([...ops.map((o) => ({ key: o.key, after: input.before.includes(o.key) ? [...o.after, key] : o.after })), { key, after: input.after }])
    const afterSeq = Math.max(-1, ...ops.filter((o) => input.after.includes(o.key)).map((o) => o.seq))
    const seq = before.length ? Math.min(...before.map((o) => o.seq)) : input.after.length ? afterSeq + 1 : (ops.at(-1)?.seq ?? -1) + 1
    await tx
      .update(operations)
      .set({ seq: sql`${operations.seq} + 1` })
      .where(and(eq(operations.jobBagId, jobBagId), sql`${operations.seq} >= ${seq}`))
    for (const o of before)
      await tx
        .update(operations)
        .set({ after: [...o.after, key], version: sql`${operations.version} + 1` })
        .where(eq(operations.id, o.id))
    const [op] = await tx
      .insert(operations)
      .values({
        jobBagId,
        seq,
        key,
        kindId: kind.id,
        name: input.name,
        status: 'pending',
        estimateMinutes: input.estimateMinutes,
        estimateSource: 'override',
        requiredLevel: input.requiredLevel,
        waitAfterMinutes: input.waitAfterMinutes,
        leadDays: input.leadDays,
        after: input.after,
      })
      .returning()
    await tx.insert(estimateChanges).values({
      workshopId: actor.workshopId,
      operationId: op!.id,
      fromMinutes: 0,
      toMinutes: input.estimateMinutes,
      fromSource: 'new-step',
      reason: input.reason,
      changedBy: actor.userId,
    })
    await audit(tx, actor, 'add-step', 'operation', op!.id, {
      jobBagId,
      key,
      name: input.name,
      kind: kind.code,
      estimateMinutes: input.estimateMinutes,
      after: input.after,
      before: input.before,
      reason: input.reason,
    })
    return [{ id: op!.id, version: op!.version, status: op!.status }, ...before.map((o) => ({ id: o.id, version: o.version + 1, status: o.status }))]
  })
}

async function stepOf(tx: Tx, jobBagId: number, operationId: number) {
  const [op] = await tx
    .select()
    .from(operations)
    .where(and(eq(operations.id, operationId), eq(operations.jobBagId, jobBagId)))
  if (!op) throw notFound('Step')
  return op
}

export function updateStep(deps: Deps, actor: Actor, jobBagId: number, operationId: number, input: StepUpdate) {
  return editRouting(deps, actor, jobBagId, null, async (tx, bag) => {
    requireEditable(bag)
    const op = await stepOf(tx, jobBagId, operationId)
    if (op.version !== input.version) throw staleVersion('Step')
    if (finished(op.status))
      throw new AppError({ code: 'unprocessable', message: `“${op.name}” is ${op.status === 'done' ? 'finished' : 'removed'}; it can no longer change` })
    const set: Record<string, unknown> = {}
    const changes: Record<string, unknown> = {}
    if (input.name !== undefined && input.name !== op.name) {
      set.name = input.name
      changes.name = { from: op.name, to: input.name }
    }
    if (input.requiredLevel !== undefined && input.requiredLevel !== op.requiredLevel) {
      if (op.status !== 'pending' && op.status !== 'ready')
        throw new AppError({
          code: 'unprocessable',
          message: `“${op.name}” is ${op.status}; its required level cannot change now`,
          fields: { requiredLevel: 'the step has begun' },
        })
      set.requiredLevel = input.requiredLevel
      changes.requiredLevel = { from: op.requiredLevel, to: input.requiredLevel }
    }
    if (input.after !== undefined) {
      if (op.status !== 'pending' && op.status !== 'ready')
        throw new AppError({
          code: 'unprocessable',
          message: `“${op.name}” is ${op.status}; what it waits for cannot change now`,
          fields: { after: 'the step has begun' },
        })
      const ops = await tx.select({ key: operations.key, after: operations.after }).from(operations).where(eq(operations.jobBagId, jobBagId))
      for (const k of input.after) {
        if (k === op.key) throw invalid('after', 'a step cannot wait for itself')
        if (!ops.some((o) => o.key === k)) throw invalid('after', `names a step that is not in this routing: ${k}`)
      }
      requireNoCycle(ops.map((o) => ({ key: o.key, after: o.key === op.key ? input.after! : o.after })))
      set.after = input.after
      changes.after = { from: op.after, to: input.after }
    }
    if (input.estimateMinutes !== undefined && input.estimateMinutes !== op.estimateMinutes) {
      set.estimateMinutes = input.estimateMinutes
      set.estimateSource = 'override'
      changes.estimateMinutes = { from: op.estimateMinutes, to: input.estimateMinutes }
      await tx.insert(estimateChanges).values({
        workshopId: actor.workshopId,
        operationId,
        fromMinutes: op.estimateMinutes,
        toMinutes: input.estimateMinutes,
        fromSource: op.estimateSource,
        reason: input.reason!,
        changedBy: actor.userId,
      })
    }
    if (!Object.keys(set).length) return []
    const [u] = await tx
      .update(operations)
      .set({ ...set, version: sql`${operations.version} + 1` })
      .where(eq(operations.id, operationId))
      .returning()
    await audit(tx, actor, 'update-step', 'operation', operationId, { jobBagId, changes, reason: input.reason ?? null })
    return [{ id: u!.id, version: u!.version, status: u!.status }]
  })
}

export function skipStep(deps: Deps, actor: Actor, jobBagId: number, operationId: number, input: StepSkip) {
  return editRouting(deps, actor, jobBagId, null, async (tx, bag) => {
    requireEditable(bag)
    const op = await stepOf(tx, jobBagId, operationId)
    if (op.version !== input.version) throw staleVersion('Step')
    if (!['pending', 'ready', 'claimed'].includes(op.status))
      throw new AppError({ code: 'unprocessable', message: `“${op.name}” is ${op.status}; only a step nobody has started can be removed` })
    const [u] = await tx
      .update(operations)
      .set({ status: 'skipped', claimedBy: null, version: sql`${operations.version} + 1` })
      .where(eq(operations.id, operationId))
      .returning()
    await audit(tx, actor, 'skip', 'operation', operationId, { from: op.status, to: 'skipped', jobBagId, reason: input.reason, releasedClaimOf: op.claimedBy })
    return [{ id: u!.id, version: u!.version, status: u!.status }]
  })
}

/** Puts the steps in a new order; a step may not come before one it waits for. */
export function setSequence(deps: Deps, actor: Actor, jobBagId: number, input: SequenceInput) {
  return editRouting(deps, actor, jobBagId, input.version, async (tx, bag) => {
    requireEditable(bag)
    const ops = await tx.select().from(operations).where(eq(operations.jobBagId, jobBagId))
    const ids = new Set(input.operationIds)
    if (ids.size !== input.operationIds.length || ids.size !== ops.length || ops.some((o) => !ids.has(o.id)))
      throw invalid('operationIds', 'must list every step of this job bag exactly once')
    const pos = new Map(input.operationIds.map((id, i) => [id, i]))
    const byKey = new Map(ops.map((o) => [o.key, o]))
    for (const o of ops)
      for (const k of o.after) {
        const p = byKey.get(k)
        if (p && pos.get(p.id)! > pos.get(o.id)!)
          throw new AppError({
            code: 'unprocessable',
            message: `“${o.name}” waits for “${p.name}”, so it cannot come before it; change what it waits for first`,
            fields: { operationIds: `${o.key} before ${p.key}` },
          })
      }
    for (const o of ops)
      if (o.seq !== pos.get(o.id))
        await tx
          .update(operations)
          .set({ seq: pos.get(o.id)! })
          .where(eq(operations.id, o.id))
    await audit(tx, actor, 'reorder', 'job-bag', jobBagId, { order: input.operationIds.map((id) => ops.find((o) => o.id === id)!.key) })
    return []
  })
}

/**
 * A manager holds, cancels or lifts the hold on a job bag. Cancelling a bag that holds the customer's own piece hands it back in
 * the same transaction, at the weights handed over (`handBack`, by alloy) or else as held; a bag cancelled while the piece was at
 * the bench is sent as cancelled again, with or without weights, once the piece is back, and only then hands it back.
 */
export async function setJobBagStatus(deps: Deps, actor: Actor, jobBagId: number, input: JobBagStatusInput) {
  let handedBack: HandBackRow[] = []
  const detail = await editRouting(deps, actor, jobBagId, input.version, async (tx, bag) => {
    if (input.handBack && input.status !== 'cancelled') throw invalid('handBack', 'is recorded only with the job bag cancelled')
    const ops = await tx.select({ status: operations.status, name: operations.name }).from(operations).where(eq(operations.jobBagId, jobBagId))
    // The order's row before the metal lock, as cancelling the whole order takes them, so the two never wait on each other.
    const handBack = async () => {
      await tx.select({ id: orders.id }).from(orders).where(eq(orders.id, bag.orderId)).for('update')
      const given = (input.handBack ?? []).map((p) => ({ jobBagId, alloyId: p.alloyId, weightG: p.weightG }))
      return handBackCustomersPieces(tx, actor, bag.orderId, given, { jobBagId })
    }
    if (input.status === 'cancelled' && bag.status === 'cancelled') {
      handedBack = await handBack()
      if (!handedBack.length)
        throw new AppError({ code: 'unprocessable', message: `Job bag ${bag.number} is cancelled and holds nothing of the customer’s to hand back` })
      await audit(tx, actor, 'hand-back', 'job-bag', jobBagId, { reason: input.reason })
      return []
    }
    let to: string
    if (input.status === 'resume') {
      if (bag.status !== 'on-hold') throw new AppError({ code: 'unprocessable', message: `Job bag ${bag.number} is ${bag.status}, not on hold` })
      to = deriveJobBagStatus(
        'waiting',
        ops.map((o) => o.status),
      )
    } else {
      to = input.status
      if (!canMoveJobBag(bag.status, input.status) || bag.status === input.status)
        throw new AppError({ code: 'unprocessable', message: `Job bag ${bag.number} is ${bag.status}; it cannot go ${input.status}` })
      const running = ops.find((o) => o.status === 'running')
      if (input.status === 'cancelled' && running)
        throw new AppError({ code: 'unprocessable', message: `“${running.name}” is running; pause or finish it before cancelling the job bag` })
    }
    await tx.update(jobBags).set({ status: to }).where(eq(jobBags.id, jobBagId))
    await audit(tx, actor, 'status', 'job-bag', jobBagId, { from: bag.status, to, reason: input.reason })
    if (to === 'cancelled') handedBack = await handBack()
    return []
  })
  for (const m of handedBack)
    deps.realtime.emit(actor.workshopId, 'metal:recorded', { id: m.id, kind: m.kind, alloyId: m.alloyId, jobBagId: m.jobBagId, refiningLotId: null })
  return detail
}

const RING_FIELDS = ['ringSize', 'resizeFrom', 'resizeTo'] as const
const RING_NAMES: Record<(typeof RING_FIELDS)[number], string> = { ringSize: 'ring size', resizeFrom: 'resize from', resizeTo: 'resize to' }
const sameSize = (a: RingSizeValue | null | undefined, b: RingSizeValue | null | undefined) =>
  (a ?? null) === (b ?? null) || (!!a && !!b && a.scale === b.scale && a.value.trim() === b.value.trim())

/**
 * A ring size changed after the order was taken (the customer came back with another size, or a resize's sizes were
 * corrected): the bag's own record of the size changes, audited with what it was and why; a resize keeps both its sizes.
 */
export async function changeRingSize(deps: Deps, actor: Actor, jobBagId: number, input: RingSizeChange) {
  const { db, realtime } = deps
  const out = await db.transaction(async (tx) => {
    const [owned] = await tx
      .select({ id: jobBags.id })
      .from(jobBags)
      .where(and(eq(jobBags.id, jobBagId), eq(jobBags.workshopId, actor.workshopId)))
    if (!owned) throw notFound('Job bag')
    const bag = await lockJobBag(tx, jobBagId)
    if (bag.version !== input.version) throw staleVersion('Job bag')
    if (bag.status === 'complete' || bag.status === 'cancelled')
      throw new AppError({ code: 'unprocessable', message: `Job bag ${bag.number} is ${bag.status}; its ring size can no longer change` })
    const before = bag.params as PieceParams
    const next: PieceParams = { ...before }
    const changes: Record<string, { from: RingSizeValue | null; to: RingSizeValue | null }> = {}
    for (const f of RING_FIELDS) {
      const v = input[f]
      if (v === undefined || sameSize(before[f], v)) continue
      changes[f] = { from: before[f] ?? null, to: v }
      if (v === null) delete next[f]
      else next[f] = v
    }
    // A resize says both where it starts and where it ends, and they differ.
    if ((next.resizeFrom && !next.resizeTo) || (!next.resizeFrom && next.resizeTo)) {
      throw invalid(next.resizeFrom ? 'resizeTo' : 'resizeFrom', 'a resize keeps both the size the ring was and the size it is to be')
    }
    if (next.resizeFrom && next.resizeTo && Math.abs(ringSizeToIso(next.resizeFrom)! - ringSizeToIso(next.resizeTo)!) < 0.05) {
      throw invalid('resizeTo', 'is the same size as the ring is now')
    }
    if (!Object.keys(changes).length)
      throw invalid(Object.keys(input).find((k) => (RING_FIELDS as readonly string[]).includes(k)) ?? 'ringSize', 'is what the job bag already says')
    const [u] = await tx
      .update(jobBags)
      .set({ params: next, version: sql`${jobBags.version} + 1` })
      .where(eq(jobBags.id, jobBagId))
      .returning({ id: jobBags.id, status: jobBags.status, version: jobBags.version })
    const words = Object.entries(changes).map(
      ([f, c]) => `${RING_NAMES[f as (typeof RING_FIELDS)[number]]} ${c.from ? ringSizeWords(c.from) : 'none'} → ${c.to ? ringSizeWords(c.to) : 'none'}`,
    )
    await audit(tx, actor, 'ring-size', 'job-bag', jobBagId, { changes, summary: words.join('; '), reason: input.reason })
    return u!
  })
  realtime.emit(actor.workshopId, 'jobBag:changed', { id: jobBagId, version: out.version, status: out.status })
  return getJobBag(db, actor.workshopId, jobBagId, { viewer: { actor, benchId: actor.station?.benchId ?? null } })
}
