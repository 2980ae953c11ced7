// Independent plan checker: the rule book (shared/domain/rules.ts) applied to a whole plan, one function per rule, written apart
// from the decoder. The same builders word a refused move on the board and a refused claim at the bench.
import * as rules from '../../shared/domain/rules.ts'
import { violation } from '../../shared/domain/rules.ts'
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
const ref = (op: Operation): rules.StepRef => ({ operationId: op.id, jobId: op.jobId, name: op.name })

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
  let lo = 0,
    hi = m.length
  while (lo < hi) {
    const mid = (lo + hi) >> 1
    if (m[mid]!.end > s) hi = mid
    else lo = mid + 1
  }
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
    if (op.done && k > 0) out.push(violation('done work is not planned again', ref(op), `${op.name} is done but appears in the plan`))
    if (!op.done && k !== 1) out.push(violation('every operation planned once', ref(op), `${op.name} is planned ${k} times`))
  }
  for (const id of count.keys())
    if (!ops.has(id)) out.push(violation('every operation planned once', { operationId: id, name: id }, `the plan contains unknown operation ${id}`))
  return out
}

/**
 * The bench and person used are one of the operation's options (or its pinned pair; none for outside work). The options already
 * combine bench capability and skill: a bench no option names is not equipped, a person no option names is not skilled.
 */
const allowedBenchAndPerson: Rule = ({ plan, ops, benches, people }) => {
  const out: Violation[] = []
  for (const p of plan.operations) {
    const op = ops.get(p.operationId)
    if (!op) continue
    const bench = p.benchId !== null ? (benches.get(p.benchId)?.name ?? p.benchId) : null
    const person = p.personId !== null ? (people.get(p.personId)?.name ?? p.personId) : null
    if (op.fixed) {
      if (p.benchId !== op.fixed.benchId || p.personId !== op.fixed.personId)
        out.push(rules.allowedPair(ref(op), { bench, person, why: 'it is pinned to another bench and person' }))
    } else if (isOutside(op)) {
      if (p.benchId !== null || p.personId !== null) out.push(rules.outsideWork(ref(op), { why: 'it takes no bench and no person' }))
    } else if (!op.options.some((o) => o.benchId === p.benchId && o.personId === p.personId)) {
      const benchOk = op.options.some((o) => o.benchId === p.benchId)
      const personOk = op.options.some((o) => o.personId === p.personId)
      if (!benchOk && bench !== null) out.push(rules.benchCapability(ref(op), { benchName: bench, kindName: op.kind, capable: false })!)
      if (!personOk && person !== null) out.push(rules.skill(ref(op), { personName: person, kindName: op.kind, level: undefined, required: null })!)
      if ((benchOk && personOk) || bench === null || person === null) out.push(rules.allowedPair(ref(op), { bench, person, why: 'not one of its options' }))
    }
  }
  return out
}

/** Segments are ordered, inside [start, end), begin at start and end at end, and add up to the work required. */
const segmentsAddUp: Rule = ({ plan, ops }) => {
  const out: Violation[] = []
  for (const p of plan.operations) {
    const op = ops.get(p.operationId)
    if (!op) continue
    const bad = (why: string): void => {
      out.push(violation('work adds up', ref(op), `${op.name}: ${why}`))
    }
    const segs = p.segments
    if (segs.length === 0) {
      bad('has no worked segments')
      continue
    }
    let ordered = true
    for (let i = 0; i < segs.length; i++) {
      const s = segs[i]!
      if (s.end < s.start || (i > 0 && s.start < segs[i - 1]!.end)) ordered = false
    }
    if (!ordered) {
      bad('segments overlap or run backwards')
      continue
    }
    if (segs[0]!.start !== p.start || segs[segs.length - 1]!.end !== p.end)
      bad(`segments span ${segs[0]!.start}–${segs[segs.length - 1]!.end} but the operation says ${p.start}–${p.end}`)
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
      if (b && !covered(b.available, s.start, s.end)) out.push(rules.workingTime(ref(op), { resource: 'bench', name: b.name, from: s.start, to: s.end }))
      if (who && !covered(who.available, s.start, s.end)) out.push(rules.workingTime(ref(op), { resource: 'person', name: who.name, from: s.start, to: s.end }))
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
      const gapStart = p.segments[i - 1]!.end,
        gapEnd = Math.min(p.segments[i]!.start, problem.horizon)
      if (gapEnd <= gapStart) continue
      const joint: Interval[] = []
      for (const x of within(b, gapStart, gapEnd)) for (const y of within(w, x.start, x.end)) joint.push(y)
      if (joint.length === 0) continue
      const others = [
        ...(p.benchId !== null ? (busy.benchId.get(p.benchId) ?? []) : []),
        ...(p.personId !== null ? (busy.personId.get(p.personId) ?? []) : []),
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
      if (free > 0)
        out.push(
          violation(
            'work resumes only at next working time',
            ref(op),
            `${op.name} pauses ${gapStart}–${p.segments[i]!.start} although bench and person are both at work and free for ${free} min of it`,
          ),
        )
      else
        out.push(
          violation(
            'work is interrupted only by the end of working time',
            ref(op),
            `${op.name} pauses ${gapStart}–${p.segments[i]!.start} while its bench and person work on other steps in their joint working time`,
          ),
        )
    }
  }
  return out
}

