// Independent plan checker: one function per scheduling rule, written apart from the decoder, each violation carrying a readable message.
import type { Interval, Operation, Plan, PlannedOperation, Problem, Violation } from './model.ts'

interface Context {
  problem: Problem
  plan: Plan
  ops: Map<string, Operation>
  planned: Map<string, PlannedOperation>
  benches: Map<string, Problem['benches'][number]>
  people: Map<string, Problem['people'][number]>
}

type Rule = (ctx: Context) => Violation[]

const isOutside = (op: Operation): boolean => (op.outsideWorkingDays ?? 0) > 0

const mergedCache = new WeakMap<Interval[], Interval[]>()
/** The list with touching intervals joined, so that work running across a join counts as covered. */
const merged = (list: Interval[]): Interval[] => {
  let m = mergedCache.get(list)
  if (!m) {
    m = []
    for (const w of [...list].sort((a, b) => a.start - b.start)) {
      const last = m[m.length - 1]
      if (last && w.start <= last.end) last.end = Math.max(last.end, w.end)
      else m.push({ start: w.start, end: w.end })
    }
    mergedCache.set(list, m)
  }
  return m
}

/** Is [s, e) inside the available time of the list? */
const covered = (list: Interval[], s: number, e: number): boolean => {
  const m = merged(list)
  let lo = 0, hi = m.length
  while (lo < hi) { const mid = (lo + hi) >> 1; if (m[mid]!.end > s) hi = mid; else lo = mid + 1 }
  const w = m[lo]
  return w !== undefined && w.start <= s && e <= w.end
}

/** Every operation not done is planned exactly once; nothing else is planned. */
const everyOperationPlannedOnce: Rule = ({ problem, plan, ops }) => {
  const out: Violation[] = []
  const count = new Map<string, number>()
  for (const p of plan.operations) count.set(p.operationId, (count.get(p.operationId) ?? 0) + 1)
  for (const op of problem.operations) {
    const k = count.get(op.id) ?? 0
    if (op.done && k > 0) out.push({ rule: 'done work is not planned again', operationId: op.id, jobId: op.jobId, message: `${op.name} is done but appears in the plan` })
    if (!op.done && k !== 1) out.push({ rule: 'every operation planned once', operationId: op.id, jobId: op.jobId, message: `${op.name} is planned ${k} times` })
  }
  for (const id of count.keys()) if (!ops.has(id)) out.push({ rule: 'every operation planned once', operationId: id, message: `the plan contains unknown operation ${id}` })
  return out
}

/** The bench and person used are one of the operation's options (or its pinned pair; none for outside work). */
const allowedBenchAndPerson: Rule = ({ plan, ops }) => {
  const out: Violation[] = []
  for (const p of plan.operations) {
    const op = ops.get(p.operationId)
    if (!op) continue
    let ok: boolean
    if (op.fixed) ok = p.benchId === op.fixed.benchId && p.personId === op.fixed.personId
    else if (isOutside(op)) ok = p.benchId === null && p.personId === null
    else ok = op.options.some((o) => o.benchId === p.benchId && o.personId === p.personId)
    if (!ok) out.push({ rule: 'allowed bench and person', operationId: op.id, jobId: op.jobId, message: `${op.name} is on bench ${p.benchId ?? '-'} with ${p.personId ?? 'nobody'}, which is not one of its options` })
  }
  return out
}

/** Segments are ordered, inside [start, end), begin at start and end at end, and add up to the work required. */
const segmentsAddUp: Rule = ({ plan, ops }) => {
  const out: Violation[] = []
  for (const p of plan.operations) {
    const op = ops.get(p.operationId)
    if (!op) continue
    const bad = (why: string): void => { out.push({ rule: 'work adds up', operationId: op.id, jobId: op.jobId, message: `${op.name}: ${why}` }) }
    const segs = p.segments
    if (segs.length === 0) { bad('has no worked segments'); continue }
    let ordered = true
    for (let i = 0; i < segs.length; i++) {
      const s = segs[i]!
      if (s.end < s.start || (i > 0 && s.start < segs[i - 1]!.end)) ordered = false
    }
    if (!ordered) { bad('segments overlap or run backwards'); continue }
    if (segs[0]!.start !== p.start || segs[segs.length - 1]!.end !== p.end) bad(`segments span ${segs[0]!.start}–${segs[segs.length - 1]!.end} but the operation says ${p.start}–${p.end}`)
    if (op.fixed || isOutside(op)) continue
    const worked = segs.reduce((a, s) => a + (s.end - s.start), 0)
    const option = op.options.find((o) => o.benchId === p.benchId && o.personId === p.personId)
    if (option && worked !== option.minutes) bad(`worked ${worked} min but needs ${option.minutes} min with this bench and person`)
  }
  return out
}

