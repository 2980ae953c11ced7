// solve(): routes a problem to the fast shop core or the general calendar search, then validates the plan.
import type { Objective, Plan, Problem, SolveHooks, SolveOptions } from './model.ts'
import { checkProblem } from './check.ts'
import { compile, toPlan, assertWithinHorizon, scoreOfEnds, type Compiled, type Decoded, Why } from './decode.ts'
import { solveGeneral } from './search.ts'
import { solveShop, type ShopInstance } from './shop-core.ts'
import { EVEN_TARGETS, solvePairShop, TWT_TENURE_SCALE, type PairShop } from './pair-core.ts'
import { validatePlan } from './validate.ts'

const DEFAULT_OBJECTIVE: Objective[] = ['weightedTardiness', 'makespan', 'moves']

/** A performance-like clock when the caller does not inject one. */
const defaultClock = (): number => globalThis.performance.now()

/**
 * Plans the workshop: a due-date-aware dispatching rule builds the first plan, then a local search improves it until the time
 * limit, maxIterations or hooks.shouldStop(). Deterministic for a given problem, seed and iteration count.
 * Throws SchedulingInputError on bad input (see checkProblem) or when the work cannot fit before the horizon.
 * The returned plan has been checked by validatePlan; its findings are in score.violations.
 */
export function solve(problem: Problem, options: SolveOptions, hooks: SolveHooks = {}): Plan {
  checkProblem(problem)
  const clock = hooks.clock ?? defaultClock
  const t0 = clock()
  const hasPrevious = !!problem.previous && Object.keys(problem.previous).length > 0
  const objective =
    options.objective && options.objective.length > 0
      ? options.objective
      : !hasPrevious
        ? DEFAULT_OBJECTIVE
        : options.stability === 'best-dates'
          ? (['weightedTardiness', 'makespan', 'moves', 'shifted'] as Objective[])
          : (['weightedTardiness', 'moves', 'shifted', 'makespan'] as Objective[])
  const c = compile(problem)
  const deadline = t0 + Math.max(0, options.timeLimitMs)
  const shop = asShop(c)
  let decoded: Decoded, iterations: number, firstPlanMs: number, evaluations: number | undefined
  let pair: PairShop | null
  let previousScore: { weightedTardiness: number; makespan: number } | undefined
  if (shop) {
    const r = solveShop(shop, {
      seed: options.seed,
      deadline,
      clock,
      ...(options.maxIterations !== undefined ? { maxIterations: options.maxIterations } : {}),
      ...(hooks.shouldStop ? { shouldStop: hooks.shouldStop } : {}),
      onImprove: (makespan, iteration) =>
        hooks.onProgress?.({
          iteration,
          best: { weightedTardiness: 0, makespan: makespan + problem.now, moves: 0, feasible: true, violations: [] },
          elapsedMs: clock() - t0,
        }),
    })
    decoded = fromShop(c, r.machine, r.start, r.duration)
    iterations = r.iterations
    firstPlanMs = r.firstMs
  } else if ((pair = asPairShop(c))) {
    const twt = objective[0] === 'weightedTardiness' && problem.jobs.some((j) => j.due !== null)
    const r = solvePairShop(pair, {
      seed: options.seed,
      objective: twt ? 'weightedTardiness' : 'makespan',
      ...(twt ? { tenureScale: TWT_TENURE_SCALE, evenTargets: EVEN_TARGETS } : {}),
      deadline,
      clock,
      ...(options.maxIterations !== undefined ? { maxIterations: options.maxIterations } : {}),
      ...(hooks.shouldStop ? { shouldStop: hooks.shouldStop } : {}),
      onImprove: (value, iteration) =>
        hooks.onProgress?.({
          iteration,
          best: { weightedTardiness: twt ? value : 0, makespan: twt ? 0 : value + problem.now, moves: 0, feasible: true, violations: [] },
          elapsedMs: clock() - t0,
        }),
    })
    decoded = fromPair(c, r.option, r.start, r.end)
    iterations = r.iterations
    evaluations = r.evaluations
    firstPlanMs = r.firstMs
  } else {
    const r = solveGeneral(
      c,
      { seed: options.seed, deadline, objective, ...(options.maxIterations !== undefined ? { maxIterations: options.maxIterations } : {}) },
      hooks,
      clock,
      t0,
    )
    decoded = r.decoded
    iterations = r.iterations
    firstPlanMs = r.firstPlanMs
    evaluations = r.evaluations
    previousScore = r.previous
  }
  assertWithinHorizon(c, decoded)
  const plan = toPlan(c, decoded, {
    iterations,
    elapsedMs: clock() - t0,
    firstPlanMs,
    ...(evaluations !== undefined ? { evaluations } : {}),
    ...(previousScore ? { previous: previousScore } : {}),
  })
  const violations = validatePlan(problem, plan)
  plan.score.violations = violations
  plan.score.feasible = violations.length === 0
  plan.stats.elapsedMs = clock() - t0
  return plan
}

