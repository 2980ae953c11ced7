// Input checks run before planning: each bad input throws a SchedulingInputError naming the job and operation.
import type { FixedPlacement, Interval, Operation, Problem } from './model.ts'
import { SchedulingInputError } from './model.ts'
import { clipToWindows, intersect, outsideWorkEnd, walkWorkingTime } from './calendar.ts'

/** Longest single operation we accept: 60 working days of 8 hours. Anything longer is a data-entry mistake. */
export const MAX_OPERATION_MINUTES = 60 * 8 * 60
/** Longest outside work we accept, in working days. */
export const MAX_OUTSIDE_DAYS = 250

const label = (op: Operation): string => `operation "${op.name}" (${op.id})`

/** Throws SchedulingInputError for the first problem found in the input; returns quietly when the input can be planned. */
export function checkProblem(problem: Problem): void {
  const jobs = new Map(problem.jobs.map((j) => [j.id, j]))
  const benches = new Map(problem.benches.map((b) => [b.id, b]))
  const people = new Map(problem.people.map((p) => [p.id, p]))
  const ops = new Map<string, Operation>()
  const jobName = (id: string): string => jobs.get(id)?.name ?? id

  const unique = (ids: string[], what: string): void => {
    const seen = new Set<string>()
    for (const id of ids) {
      if (seen.has(id)) throw new SchedulingInputError({ code: 'duplicate-id', message: `Two ${what} share the id "${id}"` })
      seen.add(id)
    }
  }
  unique(
    problem.jobs.map((j) => j.id),
    'jobs',
  )
  unique(
    problem.benches.map((b) => b.id),
    'benches',
  )
  unique(
    problem.people.map((p) => p.id),
    'people',
  )
  unique(
    problem.operations.map((o) => o.id),
    'operations',
  )
  if (!Number.isFinite(problem.now) || !Number.isFinite(problem.horizon) || problem.horizon <= problem.now) {
    throw new SchedulingInputError({ code: 'bad-calendar', message: `The horizon (${problem.horizon}) must be a number after now (${problem.now})` })
  }
  const sortedDisjoint = (list: Interval[], what: string): void => {
    for (let i = 0; i < list.length; i++) {
      const w = list[i]!
      if (!Number.isFinite(w.start) || !Number.isFinite(w.end) || w.end <= w.start || (i > 0 && w.start < list[i - 1]!.end)) {
        throw new SchedulingInputError({
          code: 'bad-calendar',
          message: `The calendar of ${what} must be sorted, disjoint, non-empty intervals (problem at entry ${i})`,
        })
      }
    }
  }
  for (const b of problem.benches) sortedDisjoint(b.available, `bench ${b.name}`)
  for (const p of problem.people) sortedDisjoint(p.available, `${p.name}`)
  sortedDisjoint(problem.workshopDays, 'the workshop days')

  for (const op of problem.operations) {
    ops.set(op.id, op)
    const job = jobs.get(op.jobId)
    if (!job)
      throw new SchedulingInputError({ code: 'unknown-job', operationId: op.id, jobId: op.jobId, message: `${label(op)} belongs to unknown job ${op.jobId}` })
  }
  for (const op of problem.operations) {
    const where = { jobId: op.jobId, operationId: op.id }
    const jn = jobName(op.jobId)
    for (const p of op.predecessors) {
      const pred = ops.get(p)
      if (!pred) throw new SchedulingInputError({ code: 'unknown-predecessor', ...where, message: `Job ${jn}: ${label(op)} waits for unknown operation ${p}` })
      if (pred.jobId !== op.jobId)
        throw new SchedulingInputError({
          code: 'foreign-predecessor',
          ...where,
          message: `Job ${jn}: ${label(op)} waits for ${label(pred)} of another job (${jobName(pred.jobId)}); routings stay within one job bag`,
        })
    }
    if (op.done) {
      if (op.finishedAt !== undefined && !Number.isFinite(op.finishedAt))
        throw new SchedulingInputError({
          code: 'bad-duration',
          ...where,
          message: `Job ${jn}: finished ${label(op)} has finishedAt ${op.finishedAt}; expected a minute`,
        })
      continue
    }
    const outside = op.outsideWorkingDays !== undefined && op.outsideWorkingDays > 0
    if (
      op.outsideWorkingDays !== undefined &&
      (!Number.isInteger(op.outsideWorkingDays) || op.outsideWorkingDays < 0 || op.outsideWorkingDays > MAX_OUTSIDE_DAYS)
    ) {
      throw new SchedulingInputError({
        code: 'bad-duration',
        ...where,
        message: `Job ${jn}: ${label(op)} has outside work of ${op.outsideWorkingDays} working days; expected a whole number from 0 to ${MAX_OUTSIDE_DAYS}`,
      })
    }
    if (op.waitAfter !== undefined && (!Number.isFinite(op.waitAfter) || op.waitAfter < 0 || op.waitAfter > MAX_OPERATION_MINUTES)) {
      throw new SchedulingInputError({ code: 'bad-duration', ...where, message: `Job ${jn}: ${label(op)} has a wait-after of ${op.waitAfter} minutes` })
    }
    if (!outside && op.options.length === 0) {
      throw new SchedulingInputError({
        code: 'no-option',
        ...where,
        message: `Job ${jn}: no bench and person can do ${label(op)} (kind ${op.kind}); add the skill to someone or a suitable bench`,
      })
    }
    for (const o of op.options) {
      if (o.benchId !== null && !benches.has(o.benchId))
        throw new SchedulingInputError({ code: 'unknown-resource', ...where, message: `Job ${jn}: ${label(op)} names unknown bench ${o.benchId}` })
      if (o.personId !== null && !people.has(o.personId))
        throw new SchedulingInputError({ code: 'unknown-resource', ...where, message: `Job ${jn}: ${label(op)} names unknown person ${o.personId}` })
      if (!outside && (!Number.isFinite(o.minutes) || o.minutes <= 0 || o.minutes > MAX_OPERATION_MINUTES)) {
        throw new SchedulingInputError({
          code: 'bad-duration',
          ...where,
          message: `Job ${jn}: ${label(op)} has a duration of ${o.minutes} minutes; expected more than 0 and at most ${MAX_OPERATION_MINUTES}`,
        })
      }
    }
    if (op.fixed) {
      const f = op.fixed
      // Work at the bench that is pinned to an end must take some time: an end at its start leaves nothing to plan.
      if (!Number.isFinite(f.start) || (f.end !== undefined && !(outside ? f.end >= f.start : f.end > f.start))) {
        throw new SchedulingInputError({ code: 'bad-duration', ...where, message: `Job ${jn}: pinned ${label(op)} has start ${f.start} and end ${f.end}` })
      }
      // Outside work holds no bench and no person, so its pin cannot keep one.
      if (outside && (f.benchId !== null || f.personId !== null)) {
        throw new SchedulingInputError({
          code: 'unknown-resource',
          ...where,
          message: `Job ${jn}: ${label(op)} is outside work, which takes no bench and no person, but is pinned to ${[f.benchId && `bench ${benches.get(f.benchId)?.name ?? f.benchId}`, f.personId && (people.get(f.personId)?.name ?? f.personId)].filter(Boolean).join(' and ')}`,
        })
      }
      // Its end, when given, closes a stretch of working time (the last worked minute is before it), as its start opens one.
      const inside = (list: Interval[]): boolean =>
        list.some((w) => w.start <= f.start && f.start < w.end) && (f.end === undefined || list.some((w) => w.start < f.end! && f.end! <= w.end))
      if (f.benchId !== null) {
        const b = benches.get(f.benchId)
        if (!b)
          throw new SchedulingInputError({ code: 'unknown-resource', ...where, message: `Job ${jn}: pinned ${label(op)} names unknown bench ${f.benchId}` })
        if (!outside && !inside(b.available))
          throw new SchedulingInputError({
            code: 'fixed-outside-working-time',
            ...where,
            message: `Job ${jn}: ${label(op)} is pinned at minute ${f.start}${f.end !== undefined ? ` to ${f.end}` : ''}, outside the working time of bench ${b.name}`,
          })
      }
      if (f.personId !== null) {
        const p = people.get(f.personId)
        if (!p)
          throw new SchedulingInputError({ code: 'unknown-resource', ...where, message: `Job ${jn}: pinned ${label(op)} names unknown person ${f.personId}` })
        if (!outside && !inside(p.available))
          throw new SchedulingInputError({
            code: 'fixed-outside-working-time',
            ...where,
            message: `Job ${jn}: ${label(op)} is pinned at minute ${f.start}${f.end !== undefined ? ` to ${f.end}` : ''}, outside the working time of ${p.name}`,
          })
      }
    }
  }
  for (const job of problem.jobs) {
    if (!Number.isFinite(job.release) || (job.due !== null && !Number.isFinite(job.due)) || !Number.isFinite(job.weight) || job.weight < 0) {
      throw new SchedulingInputError({
        code: 'bad-duration',
        jobId: job.id,
        message: `Job ${job.name}: release, due date and weight must be numbers (weight not negative)`,
      })
    }
  }

  // Cycles in a routing, by depth-first search; the message lists the operations on the cycle.
  const state = new Map<string, 1 | 2>()
  const stack: string[] = []
  const visit = (id: string): void => {
    state.set(id, 1)
    stack.push(id)
    for (const p of ops.get(id)!.predecessors) {
      const s = state.get(p)
      if (s === 1) {
        const cycle = stack.slice(stack.indexOf(p)).map((x) => ops.get(x)!)
        const op = ops.get(id)!
        throw new SchedulingInputError({
          code: 'routing-cycle',
          jobId: op.jobId,
          operationId: id,
          message: `Job ${jobName(op.jobId)}: the routing has a cycle through ${cycle.map((o) => `"${o.name}" (${o.id})`).join(' → ')}`,
        })
      }
      if (s === undefined) visit(p)
    }
    stack.pop()
    state.set(id, 2)
  }
  for (const op of problem.operations) if (!state.has(op.id)) visit(op.id)

  // Work that cannot fit before the horizon even with the whole workshop to itself.
  const finish = new Map<string, number>()
  const order: Operation[] = []
  {
    const indeg = new Map(problem.operations.map((o) => [o.id, o.predecessors.length]))
    const succ = new Map<string, string[]>()
    for (const o of problem.operations) for (const p of o.predecessors) (succ.get(p) ?? succ.set(p, []).get(p)!).push(o.id)
    const queue = problem.operations.filter((o) => o.predecessors.length === 0)
    for (let h = 0; h < queue.length; h++) {
      const o = queue[h]!
      order.push(o)
      for (const s of succ.get(o.id) ?? []) {
        const d = indeg.get(s)! - 1
        indeg.set(s, d)
        if (d === 0) queue.push(ops.get(s)!)
      }
    }
  }
  // The joint working time of a bench and a person, worked out once per pair (many steps share a pair).
  const jointTime = new Map<string, Interval[]>()
  const windowsOf = (benchId: string | null, personId: string | null): Interval[] => {
    const key = `${benchId ?? ''}\u0000${personId ?? ''}`
    let w = jointTime.get(key)
    if (!w) {
      const b = benchId !== null ? benches.get(benchId)!.available : null
      const p = personId !== null ? people.get(personId)!.available : null
      w = b && p ? intersect(b, p) : (b ?? p ?? [{ start: -1e15, end: 1e15 }])
      jointTime.set(key, w)
    }
    return w
  }
  /**
   * The worked stretches of pinned or running work: up to its end where one is given, else its minutes (those of its pinned
   * pair, else of its first option) run through the working time of its bench and person from its start; null past the calendars.
   */
  const pinnedStretches = (op: Operation, f: FixedPlacement): Interval[] | null => {
    const w = windowsOf(f.benchId, f.personId)
    if (f.end !== undefined) return clipToWindows(w, f.start, f.end)
    const minutes = (op.options.find((o) => o.benchId === f.benchId && o.personId === f.personId) ?? op.options[0])?.minutes ?? 0
    return walkWorkingTime(w, f.start, minutes)
  }
  // Pinned and running work keeps its place, so two such steps may not hold one bench or one person at the same minute: no plan
  // could keep both. Their worked stretches are compared (a pin over lunch leaves the lunch hour free).
  const held = new Map<string, { op: Operation; start: number; end: number }[]>()
  for (const op of problem.operations) {
    const f = op.fixed
    if (!f || op.done || (op.outsideWorkingDays !== undefined && op.outsideWorkingDays > 0)) continue
    const segs = pinnedStretches(op, f) ?? []
    for (const key of [f.benchId !== null ? `bench ${benches.get(f.benchId)!.name}` : null, f.personId !== null ? people.get(f.personId)!.name : null]) {
      if (key === null) continue
      const list = held.get(key) ?? held.set(key, []).get(key)!
      for (const g of segs) if (g.end > g.start) list.push({ op, start: g.start, end: g.end })
    }
  }
  for (const [who, list] of held) {
    list.sort((a, b) => a.start - b.start || a.end - b.end)
    // The stretch reaching furthest so far: any earlier one that b overlaps ends no later (one step's stretches are disjoint).
    let a = list[0]!
    for (let k = 1; k < list.length; k++) {
      const b = list[k]!
      if (b.start >= a.end || a.op === b.op) {
        if (b.end > a.end) a = b
        continue
      }
      throw new SchedulingInputError({
        code: 'fixed-overlap',
        jobId: b.op.jobId,
        operationId: b.op.id,
        message: `Job ${jobName(b.op.jobId)}: ${label(b.op)} and job ${jobName(a.op.jobId)}: ${label(a.op)} are both pinned or running on ${who} from minute ${b.start} to ${Math.min(a.end, b.end)}; no plan can keep both, so unpin or move one of them`,
      })
    }
  }

  for (const op of order) {
    if (op.done) {
      finish.set(op.id, op.finishedAt ?? op.fixed?.end ?? -Infinity)
      continue
    }
    const job = jobs.get(op.jobId)!
    let est = Math.max(problem.now, job.release)
    for (const p of op.predecessors) est = Math.max(est, finish.get(p)! + (ops.get(p)!.waitAfter ?? 0))
    let end: number | null
    const away = op.outsideWorkingDays !== undefined && op.outsideWorkingDays > 0
    if (op.fixed && away) end = outsideWorkEnd(problem.workshopDays, op.fixed.start, op.outsideWorkingDays!)
    else if (op.fixed) {
      const f = op.fixed
      end = f.end ?? pinnedStretches(op, f)?.at(-1)?.end ?? null
    } else if (away) end = outsideWorkEnd(problem.workshopDays, est, op.outsideWorkingDays!)
    else {
      end = null
      for (const o of op.options) {
        const segs = walkWorkingTime(windowsOf(o.benchId, o.personId), est, o.minutes)
        const e = segs ? segs[segs.length - 1]!.end : null
        if (e !== null && (end === null || e < end)) end = e
      }
    }
    if (end === null || end > problem.horizon) {
      throw new SchedulingInputError({
        code: 'beyond-horizon',
        jobId: op.jobId,
        operationId: op.id,
        message: `Job ${job.name}: ${label(op)} cannot finish before the end of the calendars (minute ${problem.horizon}) even with its bench and person free; extend the horizon`,
      })
    }
    finish.set(op.id, end)
  }
}
