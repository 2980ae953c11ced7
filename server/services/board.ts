// The planning board: bars for a window (live plan or a draft), job risk with its reason, calendars, and the week load. The live
// plan's bars that no longer fit the calendar carry the rule book's finding; its job bags' finishes are then those it can
// really reach (the live plan re-timed from now), never those of work that cannot happen when planned.
import { createHash } from 'node:crypto'
import { gzipSync } from 'node:zlib'
import { and, eq, inArray, isNotNull, sql } from 'drizzle-orm'
import type { Db } from '../db/client'
import * as s from '../db/schema/index'
import { dayjs, dayRange, formatInstant, subtract, type Interval } from '../lib/time'
import { clipToWindows, formatMinute, jointWindows, weekdayOf } from '../scheduler/calendar.ts'
import type { StartReason } from '../scheduler/model.ts'
import { explainStarts, outsideLength, type ExplainCalendar } from '../scheduler/explain.ts'
import { typicalDayMinutes, workingMinutesBetween } from '../../shared/domain/working-time'
import { jobRisk } from '../../shared/domain/job-risk'
import { cachedOr, type Cache } from '../lib/cache'
import { engineId, fromStored, type Assignments } from '../planning/assignments'
import { benchTimeOver, loadPlanningData, workingTimeOver, type PlanningData } from '../planning/problem'
import { getPlan, readDraft } from '../planning/drafts'
import { checkLivePlan, readLivePlan, retimeLivePlan, type LiveCheck } from '../planning/live-plan'
import { actualMinutesByOperation, effectiveRecords } from './time-records'
import type { BoardActual, BoardPlanned } from '../../shared/schemas/board'

export interface BoardItem {
  id: number
  jobBagId: number
  jobBagNumber: string
  piece: string
  orderId: number
  orderNumber: string
  customerName: string
  name: string
  kind: string
  kindName: string
  color: string
  hazards: string[]
  outside: boolean
  status: string
  benchId: number | null
  personId: number | null
  start: string
  end: string
  pinned: boolean
  version: number
  estimateMinutes: number
  outsideDays?: number
  requiredLevel: number
  reason: StartReason | null
  /** The live plan's step no longer fits the calendar: the rule book's finding(s), naming the closure, leave or downtime. */
  broken?: string
  /** The bar ends after its job bag's due date. */
  late: boolean
  /** Its job bag finishes after the due date (every bar of the bag, not only those past it). */
  lateJob: boolean
  /**
   * Where planned bench work is really worked when it pauses: its span clipped to its bench's and person's joint working time
   * (two or more pieces; absent for work done in one stretch, running, finished or outside work).
   */
  segments?: { start: string; end: string }[]
  /** The plan's times for the step (a finished step keeps the plan it had). */
  planned: BoardPlanned | null
  /** What happened, from the time records; null for work not started. */
  actual: BoardActual | null
}
/** A job bag's finish on a plan: the end of its last planned step, against the end of its due day, and why it is there. */
export interface JobFinish {
  jobBagId: number
  /** The promised day when there is one, else the due day. */
  due: string
  expectedCompletion: string | null
  latenessMinutes: number
  lateWorkingMinutes: number
  state: 'late' | 'at-risk' | 'on-time' | 'unplanned'
  reason: string | null
  /** Its steps still to come (not under way) that the plan has no bar for. */
  stepsOffPlan: number
}
export interface BoardJob extends JobFinish {
  number: string
  piece: string
  orderNumber: string
  customerName: string
}

export interface SerialisedAnswer {
  json: string
  gzip: Buffer
  etag: string
}

/**
 * Serialised answers kept until the workshop changes (on any instance): the board is read far more often than the
 * workshop changes. Entries also expire after a minute, because "now" moves and lateness with it; and each answer from
 * the cache is first checked against the workshop's latest change number, so no instance answers with a board older
 * than a change another instance committed.
 */
export function cachedAnswer(cache: Cache | undefined, workshopId: number, key: string, load: () => Promise<unknown>): Promise<SerialisedAnswer> {
  return cachedOr(
    cache,
    workshopId,
    key,
    async () => {
      const json = JSON.stringify(await load())
      // Compressed once here rather than on every answer.
      return { json, gzip: gzipSync(json, { level: 6 }), etag: `"${createHash('sha1').update(json).digest('base64url')}"` }
    },
    { ttlMs: 60_000, verify: true },
  )
}

/** A plan's assignments as the board works on them: keyed and named as the engine names things (string ids), with a reason. */
type Shown = { benchId: string | null; personId: string | null; start: string; end: string; reason: StartReason | null }
const shown = (a: Assignments): Record<string, Shown> =>
  Object.fromEntries(
    [...a.values()].map((x) => [
      String(x.operationId),
      { benchId: engineId(x.benchId), personId: engineId(x.personId), start: x.start, end: x.end, reason: null },
    ]),
  )