/**
 * The calendar-free, person-free case (benchmarks, or a shop of machines): every operation needs only a bench that is open
 * through the whole planning window, routings are chains, nothing is pinned, waiting or outside, and no due dates apply.
 * Returns the flattened instance for the fast tabu core, or null when the general engine must be used.
 */
function asShop(c: Compiled): ShopInstance | null {
  const p = c.problem
  if (p.previous && Object.keys(p.previous).length > 0) return null
  if (p.jobs.some((j) => j.due !== null || j.release > p.now)) return null
  if (p.operations.some((o) => o.done)) return null
  const openBench = p.benches.map((b) => b.available.some((w) => w.start <= p.now && w.end >= p.horizon))
  const n = c.n
  const jobPred = new Int32Array(n).fill(-1),
    jobSucc = new Int32Array(n).fill(-1)
  const optStart = new Int32Array(n + 1)
  const machines: number[] = [],
    durs: number[] = []
  for (let i = 0; i < n; i++) {
    if (c.fixedAt[i] || c.outsideDays[i]! > 0 || c.waitAfter[i]! > 0) return null
    if (c.preds[i]!.length > 1 || c.succs[i]!.length > 1) return null
    if (c.preds[i]!.length === 1) {
      jobPred[i] = c.preds[i]![0]!
      jobSucc[c.preds[i]![0]!] = i
    }
    optStart[i] = machines.length
    for (const o of c.options[i]!) {
      if (o.person >= 0 || o.bench < 0 || !openBench[o.bench] || !Number.isInteger(o.minutes)) return null
      machines.push(o.bench)
      durs.push(o.minutes)
    }
  }
  optStart[n] = machines.length
  return { n, m: p.benches.length, jobs: p.jobs.length, jobPred, jobSucc, optStart, optMachine: Int32Array.from(machines), optDur: Int32Array.from(durs) }
}

/** A core's timed schedule as a decode: each job's completion, the makespan and the weighted tardiness from the ends. */
function decodedOf(
  c: Compiled,
  start: Float64Array,
  end: Float64Array,
  option: Int32Array,
  segments: Decoded['segments'],
  why: Uint8Array,
  blocker: Int32Array,
): Decoded {
  const { completion, makespan, weightedTardiness } = scoreOfEnds(c, end)
  return {
    start,
    end,
    option,
    segments,
    why,
    blocker,
    overflow: end.some((e) => e > c.problem.horizon) ? 0 : -1,
    brokenPins: 0,
    completion,
    weightedTardiness,
    makespan,
    moves: 0,
    shifted: 0,
  }
}

