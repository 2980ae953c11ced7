// Named-option builders for engine tests: small workshops with readable defaults.
import type { Bench, Interval, Job, Operation, Person, Problem } from '../../server/scheduler/index.ts'

export const DAY = 1440
/** Minute of day d (0 = Monday) at hh:mm. */
export const at = (d: number, hh: number, mm = 0): number => d * DAY + hh * 60 + mm

/** Working days Mon–Fri 08:00–16:00 for `days` days, without the given closed days. */
export function weekdays(opts: { days?: number; from?: number; to?: number; closed?: number[] } = {}): Interval[] {
  const { days = 14, from = 8 * 60, to = 16 * 60, closed = [] } = opts
  const out: Interval[] = []
  for (let d = 0; d < days; d++) if (d % 7 < 5 && !closed.includes(d)) out.push({ start: d * DAY + from, end: d * DAY + to })
  return out
}

export const always = (horizon = 100 * DAY): Interval[] => [{ start: 0, end: horizon }]

export function makeBench(opts: { id: string; name?: string; available?: Interval[] }): Bench {
  return { id: opts.id, name: opts.name ?? `Bench ${opts.id}`, available: opts.available ?? weekdays() }
}

export function makePerson(opts: { id: string; name?: string; available?: Interval[] }): Person {
  return { id: opts.id, name: opts.name ?? opts.id, available: opts.available ?? weekdays() }
}

export function makeJob(opts: { id: string; name?: string; release?: number; due?: number | null; weight?: number }): Job {
  return { id: opts.id, name: opts.name ?? opts.id, release: opts.release ?? 0, due: opts.due ?? null, weight: opts.weight ?? 1 }
}

/** An operation; `on` is shorthand for a single option: [benchId, personId, minutes]. */
export function makeOperation(opts: Partial<Operation> & { id: string; jobId: string; on?: [string | null, string | null, number] }): Operation {
  const { on, ...rest } = opts
  return {
    name: opts.id,
    kind: 'work',
    predecessors: [],
    options: on ? [{ benchId: on[0], personId: on[1], minutes: on[2] }] : [],
    ...rest,
  }
}

/** A problem; unspecified calendars default to two weeks of weekdays 08:00–16:00, now = 0. */
export function makeProblem(opts: Partial<Problem> & { operations: Operation[] }): Problem {
  const jobIds = [...new Set(opts.operations.map((o) => o.jobId))]
  return {
    origin: '2025-03-03',
    now: 0,
    horizon: 14 * DAY,
    workshopDays: weekdays(),
    benches: [makeBench({ id: 'b1' })],
    people: [makePerson({ id: 'p1' })],
    jobs: opts.jobs ?? jobIds.map((id) => makeJob({ id })),
    ...opts,
  }
}