/** The workshop's calendar in the engine's minutes, so a start reason can name the closure, leave or downtime that held it. */
function reasonCalendar(data: PlanningData): ExplainCalendar {
  const c = data.clock
  return {
    open: data.meta.open,
    closures: data.meta.closures.map((x) => ({ ...dayRange(c, x.startsOn, x.endsOn), name: x.name })),
    leave: data.meta.leave.map((l) => ({ personId: String(l.personId), ...dayRange(c, l.startsOn, l.endsOn), reason: l.reason })),
    downtime: data.meta.downtime.map((d) => ({ benchId: String(d.benchId), start: c.toMinute(d.startsAt), end: c.toMinute(d.endsAt), reason: d.reason })),
  }
}

/** Why running work is where it is: bench work is under way at the bench; outside work has been sent out, for its working days. */
function runningReason(data: PlanningData, id: string, planned: { start: string; end: string } | null): StartReason {
  const m = data.meta.operations.get(id)
  if (!m || !(m.kind.outside || m.op.leadDays > 0)) return { kind: 'fixed', detail: 'being worked on at the bench now' }
  if (!planned) return { kind: 'fixed', detail: 'sent out' }
  const at = (t: number) => formatMinute(t, weekdayOf(data.problem.origin), data.problem.origin)
  const c = data.clock
  return { kind: 'fixed', detail: `sent out ${at(c.toMinute(planned.start))}; ${outsideLength(Math.max(1, m.op.leadDays), c.toMinute(planned.end), at)}` }
}

function windowsFor(data: PlanningData, benchId: string | null, personId: string | null): Interval[] | null {
  const j = jointWindows(data.problem)
  return j.both(benchId, personId) ?? j.bench(benchId) ?? j.person(personId) ?? null
}

/**
 * The worked pieces of planned bench work: its span clipped to its bench's and person's joint working time (as the engine walks
 * it and the rule book checks double booking); undefined when the work runs in one stretch or its calendar is unknown.
 */
function workedPieces(data: PlanningData, a: Shown): { start: string; end: string }[] | undefined {
  const w = windowsFor(data, a.benchId, a.personId)
  if (!w) return undefined
  const c = data.clock
  const pieces = clipToWindows(w, c.toMinute(a.start), c.toMinute(a.end))
  return pieces.length > 1 ? pieces.map((p) => ({ start: c.toDate(p.start).toISOString(), end: c.toDate(p.end).toISOString() })) : undefined
}

/** Steps still to come that a plan can hold: not under way, not finished or skipped. */
const TO_COME = new Set(['pending', 'ready', 'claimed', 'paused'])

/**
 * The live plan checked against the calendar, as the board and the forecasts read it: each step whose bar no longer fits, with
 * its findings in one text, and where the plan can really take each step (the live plan re-timed, when bars no longer fit, work
 * under way has more left than its bar holds from now or work still to start has its bar wholly in the past; else the bars
 * themselves).
 */
function liveFinishes(checked: LiveCheck, bars: Record<string, Shown>) {
  const broken = new Map<string, string>()
  for (const f of checked.findings) if (f.operationId) broken.set(f.operationId, [broken.get(f.operationId), f.message].filter(Boolean).join(' '))
  return { broken, finishes: checked.retimed ? shown(checked.carriedOut) : bars }
}

/**
 * Each open job bag's finish (of all of them, or of those in `only`): the end of its last planned step where the plan can really
 * take it (`finishes`), its lateness against the end of its due day (the promised day when there is one) in clock and in working
 * minutes, late, tight or on time by the one rule (`jobRisk`), and why (a step that no longer fits the calendar names it, else the
 * last step's start reason when the bars carry one). Job bags the planner leaves out (held for the deposit) are unplanned, with why.
 * The board and an order's forecast (drawer and order list) all read job bags' finishes from here.
 */
