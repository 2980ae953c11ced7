// Confidence range of a promise date: how long each operation kind really takes against its estimate, and a seeded
// Monte Carlo walk of the prospective job bag through the gaps of the fixed plan.
//
// Method. The current plan is held fixed (when work runs over, the manager re-plans; the customer's date is about the new
// piece). Each run draws one actual/estimate ratio per operation of the new job bag — bench work and outside work alike —
// resampled from the finished operations of that kind (bench work: ratio = actual minutes ÷ (estimate ÷ the worker's speed);
// outside work: working days from sending (its predecessors' finish, or the job bag's creation for a first step) to its
// return ÷ the lead days), or, when a kind has
// fewer than MIN_HISTORY finished operations, from the stated assumption: a log-normal with median 1 and σ = FALLBACK_SIGMA.
// It then walks the routing in order: each operation starts when its predecessors (and their waits) are done, on the
// bench × person pair that finishes it first within their common working time without overlapping anything already booked
// on that bench or person (the fixed plan plus the new bag's own earlier steps); outside work takes round(lead days × ratio)
// whole working days, at least one. The sorted completions give P50/P80/P95 (simple-statistics quantileSorted).
// Cost: runs × steps × pairs short interval walks — a few milliseconds per hundred runs — instead of re-running the engine.
import { quantileSorted } from 'simple-statistics'
import { and, eq, gt, inArray } from 'drizzle-orm'
import type { Db } from '../db/client'
import * as s from '../db/schema/index'
import { jointWindows, outsideWorkEnd, walkWorkingTime } from '../scheduler/calendar.ts'
import type { Interval, Operation, Plan, Problem } from '../scheduler/model.ts'
import { createRng, type Rng } from '../scheduler/random.ts'
import { dayjs } from '../lib/time'
import { ratioBelieved } from '../../shared/domain/estimate'
import { actualMinutesByOperation, effectiveRecords } from './time-records'

export const MIN_HISTORY = 8
export const FALLBACK_SIGMA = 0.35
export const DEFAULT_RUNS = 500

/** The stated assumption where history is thin, in words for the screen. */
export const ASSUMPTION = `Where a kind of work has fewer than ${MIN_HISTORY} finished examples, its duration is an assumption, not a measurement: the estimate times a log-normal factor with median 1 and σ = ${FALLBACK_SIGMA} (about ${Math.round((Math.exp(FALLBACK_SIGMA * 1.2815515655) - 1) * 100)} % over the estimate one time in ten); outside work (casting, hallmarking) in whole working days, at least one.`

export interface KindSpread {
  kind: string
  source: 'history' | 'log-normal'
  samples: number
  ratios: number[]
  p10: number
  p50: number
  p90: number
}