/** Bench and person are both at work during every segment (same time, same bench, same person). */
const benchAndPersonAvailableTogether: Rule = ({ plan, ops, benches, people }) => {
  const out: Violation[] = []
  for (const p of plan.operations) {
    const op = ops.get(p.operationId)
    if (!op || isOutside(op)) continue
    for (const s of p.segments) {
      if (s.end <= s.start) continue
      const b = p.benchId !== null ? benches.get(p.benchId) : undefined
      const who = p.personId !== null ? people.get(p.personId) : undefined
      if (b && !covered(b.available, s.start, s.end)) out.push({ rule: 'within bench working time', operationId: op.id, jobId: op.jobId, message: `${op.name} works on ${b.name} during ${s.start}–${s.end}, when the bench is not available` })
      if (who && !covered(who.available, s.start, s.end)) out.push({ rule: 'within personal working time', operationId: op.id, jobId: op.jobId, message: `${op.name} needs ${who.name} during ${s.start}–${s.end}, outside their working time` })
    }
  }
  return out
}

/** Working time of the list inside [s, e), as merged pieces. */
const within = (list: Interval[] | undefined, s: number, e: number): Interval[] => {
  if (!list) return [{ start: s, end: e }]
  const out: Interval[] = []
  for (const w of merged(list)) {
    if (w.end <= s) continue
    if (w.start >= e) break
    out.push({ start: Math.max(s, w.start), end: Math.min(e, w.end) })
  }
  return out
}

/**
 * Work stops only when joint working time ends and comes back at the next joint working time: inside every gap between two
 * segments the bench and the person have no common working time — neither free (a late resume) nor given to other work (preempted).
 */
const resumesAtNextWorkingTime: Rule = ({ problem, plan, ops, benches, people }) => {
  const out: Violation[] = []
  const busy = { benchId: new Map<string, { s: number; e: number; id: string }[]>(), personId: new Map<string, { s: number; e: number; id: string }[]>() }
  for (const p of plan.operations) {
    for (const which of ['benchId', 'personId'] as const) {
      const r = p[which]
      if (r === null) continue
      const list = busy[which].get(r) ?? busy[which].set(r, []).get(r)!
      for (const g of p.segments) if (g.end > g.start) list.push({ s: g.start, e: g.end, id: p.operationId })
    }
  }
  for (const p of plan.operations) {
    const op = ops.get(p.operationId)
    if (!op || isOutside(op) || p.segments.length < 2) continue
    const b = p.benchId !== null ? benches.get(p.benchId)?.available : undefined
    const w = p.personId !== null ? people.get(p.personId)?.available : undefined
    for (let i = 1; i < p.segments.length; i++) {
      const gapStart = p.segments[i - 1]!.end, gapEnd = Math.min(p.segments[i]!.start, problem.horizon)
      if (gapEnd <= gapStart) continue
      const joint: Interval[] = []
      for (const x of within(b, gapStart, gapEnd)) for (const y of within(w, x.start, x.end)) joint.push(y)
      if (joint.length === 0) continue
      const others = [
        ...(p.benchId !== null ? busy.benchId.get(p.benchId) ?? [] : []),
        ...(p.personId !== null ? busy.personId.get(p.personId) ?? [] : []),
      ].filter((x) => x.id !== op.id && x.s < gapEnd && x.e > gapStart)
      let free = 0
      for (const j of joint) {
        // Joint working time minus the other work booked on this bench or person.
        let t = j.start
        for (const x of [...others].sort((a, c) => a.s - c.s)) {
          if (x.e <= t || x.s >= j.end) continue
          if (x.s > t) free += x.s - t
          t = Math.max(t, x.e)
        }
        if (t < j.end) free += j.end - t
      }
      if (free > 0) out.push({ rule: 'work resumes only at next working time', operationId: op.id, jobId: op.jobId, message: `${op.name} pauses ${gapStart}–${p.segments[i]!.start} although bench and person are both at work and free for ${free} min of it` })
      else out.push({ rule: 'work is interrupted only by the end of working time', operationId: op.id, jobId: op.jobId, message: `${op.name} pauses ${gapStart}–${p.segments[i]!.start} while its bench and person work on other steps in their joint working time` })
    }
  }
  return out
}