export function jobFinishes(
  data: PlanningData,
  o: { bars: Record<string, Shown>; finishes: Record<string, Shown>; broken: ReadonlyMap<string, string>; only?: ReadonlySet<number> },
): Map<number, JobFinish> {
  const c = data.clock
  const dayMinutes = typicalDayMinutes(data.meta.open)
  const completion = new Map<number, { end: number; reason: string | null }>()
  const offPlan = new Map<number, number>()
  for (const [id, m] of data.meta.operations) {
    if (o.only && !o.only.has(m.bag.id)) continue
    const a = o.bars[id]
    if (!a && TO_COME.has(m.op.status)) offPlan.set(m.bag.id, (offPlan.get(m.bag.id) ?? 0) + 1)
    const f = o.finishes[id] ?? a
    if (!a || !f || m.op.status === 'done') continue
    const end = new Date(f.end).getTime()
    const cur = completion.get(m.bag.id)
    // A step the re-timing moved (behind work the calendar no longer allows where it was planned, or work going on or starting
    // from now) no longer starts for its bar's reason: say that it moved, not why its bar started when it did. Work under way
    // moves because what is left of it can only go on from now; work nobody started while its bar lasted, because it starts
    // from now at the earliest.
    const moved = f !== a && (f.start !== a.start || f.end !== a.end)
    const barEnds = `its bar ends ${formatInstant(a.end, c.timeZone, c.toDate(data.problem.now))}`
    // Work nobody started while its bar lasted, re-timed to the first working time from now (not held behind other work).
    const now = data.problem.now
    const next = windowsFor(data, a.benchId, a.personId)?.find((x) => x.end > now)
    const overdue =
      ['pending', 'ready', 'claimed'].includes(m.op.status) && c.toMinute(a.end) <= now && (!next || c.toMinute(f.start) === Math.max(next.start, now))
    const why = !moved
      ? a.reason?.detail
      : m.op.status === 'paused'
        ? `paused, and what is left of it can only go on from now (${barEnds})`
        : m.op.status === 'running'
          ? `still running past its bar, and what is left of it can only be done from now (${barEnds})`
          : overdue
            ? `not started while its bar lasted, so it starts from now at the earliest (${barEnds})`
            : `moved later, behind work that can no longer be done where it was planned (${barEnds})`
    if (!cur || end > cur.end) completion.set(m.bag.id, { end, reason: o.broken.get(id) ?? why ?? null })
  }
  // A job bag with a step that no longer fits the calendar names it as the reason for its finish.
  for (const [id, why] of o.broken) {
    const m = data.meta.operations.get(id)
    const cur = m && completion.get(m.bag.id)
    if (cur) cur.reason = why
  }
  const out = new Map<number, JobFinish>()
  for (const { bag, order } of data.meta.operations.values()) {
    if (out.has(bag.id) || (o.only && !o.only.has(bag.id))) continue
    const dueDayStart = dayjs.tz(`${order.promisedDate ?? order.dueDate} 00:00`, c.timeZone)
    const due = dueDayStart.add(1, 'day').valueOf()
    const comp = completion.get(bag.id)
    const lateWorking = comp ? workingMinutesBetween(data.meta.open, c.toMinute(new Date(due)), c.toMinute(new Date(comp.end))) : 0
    out.set(bag.id, {
      jobBagId: bag.id,
      due: order.promisedDate ?? order.dueDate,
      expectedCompletion: comp ? new Date(comp.end).toISOString() : null,
      latenessMinutes: comp ? Math.round((comp.end - due) / 60_000) : 0,
      lateWorkingMinutes: lateWorking,
      state: !comp
        ? 'unplanned'
        : jobRisk({ finish: comp.end, dueDayStart: dueDayStart.valueOf(), dueDayEnd: due, spareWorkingMinutes: -lateWorking, dayMinutes }),
      reason: comp?.reason ?? null,
      stepsOffPlan: offPlan.get(bag.id) ?? 0,
    })
  }
  for (const h of data.meta.held) {
    if (o.only && !o.only.has(h.bag.id)) continue
    out.set(h.bag.id, {
      jobBagId: h.bag.id,
      due: h.order.promisedDate ?? h.order.dueDate,
      expectedCompletion: null,
      latenessMinutes: 0,
      lateWorkingMinutes: 0,
      state: 'unplanned',
      reason: h.reason,
      stepsOffPlan: 0,
    })
  }
  return out
}

/**
 * The finishes of some job bags on the live plan, as the board reckons them (`jobFinishes`), without the board: the planning data
 * and the live plan read once, checked against the calendar (re-timed where it no longer fits; the engine's search never runs),
 * no start reasons, and kept in the app's cache like the board (until the workshop changes, a minute at most), so paging and
 * searching a list read neither again. With the workshop's typical working day, for lateness in its words.
 */
export async function liveJobFinishes(db: Db, workshopId: number, jobBagIds: readonly number[], o: { cache?: Cache; now?: Date } = {}) {
  const live = await cachedOr(
    o.cache,
    workshopId,
    'live-finishes',
    async () => {
      const data = await loadPlanningData(db, workshopId, o.now ?? new Date())
      const bars = (await readLivePlan(db, workshopId)).assignments
      const shownBars = shown(bars)
      return { data, bars: shownBars, ...liveFinishes(checkLivePlan(data, bars), shownBars) }
    },
    { ttlMs: 60_000, verify: true },
  )
  const jobs = jobFinishes(live.data, { bars: live.bars, finishes: live.finishes, broken: live.broken, only: new Set(jobBagIds) })
  return { jobs, dayMinutes: typicalDayMinutes(live.data.meta.open), timeZone: live.data.clock.timeZone }
}

