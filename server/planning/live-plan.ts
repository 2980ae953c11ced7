// The live plan as one record: what the operations' planned fields hold now (the published plan plus moves by hand, promises
// booked and claims at the bench), read and changed only under its per-workshop advisory lock. Each change to it has one entry
// point, one transaction: publishing a draft (drafts.ts), a move or pin by hand (move.ts), a promise booking its slot and a
// claim putting the step on the claimer's bench (here). The checks are the rule book's (shared/domain/rules.ts). Its figures
// (lateness, pieces late, finish) and its findings against the calendar (steps lying in time no longer worked) are worked out
// from its bars and stored on the published version by each change (here), a change to the calendar included.
import { and, desc, eq, inArray, isNotNull, ne, sql } from 'drizzle-orm'
import * as rules from '../../shared/domain/rules'
import type { RuleViolation, StepRef } from '../../shared/domain/rules'
import { typicalDayMinutes, workingMinutesBetween } from '../../shared/domain/working-time'
import type { Tx } from '../db/client'
import * as s from '../db/schema/index'
import { LOCK } from '../lib/locks'
import type { Actor } from '../lib/route'
import { dayjs, formatDay, workshopWhen } from '../lib/time'
import { clipToWindows, jointWindows, leaveTime, outsideWorkEnd, walkWorkingTime } from '../scheduler/calendar.ts'
import type { Interval } from '../scheduler/model.ts'
import { dayRange } from '../lib/time'
import { audit } from '../services/audit'
import { engineId, type Assignment, type Assignments } from './assignments'
import { loadPlanningData, localTime, type PlanningData } from './problem'

/** Operations still to do or under way: the live plan holds these; finished and removed work keeps its plan as history. */
export const OPEN_OPERATION = ['pending', 'ready', 'claimed', 'paused', 'running'] as const

export interface LivePlan {
  /** The published version it started from (null before the first publication). */
  planId: number | null
  number: number | null
  /** The workshop's latest recorded change when it was read (events are numbered per workshop; see realtime/hub). */
  seq: number
  assignments: Assignments
}

/** One change to the live plan at a time per workshop (held to the end of the transaction; taking it twice is harmless). */
export async function lockLivePlan(tx: Tx, workshopId: number) {
  await tx.execute(sql`select pg_advisory_xact_lock(${LOCK.livePlan}, ${workshopId})`)
}

/**
 * The live plan as it is in this transaction (a change reads it after taking the lock). Steps of a cancelled job bag or of a
 * cancelled order may keep their planned fields, but they are off the plan: they hold no bench and no person, so neither a
 * promise's booking, a claim, a move by hand, a draft's comparison nor the figures see them.
 */
export async function readLivePlan(tx: Tx, workshopId: number): Promise<LivePlan> {
  const rows = await tx
    .select({
      id: s.operations.id,
      benchId: s.operations.plannedBenchId,
      personId: s.operations.plannedPersonId,
      start: s.operations.plannedStart,
      end: s.operations.plannedEnd,
      pinned: s.operations.pinned,
    })
    .from(s.operations)
    .innerJoin(s.jobBags, eq(s.jobBags.id, s.operations.jobBagId))
    .innerJoin(s.orders, eq(s.orders.id, s.jobBags.orderId))
    .where(
      and(
        eq(s.jobBags.workshopId, workshopId),
        isNotNull(s.operations.plannedStart),
        inArray(s.operations.status, [...OPEN_OPERATION]),
        ne(s.jobBags.status, 'cancelled'),
        ne(s.orders.status, 'cancelled'),
      ),
    )
  const [published] = await tx
    .select({ id: s.planVersions.id, number: s.planVersions.number })
    .from(s.planVersions)
    .where(and(eq(s.planVersions.workshopId, workshopId), eq(s.planVersions.status, 'published')))
  const [last] = await tx
    .select({ seq: s.realtimeEvents.seq })
    .from(s.realtimeEvents)
    .where(eq(s.realtimeEvents.workshopId, workshopId))
    .orderBy(desc(s.realtimeEvents.seq))
    .limit(1)
  const assignments: Assignments = new Map()
  for (const r of rows) {
    const a: Assignment = {
      operationId: r.id,
      benchId: r.benchId,
      personId: r.personId,
      start: new Date(r.start!).toISOString(),
      end: new Date(r.end ?? r.start!).toISOString(),
    }
    if (r.pinned) a.pinned = true
    assignments.set(r.id, a)
  }
  return { planId: published?.id ?? null, number: published?.number ?? null, seq: last?.seq ?? 0, assignments }
}

