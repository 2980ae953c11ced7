// Plan versions as records: drafts saved by a planner run, listed, read (typed assignments), compared (each change named by
// job bag and step), published (the draft becomes the live plan, one transaction under the live plan's lock, its figures
// stored from the plan as written) and discarded.
import { describe, type RuleViolation } from '../../shared/domain/rules'
import { workingMinutesBetween } from '../../shared/domain/working-time'
import { and, desc, eq, inArray } from 'drizzle-orm'
import type { Db, Trx, Tx } from '../db/client'
import * as s from '../db/schema/index'
import { AppError, notFound } from '../errors/app-error'
import type { Actor, Deps } from '../lib/route'
import { audit } from '../services/audit'
import { dayjs } from '../lib/time'
import type { Plan } from '../scheduler/model.ts'
import { fromEnginePlan, fromStored, toStored, type Assignment, type Assignments } from './assignments'
import { checkLivePlan, latenessFigures, lockLivePlan, readLivePlan, storeLiveFigures, underWayPlacement, isUnderWay, writeAssignment } from './live-plan'
import { loadPlanningData, type PlanningData } from './problem'

export async function listPlans(db: Db, workshopId: number) {
  const rows = await db
    .select({
      id: s.planVersions.id,
      number: s.planVersions.number,
      status: s.planVersions.status,
      createdAt: s.planVersions.createdAt,
      publishedAt: s.planVersions.publishedAt,
      score: s.planVersions.score,
      createdBy: s.planVersions.createdBy,
      publishedBy: s.planVersions.publishedBy,
    })
    .from(s.planVersions)
    .where(eq(s.planVersions.workshopId, workshopId))
    .orderBy(desc(s.planVersions.number))
    .limit(100)
  const names = new Map(
    (await db.select({ id: s.users.id, name: s.users.name }).from(s.users).where(eq(s.users.workshopId, workshopId))).map((u) => [u.id, u.name]),
  )
  return rows.map((r) => ({
    ...r,
    createdByName: r.createdBy ? (names.get(r.createdBy) ?? null) : null,
    publishedByName: r.publishedBy ? (names.get(r.publishedBy) ?? null) : null,
  }))
}

/** A plan version with its assignments read through the schema (older drafts' string ids become numbers). */
export async function getPlan(db: Tx, workshopId: number, id: number) {
  const [p] = await db
    .select()
    .from(s.planVersions)
    .where(and(eq(s.planVersions.id, id), eq(s.planVersions.workshopId, workshopId)))
  if (!p) throw notFound('Plan')
  return { ...p, assignments: toStored(fromStored(p.assignments)) }
}

/** A plan version's assignments by operation id. */
export async function readDraft(db: Tx, workshopId: number, id: number): Promise<Assignments> {
  return fromStored((await getPlan(db, workshopId, id)).assignments)
}

/**
 * What would move between two sets of assignments: bench, person or start changed. With `asOf`, a step that both plans start
 * at or before that moment (each sent it as soon as it was made) on the same bench and person, ending the same minute, has not
 * moved — outside work stamped to each planner run's moment comes back the same day either way.
 */
export function diffAssignments(from: Assignments, to: Assignments, asOf?: Date) {
  const moved: { operationId: number; from: Assignment | null; to: Assignment | null; change: string[] }[] = []
  for (const id of new Set([...from.keys(), ...to.keys()])) {
    const a = from.get(id) ?? null
    const b = to.get(id) ?? null
    const change: string[] = []
    if (!a) change.push('new')
    else if (!b) change.push('dropped')
    else {
      if (a.benchId !== b.benchId) change.push('bench')
      if (a.personId !== b.personId) change.push('person')
      const ms = (t: string) => new Date(t).getTime()
      const restamped = asOf !== undefined && ms(a.start) <= asOf.getTime() && ms(b.start) <= asOf.getTime() && Math.abs(ms(a.end) - ms(b.end)) < 60_000
      if (Math.abs(ms(a.start) - ms(b.start)) >= 60_000 && !(restamped && !change.length)) change.push('time')
    }
    if (change.length) moved.push({ operationId: id, from: a, to: b, change })
  }
  return moved
}

/**
 * What the changes buy, per job bag planned in both: pieces that finish earlier or later, those among them whose lateness
 * (after the promised day) shrinks or grows — lateness in working time, as the plans' figures count it (latenessFigures) —
 * and those that are late in one plan and not in the other (newly late, no longer late).
 */