export async function boardData(db: Db, workshopId: number, o: { from: string; to: string; planId?: number; now?: Date }) {
  const data = await loadPlanningData(db, workshopId, o.now ?? new Date())
  const c = data.clock
  let assignments: Record<string, Shown>
  let plan: { id: number; number: number; status: string; publishedAt: string | null } | null = null
  let checked: LiveCheck | null = null
  const [live] = await db
    .select()
    .from(s.planVersions)
    .where(and(eq(s.planVersions.workshopId, workshopId), eq(s.planVersions.status, 'published')))
  if (o.planId) {
    const p = await getPlan(db, workshopId, o.planId)
    assignments = shown(fromStored(p.assignments))
    plan = { id: p.id, number: p.number, status: p.status, publishedAt: p.publishedAt }
  } else {
    const bars = (await readLivePlan(db, workshopId)).assignments
    assignments = shown(bars)
    checked = checkLivePlan(data, bars)
    if (live) plan = { id: live.id, number: live.number, status: live.status, publishedAt: live.publishedAt }
  }
  const { broken, finishes } = checked ? liveFinishes(checked, assignments) : { broken: new Map<string, string>(), finishes: assignments }
  // Reasons come from the plan shown, as it is now (after moves by hand), never from when it was made.
  const steps = Object.entries(assignments)
    .filter(([id]) => data.meta.operations.has(id))
    .map(([id, a]) => ({ operationId: id, benchId: a.benchId, personId: a.personId, start: c.toMinute(a.start), end: c.toMinute(a.end) }))
  const why = explainStarts(data.problem, steps, reasonCalendar(data))
  for (const [id, a] of Object.entries(assignments)) {
    const m = data.meta.operations.get(id)
    a.reason = m?.op.status === 'running' ? runningReason(data, id, a) : (why.get(id) ?? null)
  }
  const winStart = new Date(dayjs.tz(`${o.from} 00:00`, c.timeZone).valueOf())
  const winEnd = new Date(dayjs.tz(`${o.to} 00:00`, c.timeZone).add(1, 'day').valueOf())

  // Per job bag: expected completion = the end of its last planned operation.
  const finished = jobFinishes(data, { bars: assignments, finishes, broken })
  const customers = new Map(
    (await db.select({ id: s.customers.id, name: s.customers.name }).from(s.customers).where(eq(s.customers.workshopId, workshopId))).map((x) => [
      x.id,
      x.name,
    ]),
  )
  const now = o.now ?? new Date()
  const iso = (v: string | Date) => new Date(v).toISOString()
  const overlaps = (a: string | Date, b: string | Date) => new Date(b) > winStart && new Date(a) < winEnd

  // Running bench work: its time records say where it really started.
  const runningIds = [...data.meta.operations.values()].filter((m) => m.op.status === 'running').map((m) => m.op.id)
  const runningRecords = await effectiveRecords(db, runningIds, now)
  // Per job bag, with its names (the job bags the planner leaves out, held for the deposit, are listed as unplanned with why).
  const jobs = new Map<number, BoardJob>()
  const named = [...data.meta.operations.values(), ...data.meta.held]
  for (const { bag, order } of named) {
    const f = finished.get(bag.id)
    if (f && !jobs.has(bag.id))
      jobs.set(bag.id, { ...f, number: bag.number, piece: bag.piece, orderNumber: order.number, customerName: customers.get(order.customerId) ?? '' })
  }
  const items: BoardItem[] = []
  const dayMinutes = typicalDayMinutes(data.meta.open)
  for (const [id, m] of data.meta.operations) {
    const due = dayjs
      .tz(`${m.order.promisedDate ?? m.order.dueDate} 00:00`, c.timeZone)
      .add(1, 'day')
      .valueOf()
    // Finished work is drawn where it really happened (below).
    if (m.op.status === 'done' || m.op.status === 'skipped') continue
    const mine = runningRecords.filter((r) => r.operationId === m.op.id && !r.voided)
    const running = m.op.status === 'running'
    // Running work stays on the board even when no plan placed it (started before any plan was published).
    const a = assignments[id] ?? (running && mine.length ? null : undefined)
    if (a === undefined) continue
    let start = a?.start ?? '',
      end = a?.end ?? ''
    let actual: BoardActual | null = null
    let benchId = a?.benchId ? Number(a.benchId) : null
    let personId = a?.personId ? Number(a.personId) : null
    if (running && mine.length) {
      // From its first start to now, or to its planned end when that is later.
      const first = mine.reduce((x, r) => (r.startedAt < x ? r.startedAt : x), mine[0]!.startedAt)
      const open = mine.find((r) => r.endedAt === null) ?? mine[mine.length - 1]!
      const plannedEnd = a ? new Date(a.end).getTime() : new Date(first).getTime() + m.op.estimateMinutes * 60_000
      start = iso(first)
      end = iso(new Date(Math.max(now.getTime(), plannedEnd)))
      actual = { start: iso(first), end: null, workedMinutes: actualMinutesByOperation(mine).get(m.op.id) ?? 0, records: mine.length, fromRecords: true }
      benchId = open.benchId ?? benchId
      personId = open.personId
    } else if (a && running && (m.kind.outside || m.op.leadDays > 0)) {
      // Sent out: away since the day it left (its planned start is set when it goes).
      actual = { start: iso(a.start), end: null, workedMinutes: 0, records: 0, fromRecords: false }
      end = iso(new Date(Math.max(now.getTime(), new Date(a.end).getTime())))
    }
    if (!overlaps(start, end)) continue
    // The planned person's speed for this kind of work: why the bar is shorter or longer than the estimate.
    const outsideWork = m.kind.outside || m.op.leadDays > 0
    const speed = personId !== null && !outsideWork ? data.meta.skills.find((k) => k.personId === personId && k.kindId === m.op.kindId)?.speed : undefined
    // Planned bench work that pauses (a part-timer's afternoon, a night): the stretches it is really worked.
    const segments = a && !running && !outsideWork ? workedPieces(data, a) : undefined
    items.push({
      id: m.op.id,
      jobBagId: m.bag.id,
      jobBagNumber: m.bag.number,
      piece: m.bag.piece,
      orderId: m.order.id,
      orderNumber: m.order.number,
      customerName: customers.get(m.order.customerId) ?? '',
      name: m.op.name,
      kind: m.kind.code,
      kindName: m.kind.name,
      color: m.kind.color,
      hazards: m.kind.hazards,
      outside: m.kind.outside || m.op.leadDays > 0,
      status: m.op.status,
      benchId,
      personId,
      start,
      end,
      pinned: m.op.pinned,
      version: m.op.version,
      estimateMinutes: m.op.estimateMinutes,
      ...(speed !== undefined ? { speed } : {}),
      ...(m.op.leadDays > 0 ? { outsideDays: m.op.leadDays } : {}),
      requiredLevel: m.op.requiredLevel,
      reason: a?.reason ?? (running ? runningReason(data, id, null) : null),
      ...(broken.has(id) ? { broken: broken.get(id) } : {}),
      late: new Date(finishes[id]?.end ?? a?.end ?? end).getTime() > due,
      lateJob: false,
      ...(segments ? { segments } : {}),
      planned: a ? { start: iso(a.start), end: iso(a.end) } : null,
      actual,
    })
  }
  items.push(...(await finishedItems(db, workshopId, winStart, winEnd, now, customers)))
  // Every bar of a job bag that finishes late says so, not only the bars that end after its due date.
  for (const i of items) i.lateJob = jobs.get(i.jobBagId)?.state === 'late'
  // Bench rows know what they can host and people rows what they are skilled for (moving a bar up or down a row by keyboard).
  const kindCode = (kindId: number) => data.meta.kinds.get(kindId)?.code ?? ''
  const toIso = (m: number) => c.toDate(m).toISOString()
  const ws = c.toMinute(winStart),
    we = c.toMinute(winEnd)
  const cal = windowCalendar(data, o.from, o.to)
  return {
    window: { from: o.from, to: o.to, timeZone: c.timeZone },
    now: (o.now ?? new Date()).toISOString(),
    plan,
    benches: [...data.meta.benches.values()].map((b) => ({
      id: b.id,
      name: b.name,
      kind: b.kind,
      kinds: data.meta.capabilities.filter((x) => x.benchId === b.id).map((x) => kindCode(x.kindId)),
    })),
    people: [...data.meta.people.values()].map((p) => ({
      id: p.id,
      name: p.name,
      skills: Object.fromEntries(data.meta.skills.filter((x) => x.personId === p.id).map((x) => [kindCode(x.kindId), x.level])),
    })),
    items,
    findings: checked?.findings ?? [],
    jobs: [...jobs.values()].sort((a, b) => a.due.localeCompare(b.due)),
    nonWorking: cal.shut.filter((x) => x.end > ws && x.start < we).map((x) => ({ start: toIso(x.start), end: toIso(x.end) })),
    shutWork: (await shutWork(db, data, cal, workshopId, winStart, winEnd, now)).map((x) => ({ start: toIso(x.start), end: toIso(x.end) })),
    dayMinutes,
    closures: data.meta.closures.map((x) => ({ name: x.name, startsOn: x.startsOn, endsOn: x.endsOn })),
    leave: data.meta.leave.map((l) => ({ personId: l.personId, startsOn: l.startsOn, endsOn: l.endsOn, reason: l.reason })),
    downtime: data.meta.downtime.map((d) => ({ benchId: d.benchId, startsAt: d.startsAt, endsAt: d.endsAt, reason: d.reason })),
  }
}