/** Writes one assignment onto its operation's planned fields (the caller holds the lock and has checked it). A pin is set by a move or pin by hand only. */
export async function writeAssignment(tx: Tx, a: Assignment, o: { bumpVersion?: boolean } = {}) {
  const [row] = await tx
    .update(s.operations)
    .set({
      plannedBenchId: a.benchId,
      plannedPersonId: a.personId,
      plannedStart: a.start,
      plannedEnd: a.end,
      ...(o.bumpVersion === false ? {} : { version: sql`${s.operations.version} + 1` }),
    })
    .where(eq(s.operations.id, a.operationId))
    .returning({ id: s.operations.id, version: s.operations.version })
  return row
}

/**
 * Lateness as the workshop counts it, from each job bag's finish (engine minutes, by the engine's job id): each minute after
 * the promised moment weighted by the order's priority, the pieces late, and the working time late (added up, and the latest
 * piece's). Drafts (drafts.ts) and the live plan are scored by this one reckoning.
 */
export function latenessFigures(data: PlanningData, finish: ReadonlyMap<string, number>) {
  let weightedTardiness = 0,
    lateJobs = 0,
    lateWorkingMinutes = 0,
    worstLateWorkingMinutes = 0
  for (const job of data.problem.jobs) {
    const end = finish.get(job.id)
    if (end === undefined || job.due === null || end <= job.due) continue
    weightedTardiness += job.weight * (end - job.due)
    lateJobs++
    const working = workingMinutesBetween(data.meta.open, job.due, end)
    lateWorkingMinutes += working
    worstLateWorkingMinutes = Math.max(worstLateWorkingMinutes, working)
  }
  return {
    weightedTardiness,
    weightedTardinessHours: Math.round((weightedTardiness / 60) * 10) / 10,
    lateJobs,
    lateWorkingMinutes,
    worstLateWorkingMinutes,
    dayMinutes: typicalDayMinutes(data.meta.open),
  }
}

/**
 * The live plan's figures as its bars stand: per job bag of the open work, the end of its last planned step (finished steps
 * have left the plan); `makespan` is the last bar's end in engine minutes (-Infinity with nothing planned).
 */
export function liveFigures(data: PlanningData, assignments: Assignments) {
  const finish = new Map<string, number>()
  let makespan = -Infinity,
    operations = 0
  for (const a of assignments.values()) {
    const m = data.meta.operations.get(String(a.operationId))
    if (!m || m.op.status === 'done' || m.op.status === 'skipped') continue
    const end = data.clock.toMinute(a.end)
    const job = String(m.bag.id)
    finish.set(job, Math.max(finish.get(job) ?? -Infinity, end))
    makespan = Math.max(makespan, end)
    operations++
  }
  return {
    ...latenessFigures(data, finish),
    makespan,
    completion: makespan === -Infinity ? null : data.clock.toDate(makespan).toISOString(),
    jobs: finish.size,
    operations,
  }
}

/**
 * The live plan against the calendar as it is now: each step still to come (not under way, not sent out) whose bar no longer
 * fits the time its bench and person work — bench work with less joint working time inside its bar than it needs, outside work
 * that cannot go out or come back when planned — worded by the rule book, naming the closure, leave or downtime that took the
 * time (or the working hours, when none did). A plan made on that calendar has none.
 */