/** Overlap check shared by benches and people. */
const noDoubleBooking = (which: 'benchId' | 'personId', rule: string, noun: (id: string) => string): Rule => ({ plan, ops }) => {
  const out: Violation[] = []
  const byResource = new Map<string, { s: number; e: number; id: string }[]>()
  for (const p of plan.operations) {
    const r = p[which]
    if (r === null) continue
    const list = byResource.get(r) ?? byResource.set(r, []).get(r)!
    for (const s of p.segments) if (s.end > s.start) list.push({ s: s.start, e: s.end, id: p.operationId })
  }
  for (const [r, list] of byResource) {
    list.sort((a, b) => a.s - b.s || a.e - b.e)
    let reach = -Infinity, reachId = ''
    for (const x of list) {
      if (x.s < reach && x.id !== reachId) {
        const op = ops.get(x.id)
        out.push({ rule, operationId: x.id, jobId: op?.jobId, message: `${noun(r)} is booked for ${ops.get(reachId)?.name ?? reachId} and ${op?.name ?? x.id} at the same time (${x.s})` })
      }
      if (x.e > reach) { reach = x.e; reachId = x.id }
    }
  }
  return out
}

/** Successors start after their predecessors end plus any wait-after (a done predecessor from when it finished, when known). */
const routingOrder: Rule = ({ plan, ops, planned }) => {
  const out: Violation[] = []
  for (const p of plan.operations) {
    const op = ops.get(p.operationId)
    if (!op) continue
    for (const predId of op.predecessors) {
      const pred = ops.get(predId)
      if (!pred) continue
      if (pred.done) {
        const finished = pred.finishedAt ?? pred.fixed?.end
        if (finished === undefined) continue
        const ready = finished + (pred.waitAfter ?? 0)
        if (p.start < ready) out.push({ rule: 'routing order and wait-after', operationId: op.id, jobId: op.jobId, message: `${op.name} starts at ${p.start} but ${pred.name} finished at ${finished} and is only ready at ${ready}` })
        continue
      }
      const pp = planned.get(predId)
      if (!pp) continue
      const ready = pp.end + (pred.waitAfter ?? 0)
      if (p.start < ready) out.push({ rule: 'routing order and wait-after', operationId: op.id, jobId: op.jobId, message: `${op.name} starts at ${p.start} but ${pred.name} is only ready at ${ready}` })
    }
  }
  return out
}

/** Nothing starts before its job is released, and nothing that is not pinned starts before now. */
const releaseAndNow: Rule = ({ problem, plan, ops }) => {
  const out: Violation[] = []
  const jobs = new Map(problem.jobs.map((j) => [j.id, j]))
  for (const p of plan.operations) {
    const op = ops.get(p.operationId)
    if (!op || op.fixed) continue
    const job = jobs.get(op.jobId)
    if (job && p.start < job.release) out.push({ rule: 'not before release', operationId: op.id, jobId: op.jobId, message: `${op.name} starts at ${p.start}, before job ${job.name} is released at ${job.release}` })
    if (p.start < problem.now) out.push({ rule: 'not before now', operationId: op.id, jobId: op.jobId, message: `${op.name} starts at ${p.start}, before now (${problem.now})` })
  }
  return out
}

/** Pinned and running operations keep their bench, person and start (and end when given). */
const pinnedStayPut: Rule = ({ plan, ops }) => {
  const out: Violation[] = []
  for (const p of plan.operations) {
    const op = ops.get(p.operationId)
    const f = op?.fixed
    if (!op || !f) continue
    if (p.start !== f.start || p.benchId !== f.benchId || p.personId !== f.personId || (f.end !== undefined && p.end !== f.end)) {
      out.push({ rule: 'pinned work stays put', operationId: op.id, jobId: op.jobId, message: `${op.name} is pinned at ${f.start} on ${f.benchId ?? '-'} with ${f.personId ?? 'nobody'} but is planned at ${p.start} on ${p.benchId ?? '-'} with ${p.personId ?? 'nobody'}` })
    }
  }
  return out
}

/** Outside work comes back at the close of its n-th workshop day counted from the first day opening at or after it leaves. */
const outsideWorkingDays: Rule = ({ problem, plan, ops }) => {
  const out: Violation[] = []
  for (const p of plan.operations) {
    const op = ops.get(p.operationId)
    if (!op || !isOutside(op)) continue
    const days = problem.workshopDays.filter((d) => d.start >= p.start)
    const back = days[op.outsideWorkingDays! - 1]?.end
    if (back === undefined || p.end !== back) out.push({ rule: 'outside work takes its working days', operationId: op.id, jobId: op.jobId, message: `${op.name} is away ${p.start}–${p.end}, but ${op.outsideWorkingDays} workshop days from ${p.start} end at ${back ?? 'beyond the calendar'}` })
  }
  return out
}

/** Nothing is planned past the end of the calendars. */
const withinHorizon: Rule = ({ problem, plan, ops }) =>
  plan.operations
    .filter((p) => p.end > problem.horizon)
    .map((p) => ({ rule: 'within the horizon', operationId: p.operationId, jobId: ops.get(p.operationId)?.jobId, message: `${ops.get(p.operationId)?.name ?? p.operationId} ends at ${p.end}, after the horizon ${problem.horizon}` }))