/** Days the board's calendar reaches past its window either side, so a shut stretch across an edge (a weekend) is whole. */
const CALENDAR_MARGIN_DAYS = 7

/**
 * The workshop's calendar over the board's window, whatever weeks it shows (the planning data's starts this Monday, so a week
 * before it had no shut time and never folded): its open hours, the stretches it is shut, and each person's working hours, in
 * the clock's minutes, from a week before the window to a week after it.
 */
function windowCalendar(data: PlanningData, from: string, to: string): { open: Interval[]; shut: Interval[]; people: Interval[][] } {
  const c = data.clock
  const first = dayjs(from).subtract(CALENDAR_MARGIN_DAYS, 'day')
  const count = dayjs(to).diff(first, 'day') + 1 + CALENDAR_MARGIN_DAYS
  const days = Array.from({ length: count }, (_, i) => first.add(i, 'day').format('YYYY-MM-DD'))
  const span = {
    start: c.at(days[0]!),
    end: c.at(
      dayjs(days[days.length - 1]!)
        .add(1, 'day')
        .format('YYYY-MM-DD'),
    ),
  }
  const w = workingTimeOver(c, { ...data.meta, people: data.meta.people.values() }, days)
  return { open: w.open, shut: subtract([span], w.open), people: [...w.people.values()] }
}

