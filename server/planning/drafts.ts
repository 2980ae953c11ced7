// Plan versions: list, read, compare, publish (the draft becomes the live plan) and discard.
import { describe, type RuleViolation } from '../../shared/domain/rules'
import { and, desc, eq, inArray, sql } from 'drizzle-orm'
import type { Db } from '../db/client'
import * as s from '../db/schema/index'
import { AppError, notFound } from '../errors/app-error'
import type { Actor, Deps } from '../lib/route'
import { audit } from '../services/audit'
import { dayjs } from '../lib/time'
import { currentAssignments, type Assignment } from './assignments'
import { LOCK } from '../lib/locks'

export async function listPlans(db: Db, workshopId: number) {
  const rows = await db
    .select({ id: s.planVersions.id, number: s.planVersions.number, status: s.planVersions.status, createdAt: s.planVersions.createdAt, publishedAt: s.planVersions.publishedAt, score: s.planVersions.score, createdBy: s.planVersions.createdBy, publishedBy: s.planVersions.publishedBy })
    .from(s.planVersions).where(eq(s.planVersions.workshopId, workshopId)).orderBy(desc(s.planVersions.number)).limit(100)
  const names = new Map((await db.select({ id: s.users.id, name: s.users.name }).from(s.users).where(eq(s.users.workshopId, workshopId))).map((u) => [u.id, u.name]))
  return rows.map((r) => ({ ...r, createdByName: r.createdBy ? names.get(r.createdBy) ?? null : null, publishedByName: r.publishedBy ? names.get(r.publishedBy) ?? null : null }))
}

export async function getPlan(db: Db, workshopId: number, id: number) {
  const [p] = await db.select().from(s.planVersions).where(and(eq(s.planVersions.id, id), eq(s.planVersions.workshopId, workshopId)))
  if (!p) throw notFound('Plan')
  return p
}

/** What would move between two sets of assignments: bench, person or start changed. */
export function diffAssignments(from: Record<string, Assignment>, to: Record<string, Assignment>) {
  const moved: { operationId: number; from: Assignment | null; to: Assignment | null; change: string[] }[] = []
  for (const id of new Set([...Object.keys(from), ...Object.keys(to)])) {
    const a = from[id] ?? null
    const b = to[id] ?? null
    const change: string[] = []
    if (!a) change.push('new')
    else if (!b) change.push('dropped')
    else {
      if (a.benchId !== b.benchId) change.push('bench')
      if (a.personId !== b.personId) change.push('person')
      if (Math.abs(new Date(a.start).getTime() - new Date(b.start).getTime()) >= 60_000) change.push('time')
    }
    if (change.length) moved.push({ operationId: Number(id), from: a, to: b, change })
  }
  return moved
}

/**
 * What the changes buy, per job bag planned in both: pieces that finish earlier or later, and those among them whose lateness
 * (after the promised day) shrinks or grows.
 */
async function whatItBuys(db: Db, workshopId: number, base: Record<string, Assignment>, draft: Record<string, Assignment>) {
  const [w] = await db.select({ tz: s.workshops.timeZone }).from(s.workshops).where(eq(s.workshops.id, workshopId))
  const ids = [...new Set([...Object.keys(base), ...Object.keys(draft)])].map(Number)
  const rows = ids.length
    ? await db.select({ id: s.operations.id, bag: s.operations.jobBagId, promised: s.orders.promisedDate, due: s.orders.dueDate })
      .from(s.operations).innerJoin(s.jobBags, eq(s.jobBags.id, s.operations.jobBagId)).innerJoin(s.orders, eq(s.orders.id, s.jobBags.orderId))
      .where(and(inArray(s.operations.id, ids), eq(s.jobBags.workshopId, workshopId)))
    : []
  const finish = (a: Record<string, Assignment>) => {
    const m = new Map<number, number>()
    for (const r of rows) { const x = a[String(r.id)]; if (x) m.set(r.bag, Math.max(m.get(r.bag) ?? -Infinity, new Date(x.end).getTime())) }
    return m
  }
  const before = finish(base), after = finish(draft)
  const dueOf = new Map(rows.map((r) => [r.bag, dayjs.tz(`${r.promised ?? r.due} 00:00`, w?.tz ?? 'UTC').add(1, 'day').valueOf()]))
  let earlier = 0, later = 0, lessLate = 0, moreLate = 0
  for (const [bag, b] of before) {
    const a = after.get(bag)
    if (a === undefined || a === b) continue
    if (a < b) earlier++; else later++
    const due = dueOf.get(bag)!
    const lb = Math.max(0, b - due), la = Math.max(0, a - due)
    if (la < lb) lessLate++; else if (la > lb) moreLate++
  }
  return { earlier, later, lessLate, moreLate }
}