export function calendarFindings(data: PlanningData, assignments: Assignments): RuleViolation[] {
  const c = data.clock
  // The workshop's local time as findings write it ("Wed 9 Dec 08:43"; the year when it is not this year's).
  const when = workshopWhen(c.timeZone, (m) => c.toDate(m), c.toDate(data.problem.now))
  // Outside work back at midnight is back by the end of the day before (it is counted in whole workshop days), never "00:00".
  const backBy = (m: number) => (when.timeOf(m) === '00:00' ? `the end of ${formatDay(when.dayOf(m - 1), c.timeZone, c.toDate(data.problem.now))}` : when(m))
  const closures = data.meta.closures.map((x) => ({ ...dayRange(c, x.startsOn, x.endsOn), why: `closed: ${x.name}` }))
  const cut = (list: { start: number; end: number; why: string }[], from: number, to: number) =>
    list.filter((x) => x.start < to && from < x.end).map((x) => ({ from: Math.max(from, x.start), to: Math.min(to, x.end), why: x.why }))
  const benches = new Map(data.problem.benches.map((b) => [b.id, b]))
  const people = new Map(data.problem.people.map((p) => [p.id, p]))
  const found: RuleViolation[] = []
  // In the order of the bars (start, then step), so the findings read the same however the plan's rows came back.
  const bars = [...assignments.values()].sort((x, y) => Date.parse(x.start) - Date.parse(y.start) || x.operationId - y.operationId)
  for (const a of bars) {
    const m = data.meta.operations.get(String(a.operationId))
    if (!m || !['pending', 'ready', 'claimed', 'paused'].includes(m.op.status)) continue
    const start = c.toMinute(a.start),
      end = c.toMinute(a.end)
    if (end <= data.problem.now) continue
    const self: StepRef = { operationId: m.op.id, jobId: m.bag.id, name: m.op.name, bag: m.bag.number }
    if (m.kind.outside || m.op.leadDays > 0) {
      const days = data.problem.workshopDays
      if (leaveTime(days, start) === start && outsideWorkEnd(days, start, Math.max(1, m.op.leadDays)) === end) continue
      const dayStart = c.at(dayjs(c.toDate(start)).tz(c.timeZone).format('YYYY-MM-DD'))
      const causes = cut(closures, dayStart, end)
      const why = causes.length ? causes.map((x) => x.why).join('; ') : 'the workshop does not work then'
      found.push(
        rules.outsideWork(self, { why: `it was to go out ${when(start)} and be back by ${backBy(end)}, which no longer fits the workshop's days (${why})` }),
      )
      continue
    }
    const bench = benches.get(engineId(a.benchId) ?? ''),
      person = people.get(engineId(a.personId) ?? '')
    const needs = minutesNeeded(data, a)
    if (!bench || !person || needs === null) continue
    // Paused work goes on from now at the earliest: only its bar's time from then counts for what is left of it (its start,
    // the first start at the bench, is history).
    const paused = m.op.status === 'paused'
    const from = goesOnFrom(data, m.op.status, start)
    const worked = clipToWindows(jointWindows(data.problem).both(bench.id, person.id)!, from, end)
    if (worked.reduce((t, x) => t + x.end - x.start, 0) >= needs) continue
    const causes = [
      ...cut(closures, from, end).map((x) => ({ ...x, resource: 'bench' as const, name: bench.name })),
      ...cut(
        data.meta.downtime
          .filter((d) => d.benchId === a.benchId)
          .map((d) => ({ start: c.toMinute(d.startsAt), end: c.toMinute(d.endsAt), why: `bench out of use${d.reason ? `: ${d.reason}` : ''}` })),
        from,
        end,
      ).map((x) => ({ ...x, resource: 'bench' as const, name: bench.name })),
      ...cut(
        data.meta.leave
          .filter((l) => l.personId === a.personId)
          .map((l) => ({ ...dayRange(c, l.startsOn, l.endsOn), why: `on leave${l.reason ? `: ${l.reason}` : ''}` })),
        from,
        end,
      ).map((x) => ({ ...x, resource: 'person' as const, name: person.name })),
    ]
    for (const x of causes) found.push(rules.workingTime(self, { resource: x.resource, name: x.name, from: x.from, to: x.to, when, why: x.why }))
    // Shorter working hours (no closure, leave or downtime): said when the bar begins or ends outside them. Paused work whose
    // bar, from now, is merely too short for what is left (it was paused for longer than planned) breaks no calendar: the
    // re-timing (`retimeLivePlan`) carries it on from now.
    const inside = (t: number) => worked.some((w) => w.start <= t && t < w.end)
    if (!causes.length && ((!paused && !inside(start)) || !inside(end - 1))) {
      const benchShort = clipToWindows(bench.available, from, end).reduce((t, x) => t + x.end - x.start, 0) < end - from
      found.push(
        rules.workingTime(self, {
          resource: benchShort ? 'bench' : 'person',
          name: benchShort ? bench.name : person.name,
          from,
          to: end,
          when,
          why: 'outside the working hours',
        }),
      )
    }
  }
  return found
}

/**
 * The working minutes a bar of bench work still needs with its bench and person: the engine's option (for work under way, what
 * is left of it — `remaining` in problem.ts), or the person's option at another bench (the minutes depend on the person's speed
 * only), else estimate ÷ speed.
 */
function minutesNeeded(data: PlanningData, a: Assignment): number | null {
  const m = data.meta.operations.get(String(a.operationId))
  if (!m) return null
  const options = data.problem.operations.find((o) => o.id === String(a.operationId))?.options ?? []
  const personId = engineId(a.personId)
  const option = options.find((o) => o.benchId === engineId(a.benchId) && o.personId === personId) ?? options.find((o) => o.personId === personId)
  const speed = data.meta.skills.find((k) => k.personId === a.personId && k.kindId === m.op.kindId)?.speed
  return option?.minutes ?? (speed ? Math.max(1, Math.ceil(m.op.estimateMinutes / speed)) : null)
}

/**
 * The earliest minute bench work can go on from, for a bar starting at `start`: work under way at the bench (running or
 * paused) only from now (its bar's start is its first start, in the past), any other from its bar's start.
 */
