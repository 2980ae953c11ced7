// Builds the engine's problem from the workshop's data: calendars as minute intervals, job bags as jobs, operations with options.
import { and, eq, inArray, notInArray } from 'drizzle-orm'
import type { Tx } from '../db/client'
import * as s from '../db/schema/index'
import { dayjs, expandPattern, MinuteClock, subtract, dayRange, type Interval } from '../lib/time'
import type { WorkSpan } from '../../shared/schemas/common'
import type { Operation as EngineOperation, Problem } from '../scheduler/model.ts'
import { jointWindows } from '../scheduler/calendar.ts'
import { depositHolds } from '../services/deposit-hold'

export const HORIZON_DAYS = 84

/** Everything loaded for one planning round; `meta` lets the server turn engine ids back into rows and labels. */
export interface PlanningData {
  problem: Problem
  clock: MinuteClock
  meta: {
    operations: Map<
      string,
      {
        op: typeof s.operations.$inferSelect
        bag: typeof s.jobBags.$inferSelect
        order: typeof s.orders.$inferSelect
        kind: typeof s.operationKinds.$inferSelect
      }
    >
    benches: Map<string, typeof s.benches.$inferSelect>
    people: Map<string, typeof s.people.$inferSelect>
    kinds: Map<number, typeof s.operationKinds.$inferSelect>
    nonWorking: Interval[]
    /** The workshop's open hours (minutes), for lateness in working time. */
    open: Interval[]
    /** The workshop's week (a person without a week of their own works it), to reckon working time over other days. */
    weekPattern: WorkSpan[]
    closures: (typeof s.closures.$inferSelect)[]
    leave: (typeof s.leave.$inferSelect)[]
    downtime: (typeof s.benchDowntime.$inferSelect)[]
    skills: (typeof s.personSkills.$inferSelect)[]
    capabilities: (typeof s.benchCapabilities.$inferSelect)[]
    /**
     * Open job bags left out of the problem, and why: metal work waiting for the deposit ("no metal before deposit"). Releasing
     * them at the horizon's end instead would make the engine refuse work it cannot finish, so they are not planned at all.
     */
    held: { bag: typeof s.jobBags.$inferSelect; order: typeof s.orders.$inferSelect; reason: string }[]
  }
}

/** Order priority 1 (when there is time) … 5 (urgent) is the weight of each minute late. */
export const weightOfPriority = (priority: number) => Math.min(5, Math.max(1, priority))

/** Bench × person pairs that can do work of this kind at this level (active benches and people), with each person's minutes. */
export function operationOptions(
  meta: Pick<PlanningData['meta'], 'benches' | 'people' | 'skills' | 'capabilities'>,
  kindId: number,
  requiredLevel: number,
  minutes: (speed: number) => number,
) {
  const benchIds = meta.capabilities
    .filter((c) => c.kindId === kindId)
    .map((c) => c.benchId)
    .filter((id) => meta.benches.has(String(id)))
  const able = meta.skills.filter((k) => k.kindId === kindId && k.level >= requiredLevel && meta.people.has(String(k.personId)))
  return benchIds.flatMap((b) => able.map((k) => ({ benchId: String(b), personId: String(k.personId), minutes: minutes(k.speed) })))
}

/**
 * Working time over some local days: the workshop's open hours less its closures, and each person's own (their week, else the
 * workshop's, less closures and their leave), in the clock's minutes (before its origin too). The planning horizon and the board's
 * weeks, past ones included, are reckoned alike.
 */
export function workingTimeOver(
  clock: MinuteClock,
  cal: Pick<PlanningData['meta'], 'weekPattern' | 'closures' | 'leave'> & { people: Iterable<Pick<typeof s.people.$inferSelect, 'id' | 'weekPattern'>> },
  days: string[],
): { open: Interval[]; people: Map<string, Interval[]> } {
  const closed = cal.closures.map((c) => dayRange(clock, c.startsOn, c.endsOn))
  const people = new Map<string, Interval[]>()
  for (const p of cal.people)
    people.set(
      String(p.id),
      subtract(
        subtract(expandPattern(clock, p.weekPattern ?? cal.weekPattern, days), closed),
        cal.leave.filter((l) => l.personId === p.id).map((l) => dayRange(clock, l.startsOn, l.endsOn)),
      ),
    )
  return { open: subtract(expandPattern(clock, cal.weekPattern, days), closed), people }
}

