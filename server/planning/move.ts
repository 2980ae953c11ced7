// Moving or pinning one bar by hand on the live plan: one transaction under the live plan's lock, checked with the rule book
// against the live plan it changes, refused with the rule's message the board can show; the live plan's figures are stored
// again from its bars in the same transaction.
import { and, eq, sql } from 'drizzle-orm'
import type { MoveInput } from '../../shared/schemas/plan'
import * as s from '../db/schema/index'
import { AppError, notFound, staleVersion } from '../errors/app-error'
import type { Actor, Deps } from '../lib/route'
import { workshopWhen } from '../lib/time'
import { jointWindows, walkWorkingTime, clipToWindows, outsideWorkEnd } from '../scheduler/calendar.ts'
import type { Interval } from '../scheduler/model.ts'
import { audit } from '../services/audit'
import * as rules from '../../shared/domain/rules'
import { violation, type RuleViolation, type StepRef } from '../../shared/domain/rules'
import { engineId } from './assignments'
import { lockLivePlan, readLivePlan, storeLiveFigures } from './live-plan'
import { loadPlanningData } from './problem'

const refuse = (message: string, rule: string) => new AppError({ code: 'unprocessable', message, details: { rule } })
/** A rule book finding as the board's refusal: the message to show, the rule's name for the bar's tooltip, the facts. */
const refused = (v: RuleViolation) => new AppError({ code: 'unprocessable', message: v.message, details: { rule: v.rule, severity: v.severity, ...v.details } })
const check = (v: RuleViolation | null) => {
  if (v) throw refused(v)
}