/** Overlap check shared by benches and people. */
const noDoubleBooking =
  (which: 'benchId' | 'personId'): Rule =>
  ({ plan, ops, benches, people }) => {
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
      let reach = -Infinity,
        reachId = ''
      for (const x of list) {
        if (x.s < reach && x.id !== reachId) {
          const op = ops.get(x.id)
          const other = ops.get(reachId)
          const name = which === 'benchId' ? (benches.get(r)?.name ?? `bench ${r}`) : (people.get(r)?.name ?? `person ${r}`)
          out.push(
            rules.doubleBooking(op ? ref(op) : { operationId: x.id, name: x.id }, {
              resource: which === 'benchId' ? 'bench' : 'person',
              name,
              other: other ? ref(other) : { operationId: reachId, name: reachId },
              from: x.s,
              to: Math.min(x.e, reach),
            }),
          )
        }
        if (x.e > reach) {
          reach = x.e
          reachId = x.id
        }
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
        const v = rules.routingOrder(ref(op), {
          start: p.start,
          predecessor: pred.name,
          readyAt: finished + (pred.waitAfter ?? 0),
          waitAfter: pred.waitAfter ?? 0,
          finished: true,
        })
        if (v) out.push(v)
        continue
      }
      const pp = planned.get(predId)
      if (!pp) continue
      const v = rules.routingOrder(ref(op), { start: p.start, predecessor: pred.name, readyAt: pp.end + (pred.waitAfter ?? 0), waitAfter: pred.waitAfter ?? 0 })
      if (v) out.push(v)
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
    if (job && p.start < job.release)
      out.push(violation('not before release', ref(op), `${op.name} starts at ${p.start}, before job ${job.name} is released at ${job.release}`))
    const early = rules.notBeforeNow(ref(op), { start: p.start, now: problem.now })
    if (early) out.push(early)
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
      out.push(
        violation(
          'pinned work stays put',
          ref(op),
          `${op.name} is pinned at ${f.start} on ${f.benchId ?? '-'} with ${f.personId ?? 'nobody'} but is planned at ${p.start} on ${p.benchId ?? '-'} with ${p.personId ?? 'nobody'}`,
        ),
      )
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
    if (back === undefined || p.end !== back)
      out.push(
        rules.outsideWork(ref(op), {
          why: `away ${p.start}–${p.end}, but ${op.outsideWorkingDays} workshop days from ${p.start} end at ${back ?? 'beyond the calendar'}`,
        }),
      )
  }
  return out
}

/** Nothing is planned past the end of the calendars. */
const withinHorizon: Rule = ({ problem, plan, ops }) =>
  plan.operations
    .filter((p) => p.end > problem.horizon)
    .map((p) =>
      violation(
        'within the horizon',
        { operationId: p.operationId, jobId: ops.get(p.operationId)?.jobId, name: ops.get(p.operationId)?.name ?? p.operationId },
        `${ops.get(p.operationId)?.name ?? p.operationId} ends at ${p.end}, after the horizon ${problem.horizon}`,
      ),
    )

/** Job completion, lateness and tardiness match the planned operations; every job with planned work has one summary. */
const jobSummariesMatch: Rule = ({ problem, plan }) => {
  const out: Violation[] = []
  const ends = new Map<string, number>()
  for (const p of plan.operations) ends.set(p.jobId, Math.max(ends.get(p.jobId) ?? -Infinity, p.end))
  const listed = new Set(plan.jobs.map((j) => j.jobId))
  const named = (id: string) => ({ jobId: id, name: problem.jobs.find((x) => x.id === id)?.name ?? id })
  for (const id of ends.keys())
    if (!listed.has(id)) out.push(violation('job summary matches', named(id), `job ${named(id).name} has planned work but no summary`))
  for (const j of plan.jobs) {
    if (!ends.has(j.jobId)) out.push(violation('job summary matches', named(j.jobId), `job ${j.jobId} has a summary but nothing planned`))
    const found = problem.jobs.find((x) => x.id === j.jobId)
    const c = ends.get(j.jobId)
    if (!found || c === undefined) continue
    const job = found
    const lateness = job.due === null ? 0 : c - job.due
    if (j.completion !== c || j.lateness !== lateness || j.tardiness !== Math.max(0, lateness))
      out.push(
        violation(
          'job summary matches',
          { jobId: j.jobId, name: job.name },
          `job ${job.name}: summary says completion ${j.completion}, but its work ends at ${c}`,
        ),
      )
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
  const say = (what: string, claimed: number, actual: number): void => {
    out.push(violation('score matches the plan', null, `the score says ${what} ${claimed}, the planned work gives ${actual}`))
  }
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
  { name: 'bench double booking', check: noDoubleBooking('benchId') },
  { name: 'person double booking', check: noDoubleBooking('personId') },
  { name: 'routing order', check: routingOrder },
  { name: 'release and now', check: releaseAndNow },
  { name: 'pinned work stays put', check: pinnedStayPut },
  { name: 'outside work', check: outsideWorkingDays },
  { name: 'within the horizon', check: withinHorizon },
  { name: 'job summary matches', check: jobSummariesMatch },
  { name: 'score matches the plan', check: scoreTotalsMatch },
]

/** Late pieces: the soft findings of a plan (not part of validity). */
export function lateJobs(problem: Problem, plan: Plan): Violation[] {
  const byId = new Map(problem.jobs.map((j) => [j.id, j]))
  return plan.jobs.flatMap((j) => {
    const job = byId.get(j.jobId)
    const v = job && job.due !== null ? rules.dueDate({ jobId: job.id, name: job.name }, { completion: j.completion, due: job.due }) : null
    return v ? [v] : []
  })
}

/** Checks a plan against every hard rule; an empty list means the plan is valid. */
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

/** The rule book on a whole plan, grouped: hard findings make it invalid, soft ones (late pieces) are shown beside it. */
export function checkPlan(problem: Problem, plan: Plan): { hard: Violation[]; soft: Violation[] } {
  return { hard: validatePlan(problem, plan), soft: lateJobs(problem, plan) }
}