/** Turns the core's machine and start arrays into a decode (times shifted to start at now), with start reasons. */
function fromShop(c: Compiled, machine: Int32Array, start0: Int32Array, duration: Int32Array): Decoded {
  const n = c.n,
    now = c.problem.now
  const start = new Float64Array(n),
    end = new Float64Array(n)
  const option = new Int32Array(n),
    why = new Uint8Array(n),
    blocker = new Int32Array(n).fill(-1)
  const segments = new Array(n)
  const byMachine = new Map<number, number[]>()
  for (let i = 0; i < n; i++) {
    start[i] = start0[i]! + now
    end[i] = start[i]! + duration[i]!
    option[i] = c.options[i]!.findIndex((o) => o.bench === machine[i] && o.minutes === duration[i])
    segments[i] = [{ start: start[i]!, end: end[i]! }]
    ;(byMachine.get(machine[i]!) ?? byMachine.set(machine[i]!, []).get(machine[i]!)!).push(i)
  }
  const machinePred = new Int32Array(n).fill(-1)
  for (const list of byMachine.values()) {
    list.sort((a, b) => start[a]! - start[b]!)
    for (let k = 1; k < list.length; k++) machinePred[list[k]!] = list[k - 1]!
  }
  for (let i = 0; i < n; i++) {
    const jp = c.preds[i]![0]
    const mp = machinePred[i]!
    if (start[i] === now) why[i] = Why.Now
    else if (jp !== undefined && end[jp] === start[i]) {
      why[i] = Why.Predecessor
      blocker[i] = jp
    } else if (mp >= 0 && end[mp] === start[i]) {
      why[i] = Why.Bench
      blocker[i] = mp
    } else why[i] = Why.WorkingTime
  }
  return decodedOf(c, start, end, option, segments, why, blocker)
}

/**
 * Calendar-free shops with a machine and optionally a worker per operation (benchmarks with due dates or with workers): every
 * bench and person is open through the whole window, routings are chains, nothing pinned, waiting, outside, done or previous.
 */
function asPairShop(c: Compiled): PairShop | null {
  const p = c.problem
  if (p.previous && Object.keys(p.previous).length > 0) return null
  if (p.operations.some((o) => o.done)) return null
  const open = (list: { available: { start: number; end: number }[] }[]) => list.map((b) => b.available.some((w) => w.start <= p.now && w.end >= p.horizon))
  const openBench = open(p.benches),
    openPerson = open(p.people)
  const n = c.n
  const jobPred = new Int32Array(n).fill(-1),
    jobSucc = new Int32Array(n).fill(-1)
  const optStart = new Int32Array(n + 1)
  const machines: number[] = [],
    workers: number[] = [],
    durs: number[] = []
  const release = new Int32Array(n)
  for (let i = 0; i < n; i++) {
    if (c.fixedAt[i] || c.outsideDays[i]! > 0 || c.waitAfter[i]! > 0) return null
    if (c.preds[i]!.length > 1 || c.succs[i]!.length > 1) return null
    if (c.preds[i]!.length === 1) {
      jobPred[i] = c.preds[i]![0]!
      jobSucc[c.preds[i]![0]!] = i
    }
    const rel = c.jobs[c.jobOf[i]!]!.release
    if (!Number.isInteger(rel)) return null
    release[i] = Math.max(0, rel - p.now)
    optStart[i] = machines.length
    for (const o of c.options[i]!) {
      if (o.bench < 0 || !openBench[o.bench] || (o.person >= 0 && !openPerson[o.person]) || !Number.isInteger(o.minutes)) return null
      machines.push(o.bench)
      workers.push(o.person)
      durs.push(o.minutes)
    }
  }
  optStart[n] = machines.length
  const due = Float64Array.from(c.jobs, (j) => (j.due === null ? Infinity : j.due - p.now))
  const weight = Float64Array.from(c.jobs, (j) => j.weight)
  return {
    n,
    machines: p.benches.length,
    workers: p.people.length,
    jobs: c.jobs.length,
    jobOf: Int32Array.from(c.jobOf),
    jobPred,
    jobSucc,
    optStart,
    optMachine: Int32Array.from(machines),
    optWorker: Int32Array.from(workers),
    optDur: Int32Array.from(durs),
    release,
    due,
    weight,
  }
}