/** Job completion, lateness and tardiness match the planned operations; every job with planned work has one summary. */
const jobSummariesMatch: Rule = ({ problem, plan }) => {
  const out: Violation[] = []
  const ends = new Map<string, number>()
  for (const p of plan.operations) ends.set(p.jobId, Math.max(ends.get(p.jobId) ?? -Infinity, p.end))
  const listed = new Set(plan.jobs.map((j) => j.jobId))
  for (const id of ends.keys()) if (!listed.has(id)) out.push({ rule: 'job summary matches', jobId: id, message: `job ${problem.jobs.find((x) => x.id === id)?.name ?? id} has planned work but no summary` })
  for (const j of plan.jobs) {
    if (!ends.has(j.jobId)) out.push({ rule: 'job summary matches', jobId: j.jobId, message: `job ${j.jobId} has a summary but nothing planned` })
    const job = problem.jobs.find((x) => x.id === j.jobId)
    const c = ends.get(j.jobId)
    if (!job || c === undefined) continue
    const lateness = job.due === null ? 0 : c - job.due
    if (j.completion !== c || j.lateness !== lateness || j.tardiness !== Math.max(0, lateness)) out.push({ rule: 'job summary matches', jobId: j.jobId, message: `job ${job.name}: summary says completion ${j.completion}, but its work ends at ${c}` })
  }
  return out
}

/** The score's totals are what the planned operations give: weighted tardiness, makespan and moves from the previous plan. */
const scoreTotalsMatch: Rule = ({ problem, plan, ops }) => {
  const completion = new Map<string, number>()
  let makespan = 0
  for (const p of plan.operations) {
    completion.set(p.jobId, Math.max(completion.get(p.jobId) ?? -Infinity, p.end))
    makespan = Math.max(makespan, p.end)
  }
  let wt = 0
  for (const job of problem.jobs) {
    const c = completion.get(job.id)
    if (c !== undefined && job.due !== null && c > job.due) wt += job.weight * (c - job.due)
  }
  let moves = 0
  for (const p of plan.operations) {
    const prev = problem.previous?.[p.operationId]
    if (prev && !ops.get(p.operationId)?.fixed && (prev.benchId !== p.benchId || prev.personId !== p.personId)) moves++
  }
  const out: Violation[] = []
  const sc = plan.score
  const say = (what: string, claimed: number, actual: number): void => { out.push({ rule: 'score matches the plan', message: `the score says ${what} ${claimed}, the planned work gives ${actual}` }) }
  if (Math.abs(sc.weightedTardiness - wt) > 1e-6 * Math.max(1, wt)) say('weighted tardiness', sc.weightedTardiness, wt)
  if (sc.makespan !== makespan) say('makespan', sc.makespan, makespan)
  if (sc.moves !== moves) say('moves', sc.moves, moves)
  return out
}

/** All rules, hard constraints first. */
export const PLAN_RULES: { name: string; check: Rule }[] = [
  { name: 'every operation planned once', check: everyOperationPlannedOnce },
  { name: 'allowed bench and person', check: allowedBenchAndPerson },
  { name: 'work adds up', check: segmentsAddUp },
  { name: 'bench and person available together', check: benchAndPersonAvailableTogether },
  { name: 'work resumes only at next working time', check: resumesAtNextWorkingTime },
  { name: 'one operation at a time per bench', check: noDoubleBooking('benchId', 'one operation at a time per bench', (id) => `bench ${id}`) },
  { name: 'one operation at a time per person', check: noDoubleBooking('personId', 'one operation at a time per person', (id) => `person ${id}`) },
  { name: 'routing order and wait-after', check: routingOrder },
  { name: 'release and now', check: releaseAndNow },
  { name: 'pinned work stays put', check: pinnedStayPut },
  { name: 'outside work takes its working days', check: outsideWorkingDays },
  { name: 'within the horizon', check: withinHorizon },
  { name: 'job summary matches', check: jobSummariesMatch },
  { name: 'score matches the plan', check: scoreTotalsMatch },
]

/** Checks a plan against every rule; an empty list means the plan is valid. */
export function validatePlan(problem: Problem, plan: Plan): Violation[] {
  const ctx: Context = {
    problem,
    plan,
    ops: new Map(problem.operations.map((o) => [o.id, o])),
    planned: new Map(plan.operations.map((p) => [p.operationId, p])),
    benches: new Map(problem.benches.map((b) => [b.id, b])),
    people: new Map(problem.people.map((x) => [x.id, x])),
  }
  return PLAN_RULES.flatMap((r) => r.check(ctx))
}