/** A bench's working time: the workshop's open hours (from `workingTimeOver`) less the bench's downtime. */
export function benchTimeOver(
  clock: MinuteClock,
  open: Interval[],
  downtime: readonly Pick<typeof s.benchDowntime.$inferSelect, 'benchId' | 'startsAt' | 'endsAt'>[],
  benchId: number,
): Interval[] {
  return subtract(
    open,
    downtime.filter((d) => d.benchId === benchId).map((d) => ({ start: clock.toMinute(d.startsAt), end: clock.toMinute(d.endsAt) })),
  )
}

export async function loadPlanningData(db: Tx, workshopId: number, now: Date): Promise<PlanningData> {
  const [w] = await db.select().from(s.workshops).where(eq(s.workshops.id, workshopId))
  if (!w) throw new Error('workshop missing')
  // Minute 0 is the Monday of this ISO week, so the whole week shows on the board.
  const originDay = dayjs(now).tz(w.timeZone).startOf('isoWeek').format('YYYY-MM-DD')
  const clock = new MinuteClock(w.timeZone, originDay)
  const days = clock.days(HORIZON_DAYS)
  const lastDay = days[days.length - 1]!

  // One after another: inside a transaction the queries share one connection, which runs them in turn anyway.
  const closures = await db.select().from(s.closures).where(eq(s.closures.workshopId, workshopId))
  const benches = await db
    .select()
    .from(s.benches)
    .where(and(eq(s.benches.workshopId, workshopId), eq(s.benches.active, true)))
  const caps = await db
    .select({ benchId: s.benchCapabilities.benchId, kindId: s.benchCapabilities.kindId })
    .from(s.benchCapabilities)
    .innerJoin(s.benches, eq(s.benches.id, s.benchCapabilities.benchId))
    .where(eq(s.benches.workshopId, workshopId))
  const downtime = await db
    .select({ d: s.benchDowntime })
    .from(s.benchDowntime)
    .innerJoin(s.benches, eq(s.benches.id, s.benchDowntime.benchId))
    .where(eq(s.benches.workshopId, workshopId))
    .then((r) => r.map((x) => x.d))
  const people = await db
    .select()
    .from(s.people)
    .where(and(eq(s.people.workshopId, workshopId), eq(s.people.active, true)))
  const skills = await db
    .select({ k: s.personSkills })
    .from(s.personSkills)
    .innerJoin(s.people, eq(s.people.id, s.personSkills.personId))
    .where(eq(s.people.workshopId, workshopId))
    .then((r) => r.map((x) => x.k))
  const leave = await db
    .select({ l: s.leave })
    .from(s.leave)
    .innerJoin(s.people, eq(s.people.id, s.leave.personId))
    .where(eq(s.people.workshopId, workshopId))
    .then((r) => r.map((x) => x.l))
  const kinds = await db.select().from(s.operationKinds).where(eq(s.operationKinds.workshopId, workshopId))
  const closed = closures.map((c) => dayRange(clock, c.startsOn, c.endsOn))
  const working = workingTimeOver(clock, { weekPattern: w.weekPattern, closures, leave, people }, days)
  const workshopHours = working.open
  const nonWorking = subtract([{ start: 0, end: clock.at(lastDay, '23:59') }], workshopHours)
  const workshopDays = subtract(
    days.filter((d) => w.weekPattern.some((p) => p.weekday === dayjs(d).isoWeekday())).map((d) => dayRange(clock, d, d)),
    closed,
  )

  const benchModels = benches.map((b) => ({
    id: String(b.id),
    name: b.name,
    available: benchTimeOver(clock, workshopHours, downtime, b.id),
  }))
  const personModels = people.map((p) => ({ id: String(p.id), name: p.name, available: working.people.get(String(p.id))! }))
  const joint = jointWindows({ benches: benchModels, people: personModels })

  // Open work: job bags of orders still to make.
  const orders = await db
    .select()
    .from(s.orders)
    .where(and(eq(s.orders.workshopId, workshopId), notInArray(s.orders.status, ['collected', 'cancelled', 'ready', 'quoted'])))
  const openBags = orders.length
    ? await db
        .select()
        .from(s.jobBags)
        .where(
          and(
            inArray(
              s.jobBags.orderId,
              orders.map((o) => o.id),
            ),
            notInArray(s.jobBags.status, ['complete', 'cancelled']),
          ),
        )
    : []
  const holds = await depositHolds(
    db,
    workshopId,
    openBags.map((b) => b.id),
  )
  const bags = openBags.filter((b) => !holds.has(b.id))
  const ops = bags.length
    ? await db
        .select()
        .from(s.operations)
        .where(
          inArray(
            s.operations.jobBagId,
            bags.map((b) => b.id),
          ),
        )
    : []
  const openRecords = ops.length
    ? await db
        .select()
        .from(s.timeRecords)
        .where(
          inArray(
            s.timeRecords.operationId,
            ops.map((o) => o.id),
          ),
        )
    : []

  const nowMin = clock.toMinute(now)
  const kindMap = new Map(kinds.map((k) => [k.id, k]))
  const orderMap = new Map(orders.map((o) => [o.id, o]))
  const bagMap = new Map(bags.map((b) => [b.id, b]))
  const meta: PlanningData['meta'] = {
    operations: new Map(),
    benches: new Map(benches.map((b) => [String(b.id), b])),
    people: new Map(people.map((p) => [String(p.id), p])),
    kinds: kindMap,
    nonWorking,
    open: workshopHours,
    weekPattern: w.weekPattern,
    closures,
    leave,
    downtime,
    skills,
    capabilities: caps,
    held: openBags.filter((b) => holds.has(b.id)).map((b) => ({ bag: b, order: orderMap.get(b.orderId)!, reason: holds.get(b.id)!.reason })),
  }
  const keyToId = new Map(ops.map((o) => [`${o.jobBagId}:${o.key}`, String(o.id)]))
  const engineOps: EngineOperation[] = []
  for (const op of ops) {
    const bag = bagMap.get(op.jobBagId)!
    const kind = kindMap.get(op.kindId)!
    meta.operations.set(String(op.id), { op, bag, order: orderMap.get(bag.orderId)!, kind })
    const base: EngineOperation = {
      id: String(op.id),
      jobId: String(bag.id),
      name: op.name,
      kind: kind.code,
      predecessors: op.after.map((k) => keyToId.get(`${bag.id}:${k}`)).filter((x): x is string => !!x),
      options: [],
      ...(op.waitAfterMinutes > 0 ? { waitAfter: op.waitAfterMinutes } : {}),
    }
    if (op.status === 'done' || op.status === 'skipped') {
      // When it finished: the step's own finish, else the end of its last time record; its wait (pickle, cure) runs from there.
      const lastRecord = openRecords
        .filter((r) => r.operationId === op.id && r.endedAt)
        .reduce<string | null>((m, r) => (m === null || new Date(r.endedAt!).getTime() > new Date(m).getTime() ? r.endedAt! : m), null)
      const finished = op.status === 'done' ? (op.finishedAt ?? lastRecord) : null
      engineOps.push({ ...base, done: true, ...(finished ? { finishedAt: clock.toMinute(finished) } : {}) })
      continue
    }
    if (op.leadDays > 0 || kind.outside) {
      // Sent out (running) or pinned: away from the day it left (or is pinned to leave).
      const away =
        (op.status === 'running' || op.pinned) && op.plannedStart ? { fixed: { benchId: null, personId: null, start: clock.toMinute(op.plannedStart) } } : {}
      engineOps.push({ ...base, outsideWorkingDays: Math.max(1, op.leadDays), ...away })
      continue
    }
    const records = openRecords.filter((r) => r.operationId === op.id)
    const workedMin = records.reduce((t, r) => t + ((r.endedAt ? new Date(r.endedAt).getTime() : now.getTime()) - new Date(r.startedAt).getTime()) / 60_000, 0)
    const remaining = (speed: number) => Math.max(5, Math.ceil(op.estimateMinutes / speed - workedMin))
    let options = operationOptions(meta, op.kindId, op.requiredLevel, remaining)
    const running = op.status === 'running' ? records.find((r) => !r.endedAt) : undefined
    // Claimed, running or paused work stays with its person (and, when running, its bench) — even when their skill record no
    // longer covers it (a skill taken away or a level raised while the piece was in their hands): the work is theirs until they
    // finish or hand it back, at their recorded speed for the kind (1 when none is left). A holder no longer on the staff list
    // leaves it to anyone able.
    const holder = op.claimedBy && ['claimed', 'running', 'paused'].includes(op.status) ? String(op.claimedBy) : null
    const kept = holder !== null && meta.people.has(holder)
    if (kept) {
      const speed = skills.find((k) => k.personId === op.claimedBy && k.kindId === op.kindId)?.speed ?? 1
      const own = (benchIds: string[]) => benchIds.map((benchId) => ({ benchId, personId: holder, minutes: remaining(speed) }))
      const atBench = running?.benchId && meta.benches.has(String(running.benchId)) ? String(running.benchId) : null
      const mine = options.filter((o) => o.personId === holder)
      const there = mine.filter((o) => atBench === null || o.benchId === atBench)
      if (there.length) options = there
      else if (atBench !== null) options = own([atBench])
      else {
        // Any bench equipped for the kind of work (none left: the step has no option, and the planner says so).
        const equipped = caps.filter((c) => c.kindId === op.kindId && meta.benches.has(String(c.benchId))).map((c) => String(c.benchId))
        options = own([...new Set(equipped)])
      }
    }
    let fixed: EngineOperation['fixed']
    const pinAt = op.pinned && op.plannedStart && op.plannedBenchId && op.plannedPersonId ? clock.toMinute(op.plannedStart) : null
    if (running && kept && options[0]) {
      const o = options[0]
      const windows = joint.both(o.benchId, o.personId)!
      const next = windows.find((x) => x.end > nowMin)
      if (next) fixed = { benchId: o.benchId, personId: o.personId, start: Math.max(next.start, nowMin) }
    } else if (pinAt !== null && pinAt >= nowMin) {
      const pinned = options.filter((o) => o.benchId === String(op.plannedBenchId) && o.personId === String(op.plannedPersonId))
      if (pinned.length) {
        options = pinned
        fixed = { benchId: pinned[0]!.benchId, personId: pinned[0]!.personId, start: pinAt }
      }
    }
    engineOps.push({ ...base, options, ...(fixed ? { fixed } : {}) })
  }

  const jobs = bags.map((b) => {
    const order = orderMap.get(b.orderId)!
    return {
      id: String(b.id),
      name: `${b.number} ${b.piece}`,
      release: Math.max(nowMin, b.releaseAt ? clock.toMinute(b.releaseAt) : nowMin),
      due: clock.at(
        dayjs(order.promisedDate ?? order.dueDate)
          .add(1, 'day')
          .format('YYYY-MM-DD'),
      ),
      weight: weightOfPriority(order.priority),
    }
  })
  const problem: Problem = {
    origin: originDay,
    now: nowMin,
    horizon: clock.at(lastDay, '23:59'),
    workshopDays,
    benches: benchModels,
    people: personModels,
    jobs,
    operations: engineOps,
  }
  return { problem, clock, meta }
}

/** A minute of the plan as an instant and as the workshop's local date. */
export function localTime(data: Pick<PlanningData, 'clock'>, minute: number) {
  const at = data.clock.toDate(minute)
  return { at: at.toISOString(), date: dayjs(at).tz(data.clock.timeZone).format('YYYY-MM-DD') }
}