async function whatItBuys(db: Db, workshopId: number, data: PlanningData, base: Assignments, draft: Assignments) {
  const c = data.clock
  const ids = [...new Set([...base.keys(), ...draft.keys()])]
  const rows = ids.length
    ? await db
        .select({ id: s.operations.id, bag: s.operations.jobBagId, promised: s.orders.promisedDate, due: s.orders.dueDate })
        .from(s.operations)
        .innerJoin(s.jobBags, eq(s.jobBags.id, s.operations.jobBagId))
        .innerJoin(s.orders, eq(s.orders.id, s.jobBags.orderId))
        .where(and(inArray(s.operations.id, ids), eq(s.jobBags.workshopId, workshopId)))
    : []
  const finish = (a: Assignments) => {
    const m = new Map<number, number>()
    for (const r of rows) {
      const x = a.get(r.id)
      if (x) m.set(r.bag, Math.max(m.get(r.bag) ?? -Infinity, new Date(x.end).getTime()))
    }
    return m
  }
  const before = finish(base),
    after = finish(draft)
  const dueOf = new Map(
    rows.map((r) => [
      r.bag,
      dayjs
        .tz(`${r.promised ?? r.due} 00:00`, c.timeZone)
        .add(1, 'day')
        .valueOf(),
    ]),
  )
  /** Working minutes from the promised moment to the finish (0 when not late). */
  const lateBy = (finish: number, due: number) => (finish > due ? workingMinutesBetween(data.meta.open, c.toMinute(due), c.toMinute(finish)) : 0)
  let earlier = 0,
    later = 0,
    lessLate = 0,
    moreLate = 0,
    newlyLate = 0,
    noLongerLate = 0
  for (const [bag, b] of before) {
    const a = after.get(bag)
    if (a === undefined || a === b) continue
    if (a < b) earlier++
    else later++
    const due = dueOf.get(bag)!
    const lb = lateBy(b, due),
      la = lateBy(a, due)
    if (la < lb) lessLate++
    else if (la > lb) moreLate++
    if (lb === 0 && la > 0) newlyLate++
    if (lb > 0 && la === 0) noLongerLate++
  }
  // Pieces the draft plans that the base does not hold at all (a new order): not earlier or later, but new — and late or not.
  let newPieces = 0,
    newPiecesLate = 0
  for (const [bag, a] of after) {
    if (before.has(bag)) continue
    newPieces++
    if (lateBy(a, dueOf.get(bag)!) > 0) newPiecesLate++
  }
  return { earlier, later, lessLate, moreLate, newlyLate, noLongerLate, newPieces, newPiecesLate }
}

/** The job bag and name of some operations of the workshop, for listing changes as people know the work. */
async function stepNames(db: Db, workshopId: number, ids: number[]) {
  const rows = ids.length
    ? await db
        .select({ id: s.operations.id, name: s.operations.name, jobBagId: s.jobBags.id, jobBagNumber: s.jobBags.number })
        .from(s.operations)
        .innerJoin(s.jobBags, eq(s.jobBags.id, s.operations.jobBagId))
        .where(and(inArray(s.operations.id, ids), eq(s.jobBags.workshopId, workshopId)))
    : []
  return new Map(rows.map(({ id, ...named }) => [id, named]))
}

/**
 * How many of a draft's steps were started at the bench, sent out or finished after the draft was made, or are claimed by
 * someone the draft does not give them to: publishing it leaves them where they really are (`publishDraft`).
 */
async function startedSince(db: Db, workshopId: number, id: number, draft: Assignments, live: Assignments) {
  const ids = [...draft.keys()]
  if (!ids.length) return 0
  const claimed = await db
    .select({ id: s.operations.id, claimedBy: s.operations.claimedBy })
    .from(s.operations)
    .where(and(inArray(s.operations.id, ids), eq(s.operations.status, 'claimed')))
  const keptClaims = claimed.filter((o) => live.get(o.id)?.personId === o.claimedBy && draft.get(o.id)?.personId !== o.claimedBy).length
  const { createdAt } = await getPlan(db, workshopId, id)
  const made = new Date(createdAt).getTime()
  const ops = await db
    .select({ id: s.operations.id, status: s.operations.status, sentAt: s.operations.plannedStart, finishedAt: s.operations.finishedAt })
    .from(s.operations)
    .where(and(inArray(s.operations.id, ids), inArray(s.operations.status, ['running', 'paused', 'done'])))
  const records = ops.length
    ? await db
        .select({ operationId: s.timeRecords.operationId, startedAt: s.timeRecords.startedAt })
        .from(s.timeRecords)
        .where(
          inArray(
            s.timeRecords.operationId,
            ops.map((o) => o.id),
          ),
        )
    : []
  const after = (t: string | null | undefined) => !!t && new Date(t).getTime() > made
  return (
    keptClaims +
    ops.filter(
      (o) =>
        after(o.finishedAt) ||
        records.some((r) => r.operationId === o.id && after(r.startedAt)) ||
        (o.status === 'running' && !records.some((r) => r.operationId === o.id) && after(o.sentAt)),
    ).length
  )
}