function goesOnFrom(data: PlanningData, status: string, start: number): number {
  return isUnderWay(status) ? Math.max(start, data.problem.now) : start
}

/** Work still to start (pending, ready, claimed) whose bar lies wholly in the past: nobody started it, so it can only start from now. */
function leftBehind(data: PlanningData, status: string, end: number): boolean {
  return ['pending', 'ready', 'claimed'].includes(status) && end <= data.problem.now
}

/**
 * Whether some work can no longer be carried out as its bar stands though it breaks no calendar: bench work under way (running
 * or paused) with more left to do than its bar holds from now (worked or paused for longer than its bar allowed), or work still
 * to start whose bar lies wholly in the past. The live plan is then re-timed for its figures.
 */
function pastItsBar(data: PlanningData, assignments: Assignments): boolean {
  const c = data.clock
  const joint = jointWindows(data.problem)
  for (const a of assignments.values()) {
    const m = data.meta.operations.get(String(a.operationId))
    if (!m) continue
    const start = c.toMinute(a.start),
      end = c.toMinute(a.end)
    if (leftBehind(data, m.op.status, end)) return true
    if (!isUnderWay(m.op.status) || m.kind.outside || m.op.leadDays > 0) continue
    const windows = joint.both(engineId(a.benchId), engineId(a.personId))
    const needs = minutesNeeded(data, a)
    if (!windows || needs === null) continue
    const room = clipToWindows(windows, goesOnFrom(data, m.op.status, start), end).reduce((t, x) => t + x.end - x.start, 0)
    if (room < needs) return true
  }
  return false
}

/**
 * The live plan kept as it is — each step on its bench and person, in the order of its bars, never earlier than its bar — and
 * re-timed on the calendar as it is now: a step whose time is no longer worked goes to the next working time of its bench and
 * person (outside work to the next workshop day), and what comes after it on its bench, its person or its routing (with the
 * wait) moves on behind it. Work under way at the bench goes on from now at the earliest: what is left of it is walked from
 * then (its bar keeps its start, the first start at the bench; its end moves) — running work first, as it holds its bench and
 * person now, and never behind another bar. Outside work sent out stays where it is. Work still to start whose bar lies wholly
 * in the past starts from now at the earliest. Bars that still fit and are not pushed stay exactly as they are.
 */
export function retimeLivePlan(data: PlanningData, assignments: Assignments): Assignments {
  const c = data.clock
  const now = data.problem.now
  const joint = jointWindows(data.problem)
  const preds = new Map(data.problem.operations.map((o) => [o.id, o.predecessors]))
  const free = new Map<string, number>()
  const ends = new Map<string, number>()
  const out: Assignments = new Map(assignments)
  const status = (a: Assignment) => data.meta.operations.get(String(a.operationId))?.op.status
  const first = (a: Assignment) => (status(a) === 'running' ? 0 : 1)
  const bars = [...assignments.values()].sort((x, y) => first(x) - first(y) || Date.parse(x.start) - Date.parse(y.start) || x.operationId - y.operationId)
  for (const a of bars) {
    const id = String(a.operationId)
    const m = data.meta.operations.get(id)
    if (!m) continue
    const start = c.toMinute(a.start),
      end = c.toMinute(a.end)
    const keys = [a.benchId !== null ? `b${a.benchId}` : null, a.personId !== null ? `p${a.personId}` : null].filter((k) => k !== null)
    const running = m.op.status === 'running'
    // Work nobody started while its bar lasted can start from now at the earliest.
    let at = leftBehind(data, m.op.status, end) ? Math.max(start, now) : start
    if (!running) {
      for (const k of keys) at = Math.max(at, free.get(k) ?? -Infinity)
      for (const p of preds.get(id) ?? []) {
        const e = ends.get(p)
        if (e !== undefined) at = Math.max(at, e + (data.meta.operations.get(p)?.op.waitAfterMinutes ?? 0))
      }
    }
    let placed: Interval = { start, end }
    if (m.kind.outside || m.op.leadDays > 0) {
      if (!running) {
        const days = data.problem.workshopDays
        const leaves = leaveTime(days, at)
        const back = outsideWorkEnd(days, leaves, Math.max(1, m.op.leadDays))
        if (back !== null && (leaves !== start || back !== end)) placed = { start: leaves, end: back }
      }
    } else {
      const windows = joint.both(engineId(a.benchId), engineId(a.personId))
      const needs = minutesNeeded(data, a)
      if (windows && needs !== null) {
        // Only the bar's time from where the work can go on counts (for work under way, from now: `needs` is what is left).
        const counted = goesOnFrom(data, m.op.status, start)
        const from = goesOnFrom(data, m.op.status, at)
        const fits = from === counted && clipToWindows(windows, counted, end).reduce((t, x) => t + x.end - x.start, 0) >= needs
        const walked = fits ? null : walkWorkingTime(windows, from, needs)
        // Work under way begun before now keeps its start (the first start at the bench); what is left ends where the walk ends.
        const begun = isUnderWay(m.op.status) && start < now
        if (walked?.length) placed = { start: begun ? start : walked[0]!.start, end: walked[walked.length - 1]!.end }
      }
    }
    if (placed.start !== start || placed.end !== end)
      out.set(a.operationId, { ...a, start: c.toDate(placed.start).toISOString(), end: c.toDate(placed.end).toISOString() })
    ends.set(id, placed.end)
    for (const k of keys) free.set(k, Math.max(free.get(k) ?? -Infinity, placed.end))
  }
  return out
}