/**
 * Work in time the workshop is shut, within the window (engine minutes): someone's own hours and time recorded at a bench (running
 * work up to now) that begin while the workshop is shut, each up to the workshop's next opening or the end of the day it begins
 * on. A clock left running from an open day through the night does not count: it began in open time.
 */
async function shutWork(
  db: Db,
  data: PlanningData,
  cal: { open: Interval[]; people: Interval[][] },
  workshopId: number,
  winStart: Date,
  winEnd: Date,
  now: Date,
): Promise<Interval[]> {
  const c = data.clock
  const open = cal.open
  const ws = c.toMinute(winStart),
    we = c.toMinute(winEnd)
  if (we <= ws) return []
  // Someone's own hours outside the workshop's (a Saturday morning): every shut part of them.
  const stretches: Interval[] = subtract(cal.people.flat(), open)
  // Time records reaching into the window (a day's slack either side for corrections that moved them), corrections applied.
  const slack = 86_400_000
  const recorded = await db
    .selectDistinct({ id: s.timeRecords.operationId })
    .from(s.timeRecords)
    .innerJoin(s.operations, eq(s.operations.id, s.timeRecords.operationId))
    .innerJoin(s.jobBags, eq(s.jobBags.id, s.operations.jobBagId))
    .where(
      and(
        eq(s.jobBags.workshopId, workshopId),
        sql`${s.timeRecords.startedAt} < ${new Date(winEnd.getTime() + slack).toISOString()}`,
        sql`coalesce(${s.timeRecords.endedAt}, ${now.toISOString()}) > ${new Date(winStart.getTime() - slack).toISOString()}`,
      ),
    )
  for (const r of await effectiveRecords(
    db,
    recorded.map((x) => x.id),
    now,
  ))
    if (!r.voided) stretches.push({ start: c.toMinute(r.startedAt), end: c.toMinute(r.endedAt ?? now) })
  const isOpen = (m: number) => open.some((o) => o.start <= m && m < o.end)
  const out: Interval[] = []
  for (const x of stretches) {
    if (x.end <= x.start || isOpen(x.start)) continue
    // Up to the workshop's next opening or the end of that day, whichever comes first.
    const dayEnd = c.at(
      dayjs(dayjs(c.toDate(x.start)).tz(c.timeZone).format('YYYY-MM-DD'))
        .add(1, 'day')
        .format('YYYY-MM-DD'),
    )
    const opens = open.find((o) => o.start > x.start)?.start ?? Infinity
    const start = Math.max(x.start, ws),
      end = Math.min(x.end, dayEnd, opens, we)
    if (end > start) out.push({ start, end })
  }
  // One list, in order, overlaps joined.
  out.sort((a, b) => a.start - b.start)
  const merged: Interval[] = []
  for (const p of out) {
    const last = merged[merged.length - 1]
    if (last && p.start <= last.end) last.end = Math.max(last.end, p.end)
    else merged.push({ ...p })
  }
  return merged
}

/**
 * Finished steps whose actual span (first start to last finish of their time records, corrections applied, voided records
 * left out) reaches into the window, whatever became of their order since; finished outside work from the day it was sent
 * out (its planned start, set when it left) to the moment it was booked back.
 */