/** A move (bench, person, start) and/or a pin of one operation on the live plan; the board's PATCH. */
export async function moveAssignment({ db, realtime }: Deps, actor: Actor, opId: number, input: MoveInput, now = new Date()) {
  const updated = await db.transaction(async (tx) => {
    // The checks read the live plan they change: one change to it at a time per workshop (every change takes the same lock).
    await lockLivePlan(tx, actor.workshopId)
    const data = await loadPlanningData(tx, actor.workshopId, now)
    const c = data.clock
    const when = workshopWhen(c.timeZone, (m) => c.toDate(m), now)
    const m = data.meta.operations.get(String(opId))
    if (!m) {
      const [row] = await tx
        .select({ id: s.operations.id })
        .from(s.operations)
        .innerJoin(s.jobBags, eq(s.jobBags.id, s.operations.jobBagId))
        .where(and(eq(s.operations.id, opId), eq(s.jobBags.workshopId, actor.workshopId)))
      throw row ? refuse('This operation is finished or its order is closed; it is no longer on the plan.', 'closed') : notFound('Operation')
    }
    const { op, kind, bag } = m
    const self: StepRef = { operationId: op.id, jobId: bag.id, name: op.name, bag: bag.number }
    if (op.version !== input.version) throw staleVersion(`Step "${op.name}" of ${bag.number}`)
    if (['running', 'done', 'skipped'].includes(op.status))
      throw refuse(`"${op.name}" of ${bag.number} is ${op.status === 'running' ? 'being worked on at the bench' : op.status}; it cannot be moved.`, 'status')
    const outside = kind.outside || op.leadDays > 0
    const benchId = input.benchId === undefined ? op.plannedBenchId : input.benchId
    const personId = input.personId === undefined ? op.plannedPersonId : input.personId
    const startIso = input.start ?? op.plannedStart
    const moving = input.start !== undefined || input.benchId !== undefined || input.personId !== undefined
    let segments: Interval[] = []
    let start = startIso ? c.toMinute(startIso) : null
    let end = op.plannedEnd ? c.toMinute(op.plannedEnd) : null
    const live = (await readLivePlan(tx, actor.workshopId)).assignments

    if (moving) {
      if (start === null) throw new AppError({ code: 'validation', message: 'start: is required', fields: { start: 'is required' } })
      check(rules.notBeforeNow(self, { start, now: data.problem.now, when }))
      if (outside) {
        if (benchId || personId) throw refused(rules.outsideWork(self, { why: 'it takes no bench and no person' }))
        const back = outsideWorkEnd(data.problem.workshopDays, start, Math.max(1, op.leadDays))
        if (back === null) throw refused(violation('within the horizon', self, `${op.name} would come back after the end of the calendar.`))
        end = back
        segments = [{ start, end }]
      } else {
        if (!benchId || !personId) throw refused(rules.allowedPair(self, { bench: null, person: null, why: 'it needs a bench and a person' }))
        const bench = data.meta.benches.get(String(benchId))
        const person = data.meta.people.get(String(personId))
        if (!bench) throw refused(rules.allowedPair(self, { bench: String(benchId), person: null, why: 'that bench is not in use' }))
        if (!person) throw refused(rules.allowedPair(self, { bench: bench.name, person: String(personId), why: 'that person is not active' }))
        check(
          rules.benchCapability(self, {
            benchName: bench.name,
            kindName: kind.name,
            capable: data.meta.capabilities.some((x) => x.benchId === bench.id && x.kindId === op.kindId),
          }),
        )
        const skill = data.meta.skills.find((x) => x.personId === person.id && x.kindId === op.kindId)
        check(rules.skill(self, { personName: person.name, kindName: kind.name, level: skill?.level ?? null, required: op.requiredLevel }))
        if (op.claimedBy && op.claimedBy !== person.id)
          throw refused(
            rules.allowedPair(self, {
              bench: bench.name,
              person: person.name,
              why: `it is claimed by ${data.meta.people.get(String(op.claimedBy))?.name ?? 'someone else'}`,
            }),
          )
        const joint = jointWindows(data.problem)
        const windows = joint.both(String(bench.id), String(person.id))!
        const minutes = Math.max(1, Math.ceil(op.estimateMinutes / skill!.speed))
        const walked = walkWorkingTime(windows, start, minutes)
        if (!walked)
          throw refused(violation('within the horizon', self, `${bench.name} and ${person.name} have no working time left in the calendar for “${op.name}”.`))
        segments = walked
        // A drop in a break or after hours starts at the next time both are at work.
        start = walked[0]!.start
        end = walked[walked.length - 1]!.end
        for (const a of live.values()) {
          if (a.operationId === opId) continue
          const sameBench = a.benchId === bench.id
          const samePerson = a.personId === person.id
          if (!sameBench && !samePerson) continue
          const other = data.meta.operations.get(String(a.operationId))
          if (!other || other.op.status === 'done') continue
          const w = a.benchId && a.personId ? (joint.both(engineId(a.benchId), engineId(a.personId)) ?? []) : null
          const theirs = w ? clipToWindows(w, c.toMinute(a.start), c.toMinute(a.end)) : [{ start: c.toMinute(a.start), end: c.toMinute(a.end) }]
          const clash = theirs.find((t) => segments.some((x) => x.start < t.end && t.start < x.end))
          if (clash) {
            throw refused(
              rules.doubleBooking(self, {
                resource: sameBench ? 'bench' : 'person',
                name: sameBench ? bench.name : person.name,
                other: { operationId: other.op.id, jobId: other.bag.id, name: other.op.name, bag: other.bag.number },
                from: clash.start,
                to: clash.end,
                when,
              }),
            )
          }
        }
      }
    }
    if (moving || input.pinned === true) {
      // Routing order, for a move and for a pin alike: after every predecessor (and its wait), before every successor.
      if (start === null || end === null) throw refuse(`"${op.name}" is not planned yet; place it on the board before pinning it.`, 'not planned')
      const siblings = [...data.meta.operations.values()].filter((x) => x.bag.id === bag.id)
      const problemOp = data.problem.operations.find((o) => o.id === String(opId))
      for (const d of data.problem.operations.filter((o) => o.done && o.jobId === String(bag.id) && o.finishedAt !== undefined && o.waitAfter)) {
        if (!problemOp?.predecessors.includes(d.id)) continue
        check(rules.routingOrder(self, { start, predecessor: d.name, readyAt: d.finishedAt! + d.waitAfter!, waitAfter: d.waitAfter!, finished: true, when }))
      }
      for (const p of siblings.filter((x) => op.after.includes(x.op.key))) {
        if (p.op.status === 'done' || p.op.status === 'skipped') continue
        const pa = live.get(p.op.id)
        if (!pa) throw refused(violation('routing order', self, `“${p.op.name}” comes first and is not planned yet.`, { predecessor: p.op.name }))
        check(
          rules.routingOrder(self, {
            start,
            predecessor: p.op.name,
            readyAt: c.toMinute(pa.end) + p.op.waitAfterMinutes,
            waitAfter: p.op.waitAfterMinutes,
            when,
          }),
        )
      }
      for (const n of siblings.filter((x) => x.op.after.includes(op.key))) {
        const na = live.get(n.op.id)
        if (!na) continue
        check(rules.beforeSuccessor(self, { end, waitAfter: op.waitAfterMinutes, successor: n.op.name, successorStart: c.toMinute(na.start), when }))
      }
    }

    const values: Record<string, unknown> = { version: sql`${s.operations.version} + 1` }
    if (moving)
      Object.assign(values, {
        plannedBenchId: benchId ?? null,
        plannedPersonId: personId ?? null,
        plannedStart: c.toDate(start!).toISOString(),
        plannedEnd: c.toDate(end!).toISOString(),
      })
    if (input.pinned !== undefined) values.pinned = input.pinned
    const r = await tx
      .update(s.operations)
      .set(values)
      .where(and(eq(s.operations.id, opId), eq(s.operations.version, input.version)))
      .returning()
    if (!r[0]) throw staleVersion(`Step "${op.name}" of ${bag.number}`)
    await audit(tx, actor, moving ? 'move' : 'pin', 'operation', opId, {
      benchId,
      personId,
      start: moving ? c.toDate(start!).toISOString() : undefined,
      pinned: input.pinned,
    })
    // The plan as it now stands: the published version's lateness and finish follow the bar.
    await storeLiveFigures(tx, actor.workshopId, { data })
    return r[0]
  })
  realtime.emit(actor.workshopId, 'plan:changed', { id: opId, operationId: opId, version: updated.version })
  return {
    id: updated.id,
    version: updated.version,
    benchId: updated.plannedBenchId,
    personId: updated.plannedPersonId,
    start: updated.plannedStart,
    end: updated.plannedEnd,
    pinned: updated.pinned,
  }
}

/** Pinning (or unpinning) one operation where it stands: the same transaction and routing-order checks as a move. */
export function pin(deps: Deps, actor: Actor, opId: number, input: { pinned: boolean; version: number }, now = new Date()) {
  return moveAssignment(deps, actor, opId, { pinned: input.pinned, version: input.version }, now)
}