/**
 * The live plan checked against the calendar (`calendarFindings`), and the bars it can really be carried out with: its own when
 * it fits, else the live plan re-timed (`retimeLivePlan`) — also when some work is past its bar (`pastItsBar`: work under way
 * with more left than its bar holds from now, or work still to start whose bar lies wholly in the past), which breaks no rule
 * but cannot happen as planned. The bars on the board stay as planned; the re-timed ones only give the
 * figures and finishes that can be believed until the manager re-plans.
 */
export function checkLivePlan(data: PlanningData, assignments: Assignments): LiveCheck {
  const findings = [...underWayFindings(data, assignments), ...calendarFindings(data, assignments)]
  const retimed = findings.length > 0 || pastItsBar(data, assignments)
  return { findings, retimed, carriedOut: retimed ? retimeLivePlan(data, assignments) : assignments }
}

/** The live plan checked: its findings, and the bars it can be carried out with (`retimed`: not its own bars but re-timed ones). */
export interface LiveCheck {
  findings: RuleViolation[]
  retimed: boolean
  carriedOut: Assignments
}

/** Work that is under way: bench work running or paused at the bench, outside work sent out (running). */
const UNDER_WAY: readonly string[] = ['running', 'paused']
export const isUnderWay = (status: string | undefined): boolean => UNDER_WAY.includes(status ?? '')

/**
 * Where work under way really is, for a publication that must not move it: bench work from its first start at the bench, on
 * the bench it is (or was last) worked at and with the one who holds it, ending when what is left of it (the engine's
 * remaining minutes: its working time less the time already worked), walked on that bench's and person's time from now, is
 * used up — what is left of running or paused work can only be done from now on; outside work from the moment it was sent out
 * (its planned start, set when it goes), back at the end of its working days counted from there. `live` is the bar it has on
 * the live plan now.
 */
export async function underWayPlacement(tx: Tx, data: PlanningData, live: Assignments, ids: number[]): Promise<Assignments> {
  const c = data.clock
  const out: Assignments = new Map()
  const mine = ids.filter((id) => isUnderWay(data.meta.operations.get(String(id))?.op.status))
  if (!mine.length) return out
  const records = await tx
    .select({ operationId: s.timeRecords.operationId, personId: s.timeRecords.personId, benchId: s.timeRecords.benchId, startedAt: s.timeRecords.startedAt })
    .from(s.timeRecords)
    .where(inArray(s.timeRecords.operationId, mine))
  const joint = jointWindows(data.problem)
  for (const id of mine) {
    const m = data.meta.operations.get(String(id))!
    const bar = live.get(id)
    if (m.kind.outside || m.op.leadDays > 0) {
      if (!bar) continue
      const start = c.toMinute(bar.start)
      const back = outsideWorkEnd(data.problem.workshopDays, start, Math.max(1, m.op.leadDays))
      out.set(id, { operationId: id, benchId: null, personId: null, start: bar.start, end: back === null ? bar.end : c.toDate(back).toISOString() })
      continue
    }
    const own = records.filter((r) => r.operationId === id).sort((x, y) => Date.parse(x.startedAt) - Date.parse(y.startedAt))
    if (!own.length) continue
    const last = own[own.length - 1]!
    const a: Assignment = {
      operationId: id,
      benchId: last.benchId ?? bar?.benchId ?? null,
      personId: m.op.claimedBy ?? last.personId,
      start: new Date(own[0]!.startedAt).toISOString(),
      end: new Date(own[0]!.startedAt).toISOString(),
    }
    const needs = minutesNeeded(data, a) ?? m.op.estimateMinutes
    const from = Math.max(c.toMinute(a.start), data.problem.now)
    const walked = walkWorkingTime(joint.both(engineId(a.benchId), engineId(a.personId)) ?? [], from, needs)
    a.end = c.toDate(walked?.length ? walked[walked.length - 1]!.end : from + needs).toISOString()
    out.set(id, a)
  }
  return out
}

