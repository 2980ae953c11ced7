// Property: random small workshops always get a plan with zero validator violations, deterministically per seed.
import { describe, it, expect } from 'vitest'
import fc from 'fast-check'
import { solve, validatePlan, type Operation, type Problem } from '../../server/scheduler/index.ts'
import { generateWorkshop } from '../../server/scheduler/generate.ts'
import { at, makeBench, makeJob, makePerson, weekdays } from './builders.ts'
import { mkdtempSync, writeFileSync } from 'node:fs'
import { spawnSync } from 'node:child_process'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { requireKit, toolsDir } from '../setup/kit.ts'

const checker = join(toolsDir, 'check-workshop.mjs')
// Fails in CI or when the kit is there without its checker; with no kit at all, plans are checked by the engine's validator only (said on the console).
const haveChecker = requireKit('independent checking of property plans', ['../tools/check-workshop.mjs'])
const tmp = mkdtempSync(join(tmpdir(), 'millgrain-prop-'))
let checked = 0
/** The kit's independent workshop checker (written apart from the engine) on one plan: its output when it refuses, else ''. */
function independent(problem: Problem, plan: unknown): string {
  if (!haveChecker) return ''
  const k = checked++
  writeFileSync(join(tmp, `p${k}.json`), JSON.stringify(problem))
  writeFileSync(join(tmp, `l${k}.json`), JSON.stringify(plan))
  const r = spawnSync(process.execPath, [checker, join(tmp, `p${k}.json`), join(tmp, `l${k}.json`)], { encoding: 'utf8' })
  return r.status === 0 ? '' : r.stdout + r.stderr
}

/** A random small workshop built from fast-check choices: benches, people with breaks, jobs with branching routings. */
const workshop = fc.record({
  benches: fc.integer({ min: 1, max: 3 }),
  people: fc.integer({ min: 1, max: 3 }),
  jobs: fc.array(
    fc.record({
      release: fc.integer({ min: 0, max: 2 * 1440 }),
      due: fc.option(fc.integer({ min: 0, max: 10 * 1440 }), { nil: null }),
      weight: fc.integer({ min: 1, max: 5 }),
      ops: fc.array(
        fc.record({
          minutes: fc.integer({ min: 5, max: 600 }),
          pred: fc.integer({ min: -1, max: 4 }),
          wait: fc.integer({ min: 0, max: 60 }),
          outside: fc.integer({ min: 0, max: 6 }),
          bench: fc.integer({ min: 0, max: 2 }),
          person: fc.integer({ min: 0, max: 2 }),
          alt: fc.boolean(),
          done: fc.integer({ min: 0, max: 9 }),
        }),
        { minLength: 1, maxLength: 5 },
      ),
    }),
    { minLength: 1, maxLength: 6 },
  ),
  now: fc.integer({ min: 0, max: 600 }),
  closed: fc.integer({ min: 0, max: 12 }),
})

type Workshop = typeof workshop extends fc.Arbitrary<infer T> ? T : never

function build(w: Workshop): Problem {
  const days = 60
  const benches = Array.from({ length: w.benches }, (_, k) => makeBench({ id: `b${k}`, available: weekdays({ days, from: 7 * 60 + 30 * k, to: 17 * 60 }) }))
  const people = Array.from({ length: w.people }, (_, k) =>
    makePerson({
      id: `p${k}`,
      available: weekdays({ days, from: 8 * 60, to: 12 * 60 + 30, closed: [w.closed + k] }).flatMap((m) => [
        m,
        { start: m.end + 30, end: m.end + 30 + 4 * 60 },
      ]),
    }),
  )
  const operations: Operation[] = []
  const jobs = w.jobs.map((j, ji) => {
    j.ops.forEach((o, k) => {
      const id = `j${ji}o${k}`
      const bench = `b${o.bench % w.benches}`,
        person = `p${o.person % w.people}`
      const options = [{ benchId: bench, personId: person, minutes: o.minutes }]
      if (o.alt) options.push({ benchId: `b${(o.bench + 1) % w.benches}`, personId: `p${(o.person + 1) % w.people}`, minutes: Math.round(o.minutes * 1.3) })
      const op: Operation = {
        id,
        jobId: `j${ji}`,
        name: id,
        kind: 'work',
        predecessors: o.pred >= 0 && o.pred < k ? [`j${ji}o${o.pred}`] : k > 0 ? [`j${ji}o${k - 1}`] : [],
        options,
      }
      if (o.outside === 1) op.outsideWorkingDays = 2
      if (o.wait > 40) op.waitAfter = o.wait
      if (o.done === 0 && k === 0) {
        op.done = true
        op.finishedAt = Math.max(0, w.now - o.wait)
      }
      operations.push(op)
    })
    return makeJob({ id: `j${ji}`, release: j.release, due: j.due, weight: j.weight })
  })
  return { origin: '2025-03-03', now: w.now, horizon: days * 1440, workshopDays: weekdays({ days, closed: [w.closed] }), benches, people, jobs, operations }
}

