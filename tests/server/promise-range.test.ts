// Promise range simulation against cases with a known answer: a log-normal step's quantile in closed form, and outside work in whole working days.
import { describe, expect, it } from 'vitest'
// @ts-expect-error jstat ships no type declarations
import jstatPkg from 'jstat'
import type { Operation, Plan, Problem } from '../../server/scheduler/model.ts'
import { ASSUMPTION, FALLBACK_SIGMA, simulateCompletions } from '../../server/services/promise-range'

// The reference: jstat's log-normal (not simple-statistics, which the code under test uses for its quantiles).
const { jStat } = jstatPkg as { jStat: { lognormal: { inv(p: number, mu: number, sigma: number): number; pdf(x: number, mu: number, sigma: number): number } } }

const DAY = 1440
const HORIZON = 120 * DAY
const emptyPlan: Plan = {
  operations: [],
  jobs: [],
  score: { weightedTardiness: 0, makespan: 0, moves: 0, feasible: true, violations: [] },
  stats: { iterations: 0, elapsedMs: 0, firstPlanMs: 0 },
}

/** One bench and one person available around the clock, so a step's completion is exactly its drawn minutes. */
function problem(): Problem {
  const always = [{ start: 0, end: HORIZON }]
  // Working days: every day 08:30–17:00 (no weekends), so counting days is plain arithmetic.
  const workshopDays = Array.from({ length: 120 }, (_, d) => ({ start: d * DAY, end: d * DAY + DAY - 1 }))
  return {
    origin: '2026-11-30',
    now: 0,
    horizon: HORIZON,
    workshopDays,
    benches: [{ id: 'b', name: 'Bench', available: always }],
    people: [{ id: 'p', name: 'Person', available: always }],
    jobs: [],
    operations: [],
  }
}

const sorted = (xs: number[]) => [...xs].sort((a, b) => a - b)
/** Nearest-rank style empirical quantile written out here (type 7, linear between order statistics). */
function empirical(xs: number[], p: number) {
  const s = sorted(xs),
    h = (s.length - 1) * p,
    lo = Math.floor(h)
  return s[lo]! + (h - lo) * ((s[lo + 1] ?? s[lo]!) - s[lo]!)
}

describe('promise range simulation', () => {
  it('when one bench step has no history, then its simulated P80 is the closed-form log-normal quantile within the Monte Carlo error of 500 runs', () => {
    const minutes = 1000
    const op: Operation = { id: 'x', jobId: 'j', name: 'Setting', kind: 'setting', options: [{ benchId: 'b', personId: 'p', minutes }], predecessors: [] }
    const runs = 500
    const sample = simulateCompletions({ problem: problem(), plan: emptyPlan, operations: [op], spreads: new Map(), runs, seed: 11 })
    expect(sample).toHaveLength(runs)
    // Duration = estimate × factor, factor log-normal with median 1 and σ = FALLBACK_SIGMA: ln(duration) ~ N(ln 1000, σ²).
    const mu = Math.log(minutes),
      sigma = FALLBACK_SIGMA
    expect(sigma).toBe(0.35)
    for (const p of [0.5, 0.8, 0.95]) {
      const exact = jStat.lognormal.inv(p, mu, sigma) // = exp(mu + sigma · z_p); for p = 0.8, z = 0.8416 → 1342.5 min
      // Tolerance: a sample quantile of n draws is asymptotically normal with standard error √(p(1−p)/n) / f(q_p)
      // (f = the log-normal density at the exact quantile, from jstat). 3 standard errors, plus 1 minute for rounding
      // each draw to whole minutes. For P80: √(0.16/500) / f(1342.5) ≈ 30 min, so about ±91 min (6.8 %).
      const se = Math.sqrt((p * (1 - p)) / runs) / jStat.lognormal.pdf(exact, mu, sigma)
      const tol = 3 * se + 1
      expect(
        Math.abs(empirical(sample, p) - exact),
        `P${p * 100}: simulated ${empirical(sample, p)} vs exact ${exact.toFixed(1)} ± ${tol.toFixed(1)}`,
      ).toBeLessThanOrEqual(tol)
    }
    expect(jStat.lognormal.inv(0.8, mu, sigma)).toBeCloseTo(Math.exp(mu + sigma * 0.8416212335729143), 6) // z_0.80 from standard normal tables
  })

  it('when a step is outside work of 10 working days without history, then it varies in whole working days and P50, P80 and P95 differ', () => {
    const op: Operation = { id: 'cast', jobId: 'j', name: 'Casting', kind: 'casting', options: [], predecessors: [], outsideWorkingDays: 10 }
    const pr = problem()
    const sample = simulateCompletions({ problem: pr, plan: emptyPlan, operations: [op], spreads: new Map(), runs: 500, seed: 3 })
    // Every completion is the end of a working day: whole days only.
    const ends = new Set(pr.workshopDays.map((d) => d.end))
    expect(sample.every((m) => ends.has(m))).toBe(true)
    const days = sample.map((m) => Math.round((m + 1) / DAY))
    const p50 = empirical(days, 0.5),
      p80 = empirical(days, 0.8),
      p95 = empirical(days, 0.95)
    expect(p50).toBeLessThan(p80)
    expect(p80).toBeLessThan(p95)
    // Closed form (jstat): round(10 × log-normal quantile); rounding to whole days moves it by at most half a day, and the
    // Monte Carlo error for 500 runs is about 10 × 0.022 × e^(0.35·0.84) ≈ 0.3 day: within one day.
    expect(Math.abs(p80 - 10 * jStat.lognormal.inv(0.8, 0, FALLBACK_SIGMA))).toBeLessThanOrEqual(1)
    expect(Math.abs(p50 - 10)).toBeLessThanOrEqual(1)
  })

  it('when the default is used, then the stated assumption names the distribution and its σ', () => {
    expect(ASSUMPTION).toMatch(/log-normal/)
    expect(ASSUMPTION).toContain(`σ = ${FALLBACK_SIGMA}`)
    expect(ASSUMPTION).toMatch(/whole working days/)
  })
})