/**
 * Bars still to come that the work under way holds up: a step on the same bench or person whose bar overlaps it, or a next
 * step of its routing planned to start before it ends (with its wait) — worded by the rule book (double booking, routing
 * order). A plan published after that work started (its bars kept where the work really is) can have some; re-timing
 * (`retimeLivePlan`) puts them behind it.
 */
export function underWayFindings(data: PlanningData, assignments: Assignments): RuleViolation[] {
  const c = data.clock
  const when = workshopWhen(c.timeZone, (m) => c.toDate(m), c.toDate(data.problem.now))
  const preds = new Map(data.problem.operations.map((o) => [o.id, o.predecessors]))
  const ref = (id: number): StepRef | null => {
    const m = data.meta.operations.get(String(id))
    return m ? { operationId: m.op.id, jobId: m.bag.id, name: m.op.name, bag: m.bag.number } : null
  }
  const status = (id: number) => data.meta.operations.get(String(id))?.op.status ?? ''
  const kept = [...assignments.values()].filter((a) => isUnderWay(status(a.operationId)))
  const found: RuleViolation[] = []
  const bars = [...assignments.values()].sort((x, y) => Date.parse(x.start) - Date.parse(y.start) || x.operationId - y.operationId)
  for (const b of bars) {
    if (!['pending', 'ready', 'claimed'].includes(status(b.operationId))) continue
    const self = ref(b.operationId)
    if (!self) continue
    const bs = c.toMinute(b.start),
      be = c.toMinute(b.end)
    for (const k of kept) {
      const other = ref(k.operationId)
      if (!other) continue
      const ks = c.toMinute(k.start),
        ke = c.toMinute(k.end)
      const m = data.meta.operations.get(String(k.operationId))!
      if ((preds.get(String(b.operationId)) ?? []).includes(String(k.operationId))) {
        const v = rules.routingOrder(self, { start: bs, predecessor: m.op.name, readyAt: ke + m.op.waitAfterMinutes, waitAfter: m.op.waitAfterMinutes, when })
        if (v) found.push(v)
        continue
      }
      const resource = b.benchId !== null && b.benchId === k.benchId ? 'bench' : b.personId !== null && b.personId === k.personId ? 'person' : null
      if (!resource || !(bs < ke && ks < be)) continue
      const name =
        resource === 'bench'
          ? (data.meta.benches.get(String(b.benchId))?.name ?? 'the bench')
          : (data.meta.people.get(String(b.personId))?.name ?? 'the person')
      found.push(rules.doubleBooking(self, { resource, name, other, from: Math.max(bs, ks), to: Math.min(be, ke), when }))
    }
  }
  return found
}

/** A plan's score as the planner weighs it (engine minutes): weighted lateness, then the last finish. */
type Weighed = { weightedTardiness: number; makespan: number }

/**
 * What a planner run's plan must beat to be offered as a draft: the live plan as its bars stand now (moves by hand and
 * bookings included, as its stored figures count it) and the live plan kept as it is but re-timed from now (`retimed`, the
 * engine's: bars left in the past brought up to now, new work after it) — the worse of the two, so that a plan better than
 * either is offered. Undefined when the engine had no live plan to keep.
 */
export async function liveToBeat(db: Tx, workshopId: number, data: PlanningData, retimed: Weighed | undefined): Promise<Weighed | undefined> {
  if (!retimed) return undefined
  const { weightedTardiness, makespan } = liveFigures(data, checkLivePlan(data, (await readLivePlan(db, workshopId)).assignments).carriedOut)
  const current = { weightedTardiness, makespan }
  const worse =
    current.weightedTardiness !== retimed.weightedTardiness ? current.weightedTardiness > retimed.weightedTardiness : current.makespan > retimed.makespan
  return worse ? current : retimed
}

/**
 * Stores the live plan's figures and findings, worked out again from its bars as they stand in this transaction, on the
 * published version (what else the planner run recorded beside them stays). Where bars no longer fit the calendar
 * (`checkLivePlan`), the findings are stored (`feasible` false, `violations`) and the figures are those of the live plan re-timed
 * from now, never of work that cannot happen when planned. Every change to the live plan, and every change to the calendar,
 * calls it in its own transaction, after the change, under the live plan's lock; `data` is the planning data when the caller
 * has it loaded and it knows every job bag on the plan (a promise's new job bag is not in the data it was placed with).
 */