async function finishedItems(db: Db, workshopId: number, winStart: Date, winEnd: Date, now: Date, customers: Map<number, string>): Promise<BoardItem[]> {
  // Candidates by the records as written, with a week's slack either side for corrections that moved them.
  const slack = 7 * 86_400_000
  const from = new Date(winStart.getTime() - slack).toISOString(),
    to = new Date(winEnd.getTime() + slack).toISOString()
  const withRecords = await db
    .select({ id: s.operations.id })
    .from(s.timeRecords)
    .innerJoin(s.operations, eq(s.operations.id, s.timeRecords.operationId))
    .innerJoin(s.jobBags, eq(s.jobBags.id, s.operations.jobBagId))
    .where(and(eq(s.jobBags.workshopId, workshopId), eq(s.operations.status, 'done')))
    .groupBy(s.operations.id)
    .having(and(sql`min(${s.timeRecords.startedAt}) < ${to}`, sql`max(coalesce(${s.timeRecords.endedAt}, ${s.timeRecords.startedAt})) > ${from}`))
  const outsideDone = await db
    .select({ id: s.operations.id })
    .from(s.operations)
    .innerJoin(s.jobBags, eq(s.jobBags.id, s.operations.jobBagId))
    .innerJoin(s.operationKinds, eq(s.operationKinds.id, s.operations.kindId))
    .where(
      and(
        eq(s.jobBags.workshopId, workshopId),
        eq(s.operations.status, 'done'),
        isNotNull(s.operations.plannedStart),
        isNotNull(s.operations.finishedAt),
        sql`(${s.operationKinds.outside} or ${s.operations.leadDays} > 0)`,
        sql`${s.operations.plannedStart} < ${winEnd.toISOString()}`,
        sql`${s.operations.finishedAt} > ${winStart.toISOString()}`,
      ),
    )
  const ids = [...new Set([...withRecords, ...outsideDone].map((x) => x.id))]
  if (!ids.length) return []
  const rows = await db
    .select({ op: s.operations, bag: s.jobBags, order: s.orders, kind: s.operationKinds })
    .from(s.operations)
    .innerJoin(s.jobBags, eq(s.jobBags.id, s.operations.jobBagId))
    .innerJoin(s.orders, eq(s.orders.id, s.jobBags.orderId))
    .innerJoin(s.operationKinds, eq(s.operationKinds.id, s.operations.kindId))
    .where(inArray(s.operations.id, ids))
  const records = (await effectiveRecords(db, ids, now)).filter((r) => !r.voided)
  const worked = actualMinutesByOperation(records)
  const out: BoardItem[] = []
  for (const { op, bag, order, kind } of rows) {
    const outside = kind.outside || op.leadDays > 0
    const mine = records.filter((r) => r.operationId === op.id)
    let actual: BoardActual
    let benchId = op.plannedBenchId,
      personId = op.plannedPersonId
    if (mine.length) {
      const start = mine.reduce((x, r) => (Date.parse(r.startedAt) < Date.parse(x) ? r.startedAt : x), mine[0]!.startedAt)
      const last = mine.reduce((x, r) => (Date.parse(r.endedAt ?? r.startedAt) > Date.parse(x.endedAt ?? x.startedAt) ? r : x), mine[0]!)
      actual = {
        start: new Date(start).toISOString(),
        end: new Date(last.endedAt ?? last.startedAt).toISOString(),
        workedMinutes: worked.get(op.id) ?? 0,
        records: mine.length,
        fromRecords: true,
      }
      benchId = last.benchId ?? benchId
      personId = last.personId
    } else if (outside && op.plannedStart && op.finishedAt) {
      actual = { start: new Date(op.plannedStart).toISOString(), end: new Date(op.finishedAt).toISOString(), workedMinutes: 0, records: 0, fromRecords: false }
    } else continue
    if (!(Date.parse(actual.end!) > winStart.getTime() && Date.parse(actual.start) < winEnd.getTime())) continue
    out.push({
      id: op.id,
      jobBagId: bag.id,
      jobBagNumber: bag.number,
      piece: bag.piece,
      orderId: order.id,
      orderNumber: order.number,
      customerName: customers.get(order.customerId) ?? '',
      name: op.name,
      kind: kind.code,
      kindName: kind.name,
      color: kind.color,
      hazards: kind.hazards,
      outside,
      status: op.status,
      benchId: outside ? null : benchId,
      personId: outside ? null : personId,
      start: actual.start,
      end: actual.end!,
      pinned: op.pinned,
      version: op.version,
      estimateMinutes: op.estimateMinutes,
      ...(op.leadDays > 0 ? { outsideDays: op.leadDays } : {}),
      requiredLevel: op.requiredLevel,
      reason: null,
      late: false,
      lateJob: false,
      planned: op.plannedStart && op.plannedEnd ? { start: new Date(op.plannedStart).toISOString(), end: new Date(op.plannedEnd).toISOString() } : null,
      actual,
    })
  }
  return out
}

/**
 * Hours planned against hours available, per bench, per skill and per person, per day and ISO week. A skill's available hours are
 * what its holders have left once their work of other kinds is planned, so a person's day is never offered to several skills at once.
 */
