// Why each step starts when it does, recomputed from a timed plan (the live plan after moves by hand, or any draft).
import type { Interval, Problem, StartReason } from './model.ts'
import { formatMinute, intersect, weekdayOf } from './calendar.ts'

/** One step of a timed plan as the board holds it. */
export interface TimedStep {
  operationId: string
  benchId: string | null
  personId: string | null
  start: number
  end: number
}

const ALWAYS: Interval[] = [{ start: -1e15, end: 1e15 }]

/** Working minutes of `windows` inside [a, b). */
function workIn(windows: Interval[], a: number, b: number): number {
  let t = 0
  for (const w of windows) {
    if (w.end <= a) continue
    if (w.start >= b) break
    t += Math.min(b, w.end) - Math.max(a, w.start)
  }
  return t
}

/**
 * For every step: the constraint that holds it at its start — its pin, a predecessor (with its wait), the bench or the person
 * busy with another step, the job's release, now, or the working time of its bench and person; a step with free joint working
 * time before it (placed there by hand) says so. A constraint binds when no joint working time lies between it and the start.
 */
export function explainStarts(problem: Problem, steps: TimedStep[]): Map<string, StartReason> {
  const ops = new Map(problem.operations.map((o) => [o.id, o]))
  const jobs = new Map(problem.jobs.map((j) => [j.id, j]))
  const bench = new Map(problem.benches.map((b) => [b.id, b]))
  const person = new Map(problem.people.map((p) => [p.id, p]))
  const byId = new Map(steps.map((s) => [s.operationId, s]))
  const weekday = weekdayOf(problem.origin)
  const at = (t: number): string => formatMinute(t, weekday, problem.origin)
  const onBench = new Map<string, TimedStep[]>(),
    withPerson = new Map<string, TimedStep[]>()
  for (const s of steps) {
    if (s.benchId) (onBench.get(s.benchId) ?? onBench.set(s.benchId, []).get(s.benchId)!).push(s)
    if (s.personId) (withPerson.get(s.personId) ?? withPerson.set(s.personId, []).get(s.personId)!).push(s)
  }
  const windowCache = new Map<string, Interval[]>()
  const jointOf = (b: string | null, p: string | null): Interval[] => {
    const key = `${b}/${p}`
    let w = windowCache.get(key)
    if (!w) {
      const bw = b ? bench.get(b)?.available : undefined
      const pw = p ? person.get(p)?.available : undefined
      w = bw && pw ? intersect(bw, pw) : (bw ?? pw ?? ALWAYS)
      windowCache.set(key, w)
    }
    return w
  }
  /** The other step on the same resource that ends last at or before t. */
  const lastBefore = (list: TimedStep[] | undefined, self: string, t: number): TimedStep | null => {
    let best: TimedStep | null = null
    for (const x of list ?? []) if (x.operationId !== self && x.end <= t && (!best || x.end > best.end)) best = x
    return best
  }
  const out = new Map<string, StartReason>()
  for (const s of steps) {
    const op = ops.get(s.operationId)
    if (!op) continue
    if (op.fixed) {
      out.set(s.operationId, { kind: 'fixed', detail: `pinned at ${at(s.start)}` })
      continue
    }
    const outside = (op.outsideWorkingDays ?? 0) > 0
    // Outside work leaves while the workshop is open.
    const joint = outside ? problem.workshopDays : jointOf(s.benchId, s.personId)
    const binds = (t: number): boolean => t <= s.start && workIn(joint, t, s.start) === 0
    // A predecessor (the one ready last).
    let ready = -Infinity,
      readyBy: string | null = null,
      readyWait = 0
    for (const pid of op.predecessors) {
      const pred = ops.get(pid)
      if (!pred) continue
      const end = pred.done ? pred.finishedAt : byId.get(pid)?.end
      if (end === undefined) continue
      const r = end + (pred.waitAfter ?? 0)
      if (r > ready) {
        ready = r
        readyBy = pid
        readyWait = pred.waitAfter ?? 0
      }
    }
    if (readyBy && binds(ready)) {
      const pred = ops.get(readyBy)!
      out.set(s.operationId, {
        kind: 'predecessor',
        blockerId: readyBy,
        detail: `waiting for ${pred.name} to finish${readyWait > 0 ? ` and ${readyWait} min wait` : ''} until ${at(s.start)}`,
      })
      continue
    }
    const b = outside ? null : lastBefore(s.benchId ? onBench.get(s.benchId) : undefined, s.operationId, s.start)
    if (b && binds(b.end)) {
      out.set(s.operationId, {
        kind: 'bench',
        blockerId: b.operationId,
        detail: `waiting for ${bench.get(s.benchId!)?.name ?? s.benchId} (${ops.get(b.operationId)?.name ?? 'busy'}) until ${at(s.start)}`,
      })
      continue
    }
    const w = outside ? null : lastBefore(s.personId ? withPerson.get(s.personId) : undefined, s.operationId, s.start)
    if (w && binds(w.end)) {
      out.set(s.operationId, {
        kind: 'person',
        blockerId: w.operationId,
        detail: `waiting for ${person.get(s.personId!)?.name ?? s.personId} (${ops.get(w.operationId)?.kind ?? 'busy'}) until ${at(s.start)}`,
      })
      continue
    }
    const job = jobs.get(op.jobId)
    if (job && job.release > problem.now && binds(job.release)) {
      out.set(s.operationId, { kind: 'release', detail: `job ${job.name} is released at ${at(job.release)}` })
      continue
    }
    if (binds(problem.now)) {
      out.set(s.operationId, { kind: 'now', detail: `starts as soon as planning allows (${at(s.start)})` })
      continue
    }
    // Nothing binds: either the start is the first joint working time after what allows it, or the step was placed later by hand.
    const allowed = Math.max(problem.now, job?.release ?? -Infinity, ready, b?.end ?? -Infinity, w?.end ?? -Infinity)
    const free = workIn(joint, allowed, s.start)
    if (free > 0)
      out.set(s.operationId, {
        kind: 'by-hand',
        detail: `placed at ${at(s.start)}; its bench and person are free ${free >= 60 ? `${Math.round(free / 6) / 10} h` : `${free} min`} of working time before it`,
      })
    else {
      const names = [s.benchId && bench.get(s.benchId)?.name, s.personId && person.get(s.personId)?.name].filter(Boolean).join(' and ')
      out.set(s.operationId, { kind: 'working-time', detail: `outside working time of ${names || 'the workshop'} until ${at(s.start)}` })
    }
  }
  return out
}