/** Actual ÷ estimate ratios per operation kind (code) from finished operations with time records. */
export async function kindSpreads(db: Db, workshopId: number): Promise<Map<string, KindSpread>> {
  const done = await db
    .select({ id: s.operations.id, kindId: s.operations.kindId, estimate: s.operations.estimateMinutes })
    .from(s.operations)
    .innerJoin(s.jobBags, eq(s.jobBags.id, s.operations.jobBagId))
    .where(and(eq(s.jobBags.workshopId, workshopId), eq(s.operations.status, 'done'), gt(s.operations.estimateMinutes, 0)))
  const kinds = await db.select().from(s.operationKinds).where(eq(s.operationKinds.workshopId, workshopId))
  const skills = kinds.length
    ? await db
        .select()
        .from(s.personSkills)
        .where(
          inArray(
            s.personSkills.kindId,
            kinds.map((k) => k.id),
          ),
        )
    : []
  const records = await effectiveRecords(
    db,
    done.map((d) => d.id),
  )
  const actual = actualMinutesByOperation(records)
  const worker = new Map<number, number>()
  for (const r of records) if (!r.voided && !worker.has(r.operationId)) worker.set(r.operationId, r.personId)
  const ratios = new Map<number, number[]>()
  for (const d of done) {
    const a = actual.get(d.id)
    if (!a) continue
    const speed = skills.find((k) => k.personId === worker.get(d.id) && k.kindId === d.kindId)?.speed ?? 1
    const ratio = a / (d.estimate / speed)
    // A record left open for days or a mistyped estimate tells nothing about the work; keep a wide but sane band.
    if (ratioBelieved(ratio)) (ratios.get(d.kindId) ?? ratios.set(d.kindId, []).get(d.kindId)!).push(ratio)
  }
  // Outside work: working days from its predecessors' finish (when it was sent) to its return, against its lead days.
  {
    const workingDaysBetween = await workingDayCounter(db, workshopId)
    const outside = await db
      .select({
        id: s.operations.id,
        bag: s.operations.jobBagId,
        bagCreated: s.jobBags.createdAt,
        kindId: s.operations.kindId,
        key: s.operations.key,
        after: s.operations.after,
        leadDays: s.operations.leadDays,
        finishedAt: s.operations.finishedAt,
      })
      .from(s.operations)
      .innerJoin(s.jobBags, eq(s.jobBags.id, s.operations.jobBagId))
      .where(and(eq(s.jobBags.workshopId, workshopId), eq(s.operations.status, 'done'), gt(s.operations.leadDays, 0)))
    const bags = [...new Set(outside.map((o) => o.bag))]
    const siblings = bags.length
      ? await db
          .select({ bag: s.operations.jobBagId, key: s.operations.key, finishedAt: s.operations.finishedAt })
          .from(s.operations)
          .where(inArray(s.operations.jobBagId, bags))
      : []
    for (const o of outside) {
      if (!o.finishedAt) continue
      // A first step (a casting) can go out as soon as the job bag exists: counted from then.
      const sent = o.after.length
        ? siblings.filter((x) => x.bag === o.bag && o.after.includes(x.key)).map((x) => x.finishedAt)
        : [new Date(o.bagCreated).toISOString()]
      if (sent.length !== Math.max(1, o.after.length) || sent.some((x) => !x)) continue
      const from = sent.reduce((m, x) => (Date.parse(x!) > Date.parse(m!) ? x : m))!
      const ratio = workingDaysBetween(from, o.finishedAt) / o.leadDays
      if (ratioBelieved(ratio)) (ratios.get(o.kindId) ?? ratios.set(o.kindId, []).get(o.kindId)!).push(ratio)
    }
  }
  const out = new Map<string, KindSpread>()
  for (const k of kinds) {
    const list = (ratios.get(k.id) ?? []).sort((a, b) => a - b)
    const history = list.length >= MIN_HISTORY
    const q = (p: number) => (history ? quantileSorted(list, p) : Math.exp(FALLBACK_SIGMA * normalQuantile(p)))
    out.set(k.code, {
      kind: k.code,
      source: history ? 'history' : 'log-normal',
      samples: list.length,
      ratios: history ? list : [],
      p10: q(0.1),
      p50: q(0.5),
      p90: q(0.9),
    })
  }
  return out
}

/** Working days of the workshop after the day of `from` up to and including the day of `to` (its week pattern less closures). */
async function workingDayCounter(db: Db, workshopId: number): Promise<(from: string, to: string) => number> {
  const [w] = await db.select().from(s.workshops).where(eq(s.workshops.id, workshopId))
  const closures = await db.select().from(s.closures).where(eq(s.closures.workshopId, workshopId))
  const weekdays = new Set((w?.weekPattern ?? []).map((p) => p.weekday))
  const tz = w?.timeZone ?? 'UTC'
  return (from, to) => {
    let d = dayjs(from).tz(tz).startOf('day').add(1, 'day')
    const last = dayjs(to).tz(tz).format('YYYY-MM-DD')
    let n = 0
    for (let guard = 0; guard < 400 && d.format('YYYY-MM-DD') <= last; guard++, d = d.add(1, 'day')) {
      const day = d.format('YYYY-MM-DD')
      if (weekdays.has(d.isoWeekday()) && !closures.some((c) => c.startsOn <= day && day <= c.endsOn)) n++
    }
    return n
  }
}

/** Standard normal quantiles for the summary points shown beside the range. */
const Z: Record<number, number> = { 0.1: -1.2815515655, 0.5: 0, 0.9: 1.2815515655 }
const normalQuantile = (p: number) => Z[p] ?? 0

export function drawRatio(spread: KindSpread | undefined, rng: Rng): number {
  if (spread && spread.source === 'history') return spread.ratios[rng.int(spread.ratios.length)]!
  // Box–Muller: one standard normal from two uniforms.
  const u = 1 - rng.next(),
    v = rng.next()
  return Math.exp(FALLBACK_SIGMA * Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v))
}

/** Bookings per resource as sorted, merged wall-clock intervals. */
function bookings(plan: Plan, from: number): { bench: Map<string, Interval[]>; person: Map<string, Interval[]> } {
  const bench = new Map<string, Interval[]>(),
    person = new Map<string, Interval[]>()
  const add = (m: Map<string, Interval[]>, id: string | null, iv: Interval) => {
    if (id) (m.get(id) ?? m.set(id, []).get(id)!).push(iv)
  }
  for (const p of plan.operations) {
    if (p.end <= from) continue
    add(bench, p.benchId, { start: p.start, end: p.end })
    add(person, p.personId, { start: p.start, end: p.end })
  }
  for (const m of [bench, person]) for (const [k, list] of m) m.set(k, merge(list))
  return { bench, person }
}