/** A draft against the live plan (or any two versions). */
export async function comparePlan(db: Db, workshopId: number, id: number, againstId?: number) {
  const p = await getPlan(db, workshopId, id)
  const base = againstId ? ((await getPlan(db, workshopId, againstId)).assignments as Record<string, Assignment>) : await currentAssignments(db, workshopId)
  const draft = p.assignments as Record<string, Assignment>
  const moves = diffAssignments(base, draft)
  return { planId: id, against: againstId ?? 'live', moves, gains: await whatItBuys(db, workshopId, base, draft), counts: { bench: moves.filter((m) => m.change.includes('bench')).length, person: moves.filter((m) => m.change.includes('person')).length, time: moves.filter((m) => m.change.includes('time')).length, new: moves.filter((m) => m.change.includes('new')).length } }
}

export async function publishPlan({ db, realtime }: Deps, actor: Actor, id: number) {
  const result = await db.transaction(async (tx) => {
    await tx.execute(sql`select pg_advisory_xact_lock(${LOCK.livePlan}, ${actor.workshopId})`)
    const [p] = await tx.select().from(s.planVersions).where(and(eq(s.planVersions.id, id), eq(s.planVersions.workshopId, actor.workshopId))).for('update')
    if (!p) throw notFound('Plan')
    if (p.status !== 'draft') throw new AppError({ code: 'conflict', message: `Plan ${p.number} is ${p.status}, not a draft; only drafts can be published` })
    if ((p.score as { feasible?: boolean }).feasible === false)
      throw new AppError({ code: 'unprocessable', message: `Plan ${p.number} breaks a planning rule (${describe((p.score as { violations?: (RuleViolation | string)[] }).violations ?? [], 1) || 'see the draft'}); it cannot become the live plan.` })
    const [live] = await tx.select().from(s.planVersions).where(and(eq(s.planVersions.workshopId, actor.workshopId), eq(s.planVersions.status, 'published')))
    const basedOn = (p.score as { basedOnPlanId?: number | null }).basedOnPlanId ?? null
    if ((live?.id ?? null) !== basedOn)
      throw new AppError({ code: 'conflict', message: `Plan ${live?.number} was published after this draft was made; run the planner again to start from it.` })
    if (live) await tx.update(s.planVersions).set({ status: 'superseded' }).where(eq(s.planVersions.id, live.id))
    const now = new Date().toISOString()
    await tx.update(s.planVersions).set({ status: 'published', publishedAt: now, publishedBy: actor.userId }).where(eq(s.planVersions.id, id))
    // Write the plan onto the operations that are still open; running and finished work keeps what it has.
    const assignments = p.assignments as Record<string, Assignment>
    const ids = Object.keys(assignments).map(Number)
    const open = ids.length ? await tx.select({ id: s.operations.id, status: s.operations.status }).from(s.operations).where(inArray(s.operations.id, ids)) : []
    for (const op of open) {
      if (op.status === 'done' || op.status === 'skipped') continue
      const a = assignments[String(op.id)]!
      await tx.update(s.operations).set({
        plannedBenchId: a.benchId === null ? null : Number(a.benchId), plannedPersonId: a.personId === null ? null : Number(a.personId),
        plannedStart: a.start, plannedEnd: a.end, version: sql`${s.operations.version} + 1`,
      }).where(eq(s.operations.id, op.id))
    }
    await audit(tx, actor, 'publish', 'plan', id, { number: p.number, replaced: live?.number ?? null })
    return { id, number: p.number }
  })
  realtime.emit(actor.workshopId, 'plan:published', { id })
  return getPlan(db, actor.workshopId, result.id)
}

export async function discardPlan({ db, realtime }: Deps, actor: Actor, id: number) {
  await db.transaction(async (tx) => {
    const r = await tx.update(s.planVersions).set({ status: 'discarded' }).where(and(eq(s.planVersions.id, id), eq(s.planVersions.workshopId, actor.workshopId), eq(s.planVersions.status, 'draft'))).returning()
    if (!r.length) {
      await getPlan(db, actor.workshopId, id)
      throw new AppError({ code: 'conflict', message: 'Only a draft can be thrown away' })
    }
    await audit(tx, actor, 'discard', 'plan', id, {})
  })
  realtime.emit(actor.workshopId, 'plan:discarded', { id })
  return getPlan(db, actor.workshopId, id)
}