export async function storeLiveFigures(tx: Tx, workshopId: number, o: { data?: PlanningData; now?: Date } = {}) {
  const [p] = await tx
    .select({ id: s.planVersions.id, score: s.planVersions.score })
    .from(s.planVersions)
    .where(and(eq(s.planVersions.workshopId, workshopId), eq(s.planVersions.status, 'published')))
  if (!p) return null
  const data = o.data ?? (await loadPlanningData(tx, workshopId, o.now ?? new Date()))
  const { findings, carriedOut } = checkLivePlan(data, (await readLivePlan(tx, workshopId)).assignments)
  const { makespan: _makespan, ...figures } = liveFigures(data, carriedOut)
  const checked = { ...figures, feasible: findings.length === 0, violations: findings.slice(0, 20) }
  await tx
    .update(s.planVersions)
    .set({ score: { ...p.score, ...checked } })
    .where(eq(s.planVersions.id, p.id))
  return checked
}

/**
 * A change to the calendar (closure, leave, bench downtime, working hours) inside its transaction: the live plan's lock first,
 * then the change, then the live plan's findings and figures stored again against the new calendar (`storeLiveFigures`). Its
 * bars stay where they are: a step the change leaves in time no one works is shown as broken until the manager re-plans.
 */
export async function calendarChange<T>(tx: Tx, workshopId: number, change: () => Promise<T>): Promise<T> {
  await lockLivePlan(tx, workshopId)
  const out = await change()
  await storeLiveFigures(tx, workshopId)
  return out
}

/** Same bench or same person, at the same time: the double bookings an assignment would make with the rest of the plan. */
function clashes(plan: Assignments, a: Assignment, mine: Interval[], spans: (x: Assignment) => Interval[]) {
  const found: { other: Assignment; resource: 'bench' | 'person'; from: number; to: number }[] = []
  for (const other of plan.values()) {
    if (other.operationId === a.operationId) continue
    const sameBench = a.benchId !== null && other.benchId === a.benchId
    const samePerson = a.personId !== null && other.personId === a.personId
    if (!sameBench && !samePerson) continue
    const hit = spans(other).find((t) => mine.some((x) => x.start < t.end && t.start < x.end))
    if (hit) found.push({ other, resource: sameBench ? 'bench' : 'person', from: hit.start, to: hit.end })
  }
  return found
}

/** Names of some operations, as the rule book names a step. */
async function stepsById(tx: Tx, ids: number[]): Promise<Map<number, StepRef>> {
  if (!ids.length) return new Map()
  const rows = await tx
    .select({ id: s.operations.id, name: s.operations.name, bagId: s.jobBags.id, bag: s.jobBags.number })
    .from(s.operations)
    .innerJoin(s.jobBags, eq(s.jobBags.id, s.operations.jobBagId))
    .where(inArray(s.operations.id, ids))
  return new Map(rows.map((r) => [r.id, { operationId: r.id, jobId: r.bagId, name: r.name, bag: r.bag }]))
}

export type Booking = { booked: true; start: string; end: string; startDate: string; endDate: string; steps: number } | { booked: false; reason: string }

/** A step of a new job bag as a promise placed it (engine minutes; bench and person as the engine names them). */
export interface PromisedStep {
  key: string
  benchId: string | null
  personId: string | null
  start: number
  end: number
  segments: Interval[]
}

/**
 * A promise books the slot it found: inside the order's transaction, under the live plan's lock, each bench step is checked
 * against the live plan as it is now (the rule book's double booking, on the bench's and person's working time); any clash
 * and nothing is booked, the answer saying which booking took the room. Otherwise the new job bag's steps are written.
 */
