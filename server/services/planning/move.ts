// Moving or pinning one bar by hand on the live plan: checked rule by rule, refused with a reason the board can show.
import { and, eq, sql } from 'drizzle-orm'
import type { MoveInput } from '../../../shared/schemas/plan'
import * as s from '../../db/schema/index'
import { AppError, notFound, staleVersion } from '../../errors/app-error'
import type { Actor, Deps } from '../../lib/route'
import { dayjs } from '../../lib/time'
import { intersect, walkWorkingTime, clipToWindows, outsideWorkEnd } from '../../scheduler/calendar.ts'
import type { Interval } from '../../scheduler/model.ts'
import { audit } from '../audit'
import { currentAssignments } from './assignments'
import { loadPlanningData } from './problem'

const refuse = (message: string, rule: string) => new AppError({ code: 'unprocessable', message, details: { rule } })

export async function moveOperation({ db, realtime }: Deps, actor: Actor, opId: number, input: MoveInput, now = new Date()) {
  const data = await loadPlanningData(db, actor.workshopId, now)
  const c = data.clock
  const when = (m: number) => dayjs(c.toDate(m)).tz(c.timeZone).format('ddd D MMM HH:mm')
  const m = data.meta.operations.get(String(opId))
  if (!m) {
    const [row] = await db.select({ id: s.operations.id }).from(s.operations).innerJoin(s.jobBags, eq(s.jobBags.id, s.operations.jobBagId)).where(and(eq(s.operations.id, opId), eq(s.jobBags.workshopId, actor.workshopId)))
    throw row ? refuse('This operation is finished or its order is closed; it is no longer on the plan.', 'closed') : notFound('Operation')
  }
  const { op, kind, bag } = m
  if (op.version !== input.version) throw staleVersion(`Step "${op.name}" of ${bag.number}`)
  if (['running', 'done', 'skipped'].includes(op.status)) throw refuse(`"${op.name}" of ${bag.number} is ${op.status === 'running' ? 'being worked on at the bench' : op.status}; it cannot be moved.`, 'status')
  const outside = kind.outside || op.leadDays > 0
  const benchId = input.benchId === undefined ? op.plannedBenchId : input.benchId
  const personId = input.personId === undefined ? op.plannedPersonId : input.personId
  const startIso = input.start ?? op.plannedStart
  const moving = input.start !== undefined || input.benchId !== undefined || input.personId !== undefined
  let segments: Interval[] = []
  let start = startIso ? c.toMinute(startIso) : null
  let end = op.plannedEnd ? c.toMinute(op.plannedEnd) : null

  if (moving) {
    if (start === null) throw new AppError({ code: 'validation', message: 'start: is required', fields: { start: 'is required' } })
    if (start < data.problem.now) throw refuse(`Cannot plan "${op.name}" in the past (${when(start)}).`, 'not before now')
    if (outside) {
      if (benchId || personId) throw refuse(`"${op.name}" is outside work; it takes no bench and no person.`, 'outside work')
      const back = outsideWorkEnd(data.problem.workshopDays, start, Math.max(1, op.leadDays))
      if (back === null) throw refuse(`"${op.name}" would come back after the end of the calendar.`, 'horizon')
      end = back
      segments = [{ start, end }]
    } else {
      if (!benchId || !personId) throw refuse(`"${op.name}" needs a bench and a person.`, 'resources')
      const bench = data.meta.benches.get(String(benchId))
      const person = data.meta.people.get(String(personId))
      if (!bench) throw refuse('That bench is not in use.', 'bench')
      if (!person) throw refuse('That person is not active.', 'person')
      if (!data.meta.capabilities.some((x) => x.benchId === bench.id && x.kindId === op.kindId)) throw refuse(`${bench.name} cannot host ${kind.name.toLowerCase()} ("${op.name}").`, 'bench capability')
      const skill = data.meta.skills.find((x) => x.personId === person.id && x.kindId === op.kindId)
      if (!skill || skill.level < op.requiredLevel) throw refuse(`${person.name} is not skilled for "${op.name}" (needs ${kind.name.toLowerCase()} at level ${op.requiredLevel}${skill ? `, has ${skill.level}` : ''}).`, 'skill')
      if (op.claimedBy && op.claimedBy !== person.id) throw refuse(`"${op.name}" is claimed by ${data.meta.people.get(String(op.claimedBy))?.name ?? 'someone else'}.`, 'claimed')
      const windows = intersect(data.problem.benches.find((b) => b.id === String(bench.id))!.available, data.problem.people.find((p) => p.id === String(person.id))!.available)
      const minutes = Math.max(1, Math.ceil(op.estimateMinutes / skill.speed))
      const walked = walkWorkingTime(windows, start, minutes)
      if (!walked) throw refuse(`${bench.name} and ${person.name} have no working time left in the calendar for "${op.name}".`, 'working time')
      segments = walked
      // A drop in a break or after hours starts at the next time both are at work.
      start = walked[0]!.start
      end = walked[walked.length - 1]!.end
      const live = await currentAssignments(db, actor.workshopId)
      for (const [otherId, a] of Object.entries(live)) {
        if (otherId === String(opId)) continue
        const sameBench = a.benchId === String(bench.id)
        const samePerson = a.personId === String(person.id)
        if (!sameBench && !samePerson) continue
        const other = data.meta.operations.get(otherId)
        if (!other || other.op.status === 'done') continue
        const w = a.benchId && a.personId ? intersect(data.problem.benches.find((b) => b.id === a.benchId)?.available ?? [], data.problem.people.find((p) => p.id === a.personId)?.available ?? []) : null
        const theirs = w ? clipToWindows(w, c.toMinute(a.start), c.toMinute(a.end)) : [{ start: c.toMinute(a.start), end: c.toMinute(a.end) }]
        const clash = theirs.find((t) => segments.some((x) => x.start < t.end && t.start < x.end))
        if (clash) {
          const who = sameBench ? bench.name : person.name
          throw refuse(`${who} is booked for ${other.bag.number} "${other.op.name}" ${when(clash.start)}–${dayjs(c.toDate(clash.end)).tz(c.timeZone).format('HH:mm')}.`, sameBench ? 'bench double booking' : 'person double booking')
        }
      }
    }
  }
  if (moving || input.pinned === true) {
    // Routing order, for a move and for a pin alike: after every predecessor (and its wait), before every successor.
    if (start === null || end === null) throw refuse(`"${op.name}" is not planned yet; place it on the board before pinning it.`, 'not planned')
    const live = await currentAssignments(db, actor.workshopId)
    const siblings = [...data.meta.operations.values()].filter((x) => x.bag.id === bag.id)
    const doneBefore = data.problem.operations.filter((o) => o.done && o.jobId === String(bag.id) && o.finishedAt !== undefined && o.waitAfter)
    for (const d of doneBefore) {
      const self = data.problem.operations.find((o) => o.id === String(opId))
      if (!self?.predecessors.includes(d.id)) continue
      const ready = d.finishedAt! + d.waitAfter!
      if (start < ready) throw refuse(`"${op.name}" must wait for "${d.name}" (finished) and its ${d.waitAfter} min wait, ready ${when(ready)}.`, 'routing order')
    }
    for (const p of siblings.filter((x) => op.after.includes(x.op.key))) {
      if (p.op.status === 'done' || p.op.status === 'skipped') continue
      const pa = live[String(p.op.id)]
      if (!pa) throw refuse(`"${p.op.name}" comes first and is not planned yet.`, 'routing order')
      const ready = c.toMinute(pa.end) + p.op.waitAfterMinutes
      if (start < ready) throw refuse(`"${op.name}" must wait for "${p.op.name}"${p.op.waitAfterMinutes ? ` and its ${p.op.waitAfterMinutes} min wait` : ''}, ready ${when(ready)}.`, 'routing order')
    }
    for (const n of siblings.filter((x) => x.op.after.includes(op.key))) {
      const na = live[String(n.op.id)]
      if (!na) continue
      if (end! + op.waitAfterMinutes > c.toMinute(na.start)) throw refuse(`"${op.name}" would end after "${n.op.name}" is planned to start (${when(c.toMinute(na.start))}); move that first.`, 'routing order')
    }
  }

  const updated = await db.transaction(async (tx) => {
    const values: Record<string, unknown> = { version: sql`${s.operations.version} + 1` }
    if (moving) Object.assign(values, { plannedBenchId: benchId ?? null, plannedPersonId: personId ?? null, plannedStart: c.toDate(start!).toISOString(), plannedEnd: c.toDate(end!).toISOString() })
    if (input.pinned !== undefined) values.pinned = input.pinned
    const r = await tx.update(s.operations).set(values).where(and(eq(s.operations.id, opId), eq(s.operations.version, input.version))).returning()
    if (!r[0]) throw staleVersion(`Step "${op.name}" of ${bag.number}`)
    await audit(tx, actor, moving ? 'move' : 'pin', 'operation', opId, { benchId, personId, start: moving ? c.toDate(start!).toISOString() : undefined, pinned: input.pinned })
    return r[0]
  })
  realtime.emit(actor.workshopId, 'plan:changed', { id: opId, operationId: opId, version: updated.version })
  return { id: updated.id, version: updated.version, benchId: updated.plannedBenchId, personId: updated.plannedPersonId, start: updated.plannedStart, end: updated.plannedEnd, pinned: updated.pinned }
}