describe('random workshops', () => {
  it('when any small workshop is planned, then the validator finds no violation', () => {
    fc.assert(
      fc.property(workshop, fc.integer({ min: 0, max: 1000 }), (w, seed) => {
        const problem = build(w)
        const plan = solve(problem, { seed, timeLimitMs: 1000, maxIterations: 40 }, { clock: () => performance.now() })
        expect(validatePlan(problem, plan)).toEqual([])
        expect(independent(problem, plan)).toBe('')
        expect(plan.operations.length).toBe(problem.operations.filter((o) => !o.done).length)
      }),
      { numRuns: 60, seed: 20250303 },
    )
  })

  it('when generated workshops with running and finished work are planned, then the plans are valid', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 1e6 }), fc.integer({ min: 3, max: 25 }), (seed, jobs) => {
        const problem = generateWorkshop({ seed, jobs, withProgress: true })
        const plan = solve(problem, { seed, timeLimitMs: 1000, maxIterations: 30 }, { clock: () => performance.now() })
        expect(validatePlan(problem, plan)).toEqual([])
        expect(independent(problem, plan)).toBe('')
      }),
      { numRuns: 15, seed: 7 },
    )
  })

  it('when tiny shops of machines are planned by the fast core, then the validator finds no violation', () => {
    fc.assert(
      fc.property(
        fc.array(fc.array(fc.record({ m: fc.integer({ min: 0, max: 2 }), d: fc.integer({ min: 1, max: 9 }) }), { minLength: 1, maxLength: 4 }), {
          minLength: 1,
          maxLength: 4,
        }),
        (jobs) => {
          const always = [{ start: 0, end: 10_000 }]
          const problem: Problem = {
            origin: '2025-03-03',
            now: 0,
            horizon: 10_000,
            workshopDays: always,
            benches: [0, 1, 2].map((k) => makeBench({ id: `m${k}`, available: always })),
            people: [],
            jobs: jobs.map((_, j) => makeJob({ id: `j${j}` })),
            operations: jobs.flatMap((ops, j) =>
              ops.map((o, k) => ({
                id: `j${j}o${k}`,
                jobId: `j${j}`,
                name: `j${j}o${k}`,
                kind: 'machine',
                predecessors: k > 0 ? [`j${j}o${k - 1}`] : [],
                options: [
                  { benchId: `m${o.m}`, personId: null, minutes: o.d },
                  { benchId: `m${(o.m + 1) % 3}`, personId: null, minutes: o.d + 1 },
                ],
              })),
            ),
          }
          const plan = solve(problem, { seed: 1, timeLimitMs: 1000, maxIterations: 200 }, { clock: () => performance.now() })
          expect(validatePlan(problem, plan)).toEqual([])
        },
      ),
      { numRuns: 40, seed: 11 },
    )
  })

  it('when random shops with a machine and a worker per step and due dates are planned, then both validators accept the plans', () => {
    fc.assert(
      fc.property(
        fc.array(
          fc.array(fc.record({ m: fc.integer({ min: 0, max: 2 }), w: fc.integer({ min: 0, max: 2 }), d: fc.integer({ min: 1, max: 9 }) }), {
            minLength: 1,
            maxLength: 4,
          }),
          { minLength: 1, maxLength: 5 },
        ),
        fc.integer({ min: 0, max: 30 }),
        (jobs, slack) => {
          const always = [{ start: 0, end: 10_000 }]
          const problem: Problem = {
            origin: '2025-03-03',
            now: 0,
            horizon: 10_000,
            workshopDays: always,
            benches: [0, 1, 2].map((k) => makeBench({ id: `m${k}`, available: always })),
            people: [0, 1, 2].map((k) => makePerson({ id: `w${k}`, available: always })),
            jobs: jobs.map((ops, j) => makeJob({ id: `j${j}`, due: ops.reduce((a, o) => a + o.d, 0) + slack, weight: 1 + (j % 3) })),
            operations: jobs.flatMap((ops, j) =>
              ops.map((o, k) => ({
                id: `j${j}o${k}`,
                jobId: `j${j}`,
                name: `j${j}o${k}`,
                kind: 'machine',
                predecessors: k > 0 ? [`j${j}o${k - 1}`] : [],
                options: [
                  { benchId: `m${o.m}`, personId: `w${o.w}`, minutes: o.d },
                  { benchId: `m${(o.m + 1) % 3}`, personId: `w${(o.w + 2) % 3}`, minutes: o.d + 2 },
                ],
              })),
            ),
          }
          const plan = solve(problem, { seed: 1, timeLimitMs: 1000, maxIterations: 200 }, { clock: () => performance.now() })
          expect(validatePlan(problem, plan)).toEqual([])
          expect(independent(problem, plan)).toBe('')
        },
      ),
      { numRuns: 30, seed: 13 },
    )
  })

  it('when a job is released at minute 0 and now is later, then nothing starts before now', () => {
    const problem = build({
      benches: 1,
      people: 1,
      jobs: [{ release: 0, due: null, weight: 1, ops: [{ minutes: 30, pred: -1, wait: 0, outside: 0, bench: 0, person: 0, alt: false, done: 5 }] }],
      now: at(0, 10),
      closed: 12,
    })
    const plan = solve(problem, { seed: 1, timeLimitMs: 100 })
    expect(plan.operations[0]!.start).toBeGreaterThanOrEqual(at(0, 10))
  })
})