export async function bookPromise(
  tx: Tx,
  actor: Actor,
  o: { data: PlanningData; orderId: number; steps: PromisedStep[]; completion: number },
): Promise<Booking> {
  await lockLivePlan(tx, actor.workshopId)
  const { data, orderId, steps } = o
  const c = data.clock
  const when = workshopWhen(c.timeZone, (m) => c.toDate(m), c.toDate(data.problem.now))
  const [bag] = await tx.select({ id: s.jobBags.id, number: s.jobBags.number }).from(s.jobBags).where(eq(s.jobBags.orderId, orderId))
  const ops = await tx
    .select({ id: s.operations.id, key: s.operations.key, name: s.operations.name })
    .from(s.operations)
    .where(eq(s.operations.jobBagId, bag!.id))
  const byKey = new Map(ops.map((x) => [x.key, x]))
  const joint = jointWindows(data.problem)
  /** Where another booking really takes time: its span clipped to its bench's and person's shared working time. */
  const spans = (x: Assignment): Interval[] => {
    const w = joint.both(engineId(x.benchId), engineId(x.personId))
    const from = c.toMinute(x.start),
      to = c.toMinute(x.end)
    return w ? clipToWindows(w, from, to) : [{ start: from, end: to }]
  }
  const live = await readLivePlan(tx, actor.workshopId)
  const wanted = steps.map((st) => {
    const op = byKey.get(st.key)!
    const a: Assignment = {
      operationId: op.id,
      benchId: st.benchId === null ? null : Number(st.benchId),
      personId: st.personId === null ? null : Number(st.personId),
      start: c.toDate(st.start).toISOString(),
      end: c.toDate(st.end).toISOString(),
    }
    return { st, op, a }
  })
  for (const { st, op, a } of wanted) {
    if (a.benchId === null && a.personId === null) continue
    const found = clashes(live.assignments, a, st.segments, spans)[0]
    if (!found) continue
    const other = (await stepsById(tx, [found.other.operationId])).get(found.other.operationId)!
    const name =
      found.resource === 'bench'
        ? (data.meta.benches.get(String(a.benchId))?.name ?? 'the bench')
        : (data.meta.people.get(String(a.personId))?.name ?? 'the person')
    const v = rules.doubleBooking(
      { operationId: op.id, jobId: bag!.id, name: op.name, bag: bag!.number },
      { resource: found.resource, name, other, from: found.from, to: found.to, when },
    )
    return {
      booked: false,
      reason: `the room the promise found was taken meanwhile (${other.bag} "${other.name}"; ${v.message}); the manager plans it at the next re-plan`,
    }
  }
  for (const { a } of wanted) await writeAssignment(tx, a)
  // The new job bag is not in the data the promise was placed with: the figures read the workshop again.
  await storeLiveFigures(tx, actor.workshopId, { now: c.toDate(data.problem.now) })
  const first = steps.reduce((m, x) => Math.min(m, x.start), Infinity)
  await audit(tx, actor, 'book', 'order', orderId, { steps: steps.length, start: c.toDate(first).toISOString(), end: c.toDate(o.completion).toISOString() })
  const a = localTime(data, first),
    b = localTime(data, o.completion)
  return { booked: true, start: a.at, end: b.at, startDate: a.date, endDate: b.date, steps: steps.length }
}

export interface ClaimOnPlan {
  from: { benchId: number | null; personId: number | null }
  to: { benchId: number; personId: number }
  /** What the rule book finds with the step on the claimer's bench at its planned time (shown to the manager, not refused: the work is being done). */
  findings: RuleViolation[]
}

/**
 * A claim's effect on the live plan: a planned step claimed by someone else, or at another bench, moves on the plan to the
 * claimer and that bench, at its planned time. The claim itself (status, holder) stays with the bench floor; this runs in the
 * claim's transaction, which takes the live plan's lock before it locks the job bag (the same order as every plan change).
 * Double bookings the move makes are reported as findings, never refused. Unplanned steps stay unplanned (null).
 */
export async function claimOnPlan(
  tx: Tx,
  actor: Actor,
  o: { operationId: number; person: { id: number; name: string }; bench: { id: number; name: string } },
): Promise<ClaimOnPlan | null> {
  await lockLivePlan(tx, actor.workshopId)
  const live = await readLivePlan(tx, actor.workshopId)
  const mine = live.assignments.get(o.operationId)
  if (!mine || (mine.benchId === o.bench.id && mine.personId === o.person.id)) return null
  const a: Assignment = { ...mine, benchId: o.bench.id, personId: o.person.id }
  const span = (x: Assignment) => [{ start: new Date(x.start).getTime() / 60_000, end: new Date(x.end).getTime() / 60_000 }]
  const found = clashes(live.assignments, a, span(a), span)
  const named = await stepsById(tx, [o.operationId, ...found.map((f) => f.other.operationId)])
  const [w] = await tx.select({ tz: s.workshops.timeZone }).from(s.workshops).where(eq(s.workshops.id, actor.workshopId))
  const when = workshopWhen(w?.tz ?? 'UTC', (m) => new Date(m * 60_000))
  const findings = found.map((f) =>
    rules.doubleBooking(named.get(o.operationId)!, {
      resource: f.resource,
      name: f.resource === 'bench' ? o.bench.name : o.person.name,
      other: named.get(f.other.operationId)!,
      from: f.from,
      to: f.to,
      when,
    }),
  )
  // The claim has moved the row's version on already: one change, one version. Its time stays, and with it every finish:
  // the live plan's stored figures hold.
  await writeAssignment(tx, a, { bumpVersion: false })
  return { from: { benchId: mine.benchId, personId: mine.personId }, to: { benchId: o.bench.id, personId: o.person.id }, findings }
}