/** Starts (from now) of the pair core's plan with every step as early as its bench, person and predecessors allow, in start order. */
function leftJustify(c: Compiled, option: Int32Array, start0: Int32Array, end0: Int32Array): Float64Array {
  const n = c.n,
    now = c.problem.now
  const order = Array.from({ length: n }, (_, i) => i).sort((a, b) => start0[a]! - start0[b]! || a - b)
  const busy = new Map<string, [number, number][]>() // 'b3' / 'p1' → intervals booked so far (in no particular order)
  const out = new Float64Array(n),
    done = new Uint8Array(n)
  for (const i of order) {
    const o = c.options[i]![option[i]!]!
    const dur = end0[i]! - start0[i]!
    let t = Math.max(0, c.jobs[c.jobOf[i]!]!.release - now)
    for (const q of c.preds[i]!) t = Math.max(t, done[q] ? out[q]! + (end0[q]! - start0[q]!) : end0[q]!)
    const lists = [`b${o.bench}`, ...(o.person >= 0 ? [`p${o.person}`] : [])].map((key) => busy.get(key) ?? busy.set(key, []).get(key)!)
    for (let moved = true; moved;) {
      moved = false
      for (const list of lists)
        for (const [a, b] of list)
          if (a < t + dur && t < b) {
            t = b
            moved = true
          }
    }
    if (t > start0[i]!) t = start0[i]! // cannot happen (see fromPair); the core's own start is feasible
    out[i] = t
    done[i] = 1
    for (const list of lists) list.push([t, t + dur])
  }
  return out
}

/** Turns the pair core's options and times (from now) into a decode with start reasons and the workshop score. */
function fromPair(c: Compiled, opt: Int32Array, start0: Int32Array, end0: Int32Array): Decoded {
  const n = c.n,
    now = c.problem.now
  const start = new Float64Array(n),
    end = new Float64Array(n)
  const option = new Int32Array(n),
    why = new Uint8Array(n),
    blocker = new Int32Array(n).fill(-1)
  const segments = new Array(n)
  let k = 0
  for (let i = 0; i < n; i++) {
    option[i] = opt[i]! - k
    k += c.options[i]!.length
  }
  // The core times each step right after what comes before it in its sequences, which can leave a gap on a bench and person
  // that a later step fits into; the decoder would fill it, so a re-plan of the unchanged workshop would shift steps at the same
  // lateness. Steps in order of start, each at the first time its bench and person are both free after its predecessors: no
  // step starts later than the core had it (every step before it on its bench or person ended by then and only moves earlier).
  const left = leftJustify(c, option, start0, end0)
  for (let i = 0; i < n; i++) {
    start[i] = left[i]! + now
    end[i] = left[i]! + (end0[i]! - start0[i]!) + now
    segments[i] = [{ start: start[i]!, end: end[i]! }]
  }
  const lastOn = (list: Map<number, number[]>, key: number, i: number) => {
    ;(list.get(key) ?? list.set(key, []).get(key)!).push(i)
  }
  const byBench = new Map<number, number[]>(),
    byPerson = new Map<number, number[]>()
  for (let i = 0; i < n; i++) {
    const o = c.options[i]![option[i]!]!
    lastOn(byBench, o.bench, i)
    if (o.person >= 0) lastOn(byPerson, o.person, i)
  }
  const benchPred = new Int32Array(n).fill(-1),
    personPred = new Int32Array(n).fill(-1)
  for (const [list, into] of [
    [byBench, benchPred],
    [byPerson, personPred],
  ] as const)
    for (const ops of list.values()) {
      ops.sort((a, b) => start[a]! - start[b]!)
      for (let q = 1; q < ops.length; q++) into[ops[q]!] = ops[q - 1]!
    }
  for (let i = 0; i < n; i++) {
    const jp = c.preds[i]![0]
    if (jp !== undefined && end[jp] === start[i]) {
      why[i] = Why.Predecessor
      blocker[i] = jp
    } else if (benchPred[i]! >= 0 && end[benchPred[i]!] === start[i]) {
      why[i] = Why.Bench
      blocker[i] = benchPred[i]!
    } else if (personPred[i]! >= 0 && end[personPred[i]!] === start[i]) {
      why[i] = Why.Person
      blocker[i] = personPred[i]!
    } else if (start[i] === now) why[i] = Why.Now
    else why[i] = Why.Release
  }
  return decodedOf(c, start, end, option, segments, why, blocker)
}