function merge(list: Interval[]): Interval[] {
  const sorted = [...list].sort((a, b) => a.start - b.start)
  const out: Interval[] = []
  for (const iv of sorted) {
    const last = out[out.length - 1]
    if (last && iv.start <= last.end) last.end = Math.max(last.end, iv.end)
    else out.push({ ...iv })
  }
  return out
}

/** First booking overlapping [start, end) in a sorted list, or undefined. */
function clash(list: Interval[] | undefined, start: number, end: number): Interval | undefined {
  if (!list) return undefined
  let lo = 0,
    hi = list.length
  while (lo < hi) {
    const mid = (lo + hi) >> 1
    if (list[mid]!.end > start) hi = mid
    else lo = mid + 1
  }
  const b = list[lo]
  return b && b.start < end ? b : undefined
}

function topo(ops: Operation[]): Operation[] {
  const byId = new Map(ops.map((o) => [o.id, o]))
  const seen = new Set<string>(),
    out: Operation[] = []
  const visit = (o: Operation) => {
    if (seen.has(o.id)) return
    seen.add(o.id)
    for (const p of o.predecessors) {
      const q = byId.get(p)
      if (q) visit(q)
    }
    out.push(o)
  }
  ops.forEach(visit)
  return out
}

export interface SimulationInput {
  problem: Problem
  plan: Plan
  operations: Operation[]
  spreads: Map<string, KindSpread>
  runs: number
  seed: number
}

/** Completion minute of the prospective job bag in each run (unsorted, in run order). Pure and repeatable for a seed. */
export function simulateCompletions(o: SimulationInput): number[] {
  const { problem } = o
  const rng = createRng(o.seed)
  const base = bookings(o.plan, problem.now)
  const joint = jointWindows(problem)
  // Both given: the time they share (none when either is unknown); one given: its own.
  const pairWindows = (b: string | null, p: string | null): Interval[] => (b && p ? joint.both(b, p) : b ? joint.bench(b) : joint.person(p)) ?? []
  const order = topo(o.operations)
  const out: number[] = []
  for (let run = 0; run < o.runs; run++) {
    const finish = new Map<string, number>()
    const ownBench = new Map<string, Interval[]>(),
      ownPerson = new Map<string, Interval[]>()
    let completion = problem.now
    for (const op of order) {
      let ready = problem.now
      for (const p of op.predecessors) ready = Math.max(ready, finish.get(p) ?? problem.now)
      let end: number
      if (op.outsideWorkingDays && op.outsideWorkingDays > 0) {
        // Outside work varies too, in whole working days (a caster or assay office returns on a working day).
        const days = Math.max(1, Math.round(op.outsideWorkingDays * drawRatio(o.spreads.get(op.kind), rng)))
        end = outsideWorkEnd(problem.workshopDays, ready, days) ?? problem.horizon
      } else {
        const ratio = drawRatio(o.spreads.get(op.kind), rng)
        let best: { end: number; start: number; benchId: string | null; personId: string | null } | null = null
        for (const opt of op.options) {
          const minutes = Math.max(1, Math.round(opt.minutes * ratio))
          const w = pairWindows(opt.benchId, opt.personId)
          let t = ready
          for (let guard = 0; guard < 500; guard++) {
            const segs = walkWorkingTime(w, t, minutes)
            if (!segs) break
            const st = segs[0]!.start,
              en = segs[segs.length - 1]!.end
            if (best && st >= best.end) break
            const hit =
              (opt.benchId && (clash(base.bench.get(opt.benchId), st, en) ?? clash(ownBench.get(opt.benchId), st, en))) ||
              (opt.personId && (clash(base.person.get(opt.personId), st, en) ?? clash(ownPerson.get(opt.personId), st, en)))
            if (!hit) {
              if (!best || en < best.end) best = { start: st, end: en, benchId: opt.benchId, personId: opt.personId }
              break
            }
            t = hit.end
          }
        }
        if (!best) {
          end = problem.horizon
        } else {
          end = best.end
          if (best.benchId) ownBench.set(best.benchId, merge([...(ownBench.get(best.benchId) ?? []), { start: best.start, end: best.end }]))
          if (best.personId) ownPerson.set(best.personId, merge([...(ownPerson.get(best.personId) ?? []), { start: best.start, end: best.end }]))
        }
      }
      completion = Math.max(completion, end)
      finish.set(op.id, end + (op.waitAfter ?? 0))
    }
    out.push(completion)
  }
  return out
}