export async function weekLoad(db: Db, workshopId: number, o: { from: string; to: string; planId?: number; now?: Date }) {
  const data = await loadPlanningData(db, workshopId, o.now ?? new Date())
  const c = data.clock
  // Re-timed against the calendar as it is now (bars that still fit stay as they are): work planned in time that leave, a closure
  // or downtime has since taken counts where it would now be done, as the plan's figures count it, rather than vanishing.
  const assignments = shown(retimeLivePlan(data, o.planId ? await readDraft(db, workshopId, o.planId) : (await readLivePlan(db, workshopId)).assignments))
  const days: string[] = []
  for (let d = dayjs(o.from); !d.isAfter(dayjs(o.to)); d = d.add(1, 'day')) days.push(d.format('YYYY-MM-DD'))
  // Today counts from now: the working time already past today is neither available nor still planned (days before today keep
  // their whole figures; the week's total leaves them out).
  const nowMin = data.problem.now
  const dayIv = days.map((d) => {
    const start = c.at(d)
    const end = c.at(dayjs(d).add(1, 'day').format('YYYY-MM-DD'))
    return {
      day: d,
      week: `${dayjs(d).isoWeekYear()}-W${String(dayjs(d).isoWeek()).padStart(2, '0')}`,
      start: start <= nowMin && nowMin < end ? nowMin : start,
      end,
    }
  })
  const minutesIn = (list: Interval[], iv: { start: number; end: number }) => clipToWindows(list, iv.start, iv.end).reduce((t, x) => t + x.end - x.start, 0)
  // Available time comes from the workshop's calendar over the days asked, as the board's folds do (`windowCalendar`), not from
  // the planning data's, which runs from this Monday to its horizon: weeks gone by and weeks past the horizon have their hours too.
  const cal = workingTimeOver(c, { ...data.meta, people: data.meta.people.values() }, days)
  const benchTime = new Map(data.problem.benches.map((b) => [b.id, benchTimeOver(c, cal.open, data.meta.downtime, Number(b.id))]))
  const personTime = (id: string) => cal.people.get(id) ?? []

  type Cell = { day: string; week: string; plannedMinutes: number; availableMinutes: number; operationIds: number[] }
  type Row = { type: 'bench' | 'skill' | 'person'; id: number; name: string; cells: Cell[] }
  const rows: Row[] = []
  // Each planned bench step's worked pieces: its span clipped to its bench's and person's joint working time.
  const worked = new Map<string, { pieces: Interval[]; kindId: number; benchId: string | null; personId: string | null }>()
  for (const [id, a] of Object.entries(assignments)) {
    const m = data.meta.operations.get(id)
    if (!m || m.op.status === 'done' || m.kind.outside || m.op.leadDays > 0) continue
    const w = windowsFor(data, a.benchId, a.personId)
    const s0 = c.toMinute(a.start),
      e0 = c.toMinute(a.end)
    worked.set(id, { pieces: w ? clipToWindows(w, s0, e0) : [{ start: s0, end: e0 }], kindId: m.op.kindId, benchId: a.benchId, personId: a.personId })
  }
  /** A row's cells: the planned minutes of the steps `counts` picks, against `available` minutes in each day. */
  const cellsOf = (
    counts: (w: { kindId: number; benchId: string | null; personId: string | null }) => boolean,
    available: (iv: (typeof dayIv)[number]) => number,
  ) =>
    dayIv.map((iv): Cell => {
      let planned = 0
      const ids: number[] = []
      for (const [id, w] of worked) {
        if (!counts(w)) continue
        const m = minutesIn(w.pieces, iv)
        if (m > 0) {
          planned += m
          ids.push(Number(id))
        }
      }
      return { day: iv.day, week: iv.week, plannedMinutes: planned, availableMinutes: available(iv), operationIds: ids }
    })
  for (const b of data.problem.benches)
    rows.push({
      type: 'bench',
      id: Number(b.id),
      name: b.name,
      cells: cellsOf(
        (w) => w.benchId === b.id,
        (iv) => minutesIn(benchTime.get(b.id)!, iv),
      ),
    })
  const span = { start: dayIv[0]?.start ?? 0, end: dayIv[dayIv.length - 1]?.end ?? 0 }
  for (const k of data.meta.kinds.values()) {
    if (k.outside) continue
    const holders = new Set(data.meta.skills.filter((x) => x.kindId === k.id).map((x) => String(x.personId)))
    // Available: each holder's working time less the time they are planned on work of other kinds (what they could still give
    // this skill), summed over the holders.
    const free = data.problem.people
      .filter((p) => holders.has(p.id))
      .map((p) =>
        subtract(
          clipToWindows(personTime(p.id), span.start, span.end),
          [...worked.values()].filter((w) => w.personId === p.id && w.kindId !== k.id).flatMap((w) => clipToWindows(w.pieces, span.start, span.end)),
        ),
      )
    rows.push({
      type: 'skill',
      id: k.id,
      name: k.name,
      cells: cellsOf(
        (w) => w.kindId === k.id,
        (iv) => free.reduce((t, f) => t + minutesIn(f, iv), 0),
      ),
    })
  }
  for (const p of data.problem.people)
    rows.push({
      type: 'person',
      id: Number(p.id),
      name: p.name,
      cells: cellsOf(
        (w) => w.personId === p.id,
        (iv) => minutesIn(personTime(p.id), iv),
      ),
    })
  const weeks = [...new Set(dayIv.map((d) => d.week))].map((week) => ({ week, days: dayIv.filter((d) => d.week === week).map((d) => d.day) }))
  // Said only when some of today's working time (any bench or person) is already past: before opening, today counts in full.
  const today = dayIv.find((d) => d.start === nowMin)
  const dayStart = today ? c.at(today.day) : nowMin
  const pastToday =
    !!today &&
    [...benchTime.values(), ...data.problem.people.map((p) => personTime(p.id))].some((list) => minutesIn(list, { start: dayStart, end: nowMin }) > 0)
  return {
    from: o.from,
    to: o.to,
    days,
    weeks,
    rows,
    countedFrom: pastToday ? c.toDate(nowMin).toISOString() : null,
    planningLoad: (await db.select({ l: s.workshops.planningLoad }).from(s.workshops).where(eq(s.workshops.id, workshopId)))[0]?.l ?? 0.85,
  }
}