/** A draft against the live plan as it stands now (or any two versions); each change names its job bag and step. */
export async function comparePlan(db: Db, workshopId: number, id: number, againstId?: number, now = new Date()) {
  const draft = await readDraft(db, workshopId, id)
  const live = againstId ? null : (await readLivePlan(db, workshopId)).assignments
  const base = live ?? (await readDraft(db, workshopId, againstId!))
  const diff = diffAssignments(base, draft, now)
  const data = await loadPlanningData(db, workshopId, now)
  // What the draft buys is weighed against what the live plan can really give: re-timed from now where its bars no longer fit
  // the calendar (its stored figures count the same way); the bars that would change are those on the board.
  const buysFrom = againstId ? base : checkLivePlan(data, base).carriedOut
  const named = await stepNames(
    db,
    workshopId,
    diff.map((m) => m.operationId),
  )
  const moves = diff.map((m) => ({ ...m, ...named.get(m.operationId) }))
  return {
    planId: id,
    against: againstId ?? 'live',
    moves,
    underWay: live ? await startedSince(db, workshopId, id, draft, live) : 0,
    gains: await whatItBuys(db, workshopId, data, buysFrom, draft),
    counts: {
      bench: moves.filter((m) => m.change.includes('bench')).length,
      person: moves.filter((m) => m.change.includes('person')).length,
      time: moves.filter((m) => m.change.includes('time')).length,
      new: moves.filter((m) => m.change.includes('new')).length,
    },
  }
}

/**
 * Publishing: the draft becomes the live plan, in one transaction under the live plan's lock. Refused when the draft breaks a
 * rule (the rule book's findings saved with it) or was made from a live plan that has been replaced since.
 */
export async function publishDraft({ db, realtime }: Deps, actor: Actor, id: number) {
  const result = await db.transaction(async (tx) => {
    await lockLivePlan(tx, actor.workshopId)
    const [p] = await tx
      .select()
      .from(s.planVersions)
      .where(and(eq(s.planVersions.id, id), eq(s.planVersions.workshopId, actor.workshopId)))
      .for('update')
    if (!p) throw notFound('Plan')
    if (p.status !== 'draft') throw new AppError({ code: 'conflict', message: `Plan ${p.number} is ${p.status}, not a draft; only drafts can be published` })
    if ((p.score as { feasible?: boolean }).feasible === false)
      throw new AppError({
        code: 'unprocessable',
        message: `Plan ${p.number} breaks a planning rule (${describe((p.score as { violations?: (RuleViolation | string)[] }).violations ?? [], 1) || 'see the draft'}); it cannot become the live plan.`,
      })
    const live = await readLivePlan(tx, actor.workshopId)
    const basedOn = (p.score as { basedOnPlanId?: number | null }).basedOnPlanId ?? null
    if (live.planId !== basedOn)
      throw new AppError({ code: 'conflict', message: `Plan ${live.number} was published after this draft was made; run the planner again to start from it.` })
    if (live.planId) await tx.update(s.planVersions).set({ status: 'superseded' }).where(eq(s.planVersions.id, live.planId))
    const now = new Date().toISOString()
    await tx.update(s.planVersions).set({ status: 'published', publishedAt: now, publishedBy: actor.userId }).where(eq(s.planVersions.id, id))
    // Written onto the operations still to do. Work under way (running or paused at the bench, sent out) keeps where it
    // really is, whatever the draft says — it may have started after the draft was made — work claimed by someone the draft
    // does not give it to keeps the claimer's bar, and finished work keeps what it has. Pins stay as the manager left them.
    const assignments = fromStored(p.assignments)
    const ids = [...assignments.keys()]
    const data = await loadPlanningData(tx, actor.workshopId, new Date(now))
    const underWay = await underWayPlacement(tx, data, live.assignments, ids)
    const open = ids.length
      ? await tx
          .select({ id: s.operations.id, status: s.operations.status, claimedBy: s.operations.claimedBy })
          .from(s.operations)
          .where(inArray(s.operations.id, ids))
      : []
    for (const op of open) {
      if (op.status === 'done' || op.status === 'skipped') continue
      if (isUnderWay(op.status)) {
        const kept = underWay.get(op.id)
        if (kept) await writeAssignment(tx, kept)
        continue
      }
      // Claimed at the bench (by someone the draft does not give it to): it stays with the one who took it, where the claim
      // put it on the live plan, until they start it or hand it back.
      const taken = op.status === 'claimed' ? live.assignments.get(op.id) : undefined
      if (taken && taken.personId === op.claimedBy && assignments.get(op.id)!.personId !== op.claimedBy) continue
      const { pinned: _pinned, ...a } = assignments.get(op.id)!
      await writeAssignment(tx, a)
    }
    // Its figures and findings from the plan as written (open work only, read now), not as the planner run saw it: a bar
    // of the draft that work under way now holds up is a finding, and the figures are those of the plan re-timed behind it.
    await storeLiveFigures(tx, actor.workshopId, { data })
    await audit(tx, actor, 'publish', 'plan', id, { number: p.number, replaced: live.number })
    return { id, number: p.number }
  })
  realtime.emit(actor.workshopId, 'plan:published', { id })
  return getPlan(db, actor.workshopId, result.id)
}
/** The plans route's name for publishing a draft. */
export const publishPlan = publishDraft

export async function discardPlan({ db, realtime }: Deps, actor: Actor, id: number) {
  await db.transaction(async (tx) => {
    const r = await tx
      .update(s.planVersions)
      .set({ status: 'discarded' })
      .where(and(eq(s.planVersions.id, id), eq(s.planVersions.workshopId, actor.workshopId), eq(s.planVersions.status, 'draft')))
      .returning()
    if (!r.length) {
      await getPlan(db, actor.workshopId, id)
      throw new AppError({ code: 'conflict', message: 'Only a draft can be thrown away' })
    }
    await audit(tx, actor, 'discard', 'plan', id, {})
  })
  realtime.emit(actor.workshopId, 'plan:discarded', { id })
  return getPlan(db, actor.workshopId, id)
}

/** A planner run's result saved as a draft, inside the transaction that marks the run done (its row locked and still held by this attempt). */
export async function saveDraft(tx: Trx, actor: Actor, data: PlanningData, plan: Plan) {
  await lockLivePlan(tx, actor.workshopId)
  const [last] = await tx
    .select({ n: s.planVersions.number })
    .from(s.planVersions)
    .where(eq(s.planVersions.workshopId, actor.workshopId))
    .orderBy(desc(s.planVersions.number))
    .limit(1)
  const live = await readLivePlan(tx, actor.workshopId)
  const [row] = await tx
    .insert(s.planVersions)
    .values({
      workshopId: actor.workshopId,
      number: (last?.n ?? 0) + 1,
      status: 'draft',
      createdBy: actor.userId,
      score: { ...summarise(data, plan), basedOnPlanId: live.planId },
      assignments: toStored(fromEnginePlan(data, plan)),
    })
    .returning({ id: s.planVersions.id })
  await audit(tx, actor, 'draft', 'plan', row!.id, { weightedTardiness: plan.score.weightedTardiness, makespan: plan.score.makespan })
  return row!.id
}

function summarise(data: PlanningData, plan: Plan) {
  const c = data.clock
  // Lateness as the workshop counts it (the live plan's figures are counted the same way): working time between the promised
  // moment and the expected finish.
  const late = latenessFigures(data, new Map(plan.jobs.map((j) => [j.jobId, j.completion])))
  return {
    weightedTardiness: plan.score.weightedTardiness,
    weightedTardinessHours: Math.round((plan.score.weightedTardiness / 60) * 10) / 10,
    completion: c.toDate(plan.score.makespan).toISOString(),
    moves: plan.score.moves,
    feasible: plan.score.feasible,
    violations: plan.score.violations.slice(0, 20),
    lateJobs: late.lateJobs,
    lateWorkingMinutes: late.lateWorkingMinutes,
    worstLateWorkingMinutes: late.worstLateWorkingMinutes,
    dayMinutes: late.dayMinutes,
    jobs: plan.jobs.length,
    operations: plan.operations.length,
    iterations: plan.stats.iterations,
    elapsedMs: Math.round(plan.stats.elapsedMs),
  }
}
