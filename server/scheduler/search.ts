// Workshop planning search: due-date-aware dispatching rules for a first plan, then late-acceptance local search along the chains that make jobs late.
import type { Interval, Objective, SolveHooks, SolveStage, Violation } from './model.ts'
import { compareDecoded, decode, firstChangedPick, type Compiled, type CompiledOption, type Decoded, Why } from './decode.ts'
import { createRng } from './random.ts'
import { clipToWindows } from './calendar.ts'
import { solvePairShop, type PairSettings, type PairShop } from './pair-core.ts'

/** Share of the remaining budget given to the search on the disjunctive graph with calendars before the decoder's own search. */
const GRAPH_SHARE = 0.6
/**
 * Long budgets alternate the graph and the decoder's search: after the sketch, one round of each per CYCLE_MS (at most
 * MAX_CYCLES), each round's graph starting from the best decoded plan so far. On eight 60 s runs of three generated workshops,
 * three rounds ended 1.7 % lower in total than one (five runs better by 0.9–4.8 %, three worse by 0.9–2.3 %).
 */
const CYCLE_MS = 12_000,
  MAX_CYCLES = 3
/**
 * Share of the remaining budget given first to the calendar-free sketch. 0.15 rather than 0.3 (with the rounds above): lower
 * weighted lateness in total on twelve runs of three generated workshops at 2 s (0.9 %, eight runs better) and at 10 s (0.7 %,
 * nine better), and on eight runs at 60 s (1.6 %, six better); 0.08 was 0.3 % worse at 10 s.
 */
const SKETCH_SHARE = 0.15
/**
 * The sketch starts from the apparent-tardiness rule alone: on generated workshops it built the best start every time (1.7–2.7 M
 * min·weight against 3–6 M for weighted slack, modified due date and noisy due date), and each further rule costs 20–90 ms.
 */
const SKETCH_RULES = [2]
/**
 * With a previous plan, the last part of the budget walks the best plan back towards it (`settle` in solveGeneral): the search
 * reaches a lateness by whatever changes come its way, and the same lateness is often to be had with far fewer of them.
 */
const SETTLE_SHARE = 0.1

/**
 * The workshop without calendars: durations stretched by the calendar factor (calendar minutes per working minute), outside work
 * in calendar days, each job bag's steps as one chain in routing order, a step without a bench on a machine of its own.
 */
function sketchShop(c: Compiled): { shop: PairShop; real: Uint8Array } {
  const n = c.n
  const f = calendarFactor(c)
  const order = topologicalOrder(c)
  const jobPred = new Int32Array(n).fill(-1),
    jobSucc = new Int32Array(n).fill(-1)
  const lastInJob = new Int32Array(c.jobs.length).fill(-1)
  for (const i of order) {
    const j = c.jobOf[i]!
    const p = lastInJob[j]!
    if (p >= 0) {
      jobPred[i] = p
      jobSucc[p] = i
    }
    lastInJob[j] = i
  }
  const optStart = new Int32Array(n + 1)
  const machine: number[] = [],
    worker: number[] = [],
    dur: number[] = []
  const real = new Uint8Array(n)
  let extra = c.benchCount
  for (let i = 0; i < n; i++) {
    optStart[i] = machine.length
    const opts = c.options[i]!
    const away = c.outsideDays[i]! > 0
    if (away || opts.length === 0 || opts.some((o) => o.bench < 0)) {
      const m = opts.find((o) => o.minutes > 0)
      machine.push(extra++)
      worker.push(-1)
      dur.push(Math.max(1, Math.round(away ? c.outsideDays[i]! * 1440 * 1.4 : (m?.minutes ?? 1) * f)))
      continue
    }
    real[i] = 1
    for (const o of opts) {
      machine.push(o.bench)
      worker.push(o.person)
      dur.push(Math.max(1, Math.round(o.minutes * f + c.waitAfter[i]!)))
    }
  }
  optStart[n] = machine.length
  const now = c.problem.now
  const release = new Int32Array(n)
  for (let i = 0; i < n; i++) release[i] = Math.max(0, Math.round(c.earliest[i]! - now))
  return {
    real,
    shop: {
      n,
      machines: extra,
      workers: c.personCount,
      jobs: c.jobs.length,
      jobOf: Int32Array.from(c.jobOf),
      jobPred,
      jobSucc,
      optStart,
      optMachine: Int32Array.from(machine),
      optWorker: Int32Array.from(worker),
      optDur: Int32Array.from(dur),
      release,
      due: Float64Array.from(c.jobs, (j) => (j.due === null ? Infinity : j.due - now)),
      weight: Float64Array.from(c.jobs, (j) => j.weight),
    },
  }
}

/** The sorted, disjoint list less the sorted cuts. */
function subtract(list: Interval[], cuts: Interval[]): Interval[] {
  if (cuts.length === 0) return list
  const out: Interval[] = []
  let k = 0
  for (const w of list) {
    let s = w.start
    while (k < cuts.length && cuts[k]!.end <= s) k++
    for (let q = k; q < cuts.length && cuts[q]!.start < w.end; q++) {
      if (cuts[q]!.start > s) out.push({ start: s, end: cuts[q]!.start })
      if (cuts[q]!.end > s) s = cuts[q]!.end
    }
    if (s < w.end) out.push({ start: s, end: w.end })
  }
  return out
}

/**
 * The workshop as a disjunctive graph for the pair core: each step's bench and person sequences, its minutes walked through the
 * pair's joint working time (less the time pinned or running work holds), waits as delays on the job arc, outside work in
 * workshop days, pinned and running work kept where it is (on a machine of its own). Each job bag's steps form one chain in
 * routing order (branches run one after the other here; the decoder lets them overlap again).
 */
export function calendarShop(
  c: Compiled,
  first: Decoded,
  also: { option: Int32Array; order: Float64Array }[] = [],
): { shop: PairShop; real: Uint8Array; initial: { option: Int32Array; start: Float64Array }[] } {
  const n = c.n,
    p = c.problem,
    now = p.now
  // Sequences in the first plan's order of ends (then starts, then routing order): work the decoder slipped into the gap of
  // an interrupted step goes before it, as it must where a step holds its bench and person until it ends. Every arc of the
  // graph then runs forward in this order, so the first plan is a schedule of the graph.
  const rank = new Float64Array(n)
  topologicalOrder(c).forEach((i, k) => {
    rank[i] = k
  })
  const order = Array.from({ length: n }, (_, i) => i).sort((a, b) => first.end[a]! - first.end[b]! || first.start[a]! - first.start[b]! || rank[a]! - rank[b]!)
  const at = new Float64Array(n)
  order.forEach((i, k) => {
    at[i] = k
  })
  // Routing arcs: one chain arc into and out of each step where free, the others (branches, joins) as extra arcs; a job's
  // other sinks lead to its last one, so that step's end is the job's completion.
  const jobPred = new Int32Array(n).fill(-1),
    jobSucc = new Int32Array(n).fill(-1)
  const extraIn: number[][] = Array.from({ length: n }, () => [])
  const lastSink = new Int32Array(c.jobs.length).fill(-1)
  for (const i of order) {
    for (const q of c.preds[i]!) {
      if (jobPred[i]! < 0 && jobSucc[q]! < 0) {
        jobPred[i] = q
        jobSucc[q] = i
      } else extraIn[i]!.push(q)
    }
    if (c.succs[i]!.length === 0) lastSink[c.jobOf[i]!] = i
  }
  for (let i = 0; i < n; i++) {
    const last = lastSink[c.jobOf[i]!]!
    if (c.succs[i]!.length === 0 && i !== last) {
      if (jobPred[last]! < 0 && jobSucc[i]! < 0) {
        jobPred[last] = i
        jobSucc[i] = last
      } else extraIn[last]!.push(i)
    }
  }
  const predStart = new Int32Array(n + 1),
    succStart = new Int32Array(n + 1)
  const extraOut: number[][] = Array.from({ length: n }, () => [])
  for (let i = 0; i < n; i++) for (const q of extraIn[i]!) extraOut[q]!.push(i)
  const xPred: number[] = [],
    xSucc: number[] = []
  for (let i = 0; i < n; i++) {
    predStart[i] = xPred.length
    xPred.push(...extraIn[i]!)
    succStart[i] = xSucc.length
    xSucc.push(...extraOut[i]!)
  }
  predStart[n] = xPred.length
  succStart[n] = xSucc.length
  // Time held by pinned and running work on each bench and person: other work goes round it.
  const busyBench: Interval[][] = p.benches.map(() => []),
    busyPerson: Interval[][] = p.people.map(() => [])
  for (let i = 0; i < n; i++) {
    const f = c.fixedAt[i]
    if (!f || c.outsideDays[i]! > 0) continue
    for (const g of first.segments[i]!) {
      if (g.end <= g.start) continue
      if (f.option.bench >= 0) busyBench[f.option.bench]!.push(g)
      if (f.option.person >= 0) busyPerson[f.option.person]!.push(g)
    }
  }
  for (const l of [...busyBench, ...busyPerson]) l.sort((a, b) => a.start - b.start)
  const calIds = new Map<string, number>()
  const calOffset: number[] = [0],
    ws: number[] = [],
    we: number[] = [],
    wc: number[] = [],
    wl: number[] = []
  const minutesIn = (list: Interval[], a: number, b: number): number => {
    let m = 0
    for (const g of clipToWindows(list, a, b)) m += g.end - g.start
    return m
  }
  const calendarOf = (o: CompiledOption): number => {
    const key = `${o.bench}/${o.person}`
    let id = calIds.get(key)
    if (id === undefined) {
      let w = o.windows
      if (o.bench >= 0) w = subtract(w, busyBench[o.bench]!)
      if (o.person >= 0) w = subtract(w, busyPerson[o.person]!)
      let cum = 0
      const base = ws.length
      for (const x of w) {
        ws.push(x.start - now)
        we.push(x.end - now)
        wc.push(cum)
        cum += x.end - x.start
      }
      // Stretches end where pinned work holds the pair: a step does not run round other work.
      for (let k = w.length - 1; k >= 0; k--) {
        const next = w[k + 1]
        const hole = !next || minutesIn(o.windows, w[k]!.end, next.start) > 0
        wl[base + k] = hole ? base + k : wl[base + k + 1]!
      }
      id = calOffset.length - 1
      calOffset.push(ws.length)
      calIds.set(key, id)
    }
    return id
  }
  const optStart = new Int32Array(n + 1)
  const machine: number[] = [],
    worker: number[] = [],
    dur: number[] = [],
    optCal: number[] = []
  const release = new Int32Array(n),
    lag = new Int32Array(n)
  const real = new Uint8Array(n)
  let extra = c.benchCount
  for (let i = 0; i < n; i++) {
    optStart[i] = machine.length
    release[i] = Math.max(0, Math.round(c.earliest[i]! - now))
    lag[i] = Math.round(c.waitAfter[i]!)
    const opts = c.options[i]!
    if (c.fixedAt[i]) {
      // Kept where it is: from its start, for as long as the first plan gives it.
      release[i] = Math.round(first.start[i]! - now)
      machine.push(extra++)
      worker.push(-1)
      optCal.push(-1)
      dur.push(Math.max(0, Math.round(first.end[i]! - first.start[i]!)))
      continue
    }
    if (c.outsideDays[i]! > 0) {
      machine.push(extra++)
      worker.push(-1)
      optCal.push(-2)
      dur.push(c.outsideDays[i]!)
      continue
    }
    if (opts.length === 0 || opts.some((o) => o.bench < 0)) {
      const m = opts.find((o) => o.minutes > 0)
      machine.push(extra++)
      worker.push(-1)
      optCal.push(m ? calendarOf(m) : -1)
      dur.push(Math.max(0, Math.round(m?.minutes ?? 0)))
      continue
    }
    real[i] = 1
    for (const o of opts) {
      machine.push(o.bench)
      worker.push(o.person)
      optCal.push(calendarOf(o))
      dur.push(Math.max(0, Math.round(o.minutes)))
    }
  }
  optStart[n] = machine.length
  const days = p.workshopDays
  const initial = [{ option: first.option, order: at }, ...also].map((x) => {
    const option = new Int32Array(n)
    for (let i = 0; i < n; i++) option[i] = optStart[i]! + (real[i] && x.option[i]! >= 0 && x.option[i]! < c.options[i]!.length ? x.option[i]! : 0)
    return { option, start: x.order }
  })
  return {
    real,
    initial,
    shop: {
      n,
      machines: extra,
      workers: c.personCount,
      jobs: c.jobs.length,
      jobOf: Int32Array.from(c.jobOf),
      jobPred,
      jobSucc,
      optStart,
      optMachine: Int32Array.from(machine),
      optWorker: Int32Array.from(worker),
      optDur: Int32Array.from(dur),
      release,
      due: Float64Array.from(c.jobs, (j) => (j.due === null ? Infinity : j.due - now)),
      weight: Float64Array.from(c.jobs, (j) => j.weight),
      leaveBy: leaveByOf(c, now),
      lag,
      extra: { predStart, pred: Int32Array.from(xPred), succStart, succ: Int32Array.from(xSucc) },
      calendar: {
        optCal: Int32Array.from(optCal),
        calOffset: Int32Array.from(calOffset),
        winStart: Float64Array.from(ws),
        winEnd: Float64Array.from(we),
        winCum: Float64Array.from(wc),
        winStretchLast: Int32Array.from(wl),
        dayStart: Float64Array.from(days, (d) => d.start - now),
        dayEnd: Float64Array.from(days, (d) => d.end - now),
      },
    },
  }
}

/**
 * For each job bag's last step that is outside work (hallmarking), the latest minute (from `now`) it can be ready and still be
 * back by the due date: the opening of the last workshop day from which its days end by then. NaN for every other step.
 */
function leaveByOf(c: Compiled, now: number): Float64Array {
  const out = new Float64Array(c.n).fill(NaN)
  const days = c.problem.workshopDays
  for (let i = 0; i < c.n; i++) {
    const due = c.jobs[c.jobOf[i]!]!.due
    const k = c.outsideDays[i]!
    if (k <= 0 || c.succs[i]!.length > 0 || due === null) continue
    let last = -1
    for (let d = 0; d + k - 1 < days.length && days[d + k - 1]!.end <= due; d++) last = d
    out[i] = (last >= 0 ? days[last]!.start : (days[0]?.start ?? now) - 1440) - now
  }
  return out
}

export interface GeneralResult {
  decoded: Decoded
  iterations: number
  firstPlanMs: number
  evaluations: number
  previous?: { weightedTardiness: number; makespan: number }
}

/** Remaining work from each operation's start to its job's end, in working minutes (shortest options), plus waits. */
function tails(c: Compiled): Float64Array {
  const tail = new Float64Array(c.n)
  const order = topologicalOrder(c)
  for (let k = order.length - 1; k >= 0; k--) {
    const i = order[k]!
    let own = c.outsideDays[i]! > 0 ? c.outsideDays[i]! * 480 : Math.min(...c.options[i]!.map((o) => o.minutes), Infinity)
    if (!Number.isFinite(own)) own = 0
    let after = 0
    for (const s of c.succs[i]!) after = Math.max(after, tail[s]!)
    tail[i] = own + c.waitAfter[i]! + after
  }
  return tail
}

/** Kahn order over the routing graph (cycles were rejected by checkProblem). */
export function topologicalOrder(c: Compiled): number[] {
  const indeg = c.preds.map((p) => p.length)
  const out: number[] = []
  for (let i = 0; i < c.n; i++) if (indeg[i] === 0) out.push(i)
  for (let h = 0; h < out.length; h++) for (const s of c.succs[out[h]!]!) if (--indeg[s]! === 0) out.push(s)
  return out
}

/** Calendar minutes per working minute, from how much of the planning window the people (or benches) are available. */
function calendarFactor(c: Compiled): number {
  const p = c.problem
  const span = Math.max(1, p.horizon - p.now)
  const pool = p.people.length > 0 ? p.people : p.benches
  if (pool.length === 0) return 1
  let avail = 0
  for (const r of pool) for (const w of r.available) avail += Math.max(0, Math.min(w.end, p.horizon) - Math.max(w.start, p.now))
  const mean = avail / pool.length
  return mean > 0 ? Math.min(10, Math.max(1, span / mean)) : 1
}

/** Priority keys of the dispatching rules tried for the first plan (lower = earlier). */
export function dispatchKeys(c: Compiled): Float64Array[] {
  const tail = tails(c)
  const f = calendarFactor(c)
  const far = c.problem.horizon * 2
  const dueOf = (i: number): number => c.jobs[c.jobOf[i]!]!.due ?? far
  const weightOf = (i: number): number => Math.max(1e-6, c.jobs[c.jobOf[i]!]!.weight)
  const rules: ((i: number) => number)[] = [
    (i) => dueOf(i) - f * tail[i]!, // minimum slack
    (i) => dueOf(i) * 1e3 - tail[i]!, // earliest due date, longest remaining work first within a job bag
    (i) => {
      const s = dueOf(i) - f * tail[i]! - c.problem.now
      return s >= 0 ? s / weightOf(i) : s * weightOf(i)
    }, // weighted slack
    (i) => -tail[i]!, // most work remaining (makespan)
  ]
  return rules.map((rule) => {
    const k = new Float64Array(c.n)
    let low = Infinity
    for (let i = 0; i < c.n; i++) {
      k[i] = rule(i) + i * 1e-9
      if (k[i]! < low) low = k[i]!
    }
    // Work that must be done before a pinned step goes first, earliest pin first, so the pin can hold.
    for (let i = 0; i < c.n; i++) if (Number.isFinite(c.pinDeadline[i]!)) k[i] = low - 1e6 + c.pinDeadline[i]! * 1e-3 - tail[i]! * 1e-6
    return k
  })
}

/** The first-plan rule set and the earliest-due-date baseline a manager would use by hand. */
export function earliestDueDateKeys(c: Compiled): Float64Array {
  return dispatchKeys(c)[1]!
}

/** Operations on the chain that fixes job j's completion: predecessors and resource blockers traced back from its last operation. */
function criticalChain(c: Compiled, d: Decoded, j: number, lastOf: Int32Array): number[] {
  const chain: number[] = []
  let x = lastOf[j]!
  const seen = new Set<number>()
  while (x >= 0 && !seen.has(x)) {
    seen.add(x)
    chain.push(x)
    const w = d.why[x]!
    x = w === Why.Predecessor || w === Why.Bench || w === Why.Person ? d.blocker[x]! : -1
  }
  return chain
}

/** Constructive first plan and late-acceptance improvement within the time limit. */
export function solveGeneral(
  c: Compiled,
  opts: { seed: number; deadline: number; maxIterations?: number; objective: Objective[] },
  hooks: SolveHooks,
  clock: () => number,
  t0: number,
): GeneralResult {
  const rng = createRng(opts.seed)
  const obj = opts.objective
  const n = c.n
  const greedy = new Int32Array(n).fill(-1)
  let bestKey: Float64Array = new Float64Array(n),
    bestChoice: Int32Array = greedy.slice(),
    best: Decoded | null = null
  let firstPlanMs = -1
  for (const key of dispatchKeys(c)) {
    const d = decode(c, key, greedy)
    if (firstPlanMs < 0) firstPlanMs = clock() - t0 // the first rule's plan is already a valid plan
    if (!best || compareDecoded(d, best, obj) < 0) {
      best = d
      bestKey = key
    }
    if (hooks.shouldStop?.()) break
  }
  // The previous plan as it stands: its operations in their old order on their old bench and person, new work after them
  // (filling the gaps), so an unchanged workshop gets its plan back and a new order moves nobody unless that buys something.
  let previous: GeneralResult['previous']
  const prev = c.problem.previous
  if (prev && Object.keys(prev).length > 0 && !hooks.shouldStop?.()) {
    const key = new Float64Array(n),
      choice = new Int32Array(n).fill(-1)
    const tail = tails(c)
    for (let i = 0; i < n; i++) {
      const at = prev[c.ops[i]!.id]
      key[i] = at ? at.start + i * 1e-9 : c.problem.horizon * 4 + (c.jobs[c.jobOf[i]!]!.due ?? c.problem.horizon * 2) - tail[i]! + i * 1e-9
      if (at && c.previousOption[i]! >= 0) choice[i] = c.previousOption[i]!
    }
    const d = decode(c, key, choice)
    previous = { weightedTardiness: d.weightedTardiness, makespan: d.makespan }
    if (!best || compareDecoded(d, best, obj) <= 0) {
      best = d
      bestKey = key
      bestChoice = choice
    }
  }
  let iterations = 0,
    evaluations = 0,
    phaseEvaluations = 0 // moves evaluated so far by the sketch or graph under way (added to evaluations when it ends)
  if (!best) throw new Error('no dispatching rule produced a plan')
  /** Progress: the best plan so far and how many plans were tried to find it (moves on the sketch and the graph, decodes). */
  const report = (stage: SolveStage, elapsedMs = clock() - t0): void =>
    hooks.onProgress?.({ iteration: evaluations + phaseEvaluations + iterations, best: scoreOf(best!), elapsedMs, stage })
  report('start', firstPlanMs)
  const done = (): GeneralResult => ({ decoded: best!, iterations, firstPlanMs, evaluations: evaluations + iterations, ...(previous ? { previous } : {}) })
  if (n === 0) return done()

  // A pair-core schedule (sketch or graph) through the decoder: its steps in order of their starts (what must go first for pins
  // in front) with its bench and person choices, and with the decoder's own choices; kept when better. The better schedules of a
  // search are decoded as they come while that takes at most an eighth of its time (a quarter gave the same 60 s results and 2 s
  // results within the spread, with a quarter fewer moves evaluated), and its last one in any case.
  let stage: SolveStage = 'sketch'
  let pending: { option: Int32Array; start: Int32Array } | null = null,
    decodeMs = 0,
    decodes = 0
  let lastDecoded: ({ d: Decoded; key: Float64Array; choice: Int32Array } | undefined)[] = []
  const tryDecode = (part: { shop: PairShop; real: Uint8Array }, option: Int32Array, start: Int32Array): void => {
    const a = clock()
    const key = new Float64Array(n),
      choice = new Int32Array(n).fill(-1)
    for (let i = 0; i < n; i++) {
      key[i] = start[i]! + i * 1e-9
      const k = option[i]! - part.shop.optStart[i]!
      if (part.real[i] && k >= 0 && k < c.options[i]!.length) choice[i] = k
    }
    let low = Infinity
    for (let i = 0; i < n; i++) if (key[i]! < low) low = key[i]!
    for (let i = 0; i < n; i++) if (Number.isFinite(c.pinDeadline[i]!)) key[i] = low - 1e6 + c.pinDeadline[i]! * 1e-3
    let improved = false
    ;[choice, new Int32Array(n).fill(-1)].forEach((ch, variant) => {
      // Successive schedules of one search differ after the steps a move touched: decoded from the first pick that can differ.
      const prev = lastDecoded[variant]
      const d = prev ? decode(c, key, ch, prev.d, firstChangedPick(prev.d, prev.key, prev.choice, key, ch)) : decode(c, key, ch)
      lastDecoded[variant] = { d, key, choice: ch }
      decodes++
      evaluations++
      if (compareDecoded(d, best!, obj) < 0) {
        best = d
        bestKey = key
        bestChoice = ch.slice()
        improved = true
      }
    })
    decodeMs += clock() - a
    if (improved) report(stage)
  }
  const decodeAsTheyCome = {
    begin: (now: SolveStage): void => {
      stage = now
      pending = null
      decodeMs = 0
      decodes = 0
      lastDecoded = []
    },
    onBest: (part: { shop: PairShop; real: Uint8Array }, since: number) => {
      return (option: Int32Array, start: Int32Array, evaluated: number): void => {
        phaseEvaluations = evaluated
        if (decodeMs * 8 < clock() - since) {
          pending = null
          tryDecode(part, option, start)
        } else pending = { option: option.slice(), start: start.slice() }
      }
    },
    finish: (part: { shop: PairShop; real: Uint8Array }, r: { option: Int32Array; start: Int32Array }): void => {
      if (pending || decodes === 0) tryDecode(part, r.option, r.start)
      pending = null
    },
  }

  /** One pair-core search of the sketch or the graph from `since` to `deadline`, its better schedules decoded as they come. */
  const pairStage = (
    which: SolveStage,
    part: { shop: PairShop; real: Uint8Array },
    since: number,
    deadline: number,
    settings: Pick<PairSettings, 'seed' | 'startRules' | 'initial' | 'initialOnly'>,
  ): void => {
    decodeAsTheyCome.begin(which)
    // Said when the stage begins and every half second while it runs, even when nothing better comes (as the decoder's search does).
    report(which)
    let lastBeat = clock()
    const r = solvePairShop(part.shop, {
      ...settings,
      objective: 'weightedTardiness',
      deadline,
      clock,
      maxIterations: opts.maxIterations !== undefined ? opts.maxIterations * 20 : Infinity,
      ...(hooks.shouldStop ? { shouldStop: hooks.shouldStop } : {}),
      onBest: decodeAsTheyCome.onBest(part, since),
      onTick: (evaluated, now) => {
        if (now - lastBeat < 500) return
        lastBeat = now
        phaseEvaluations = evaluated
        report(which, now - t0)
      },
    })
    evaluations += r.evaluations
    phaseEvaluations = 0
    decodeAsTheyCome.finish(part, r)
    report(which)
  }

  // With a previous plan, the search leaves the last part of the budget to walking its best plan back towards that plan.
  const searchEnd = previous ? opts.deadline - (opts.deadline - clock()) * SETTLE_SHARE : opts.deadline
  // A calendar-free sketch of the workshop, searched on the disjunctive graph for part of the budget; its order and its bench and
  // person choices seed the calendar search when they decode to a better plan.
  const sketchMs = Math.max(0, (searchEnd - clock()) * SKETCH_SHARE)
  if (obj[0] === 'weightedTardiness' && best.weightedTardiness > 0 && sketchMs >= 50 && opts.maxIterations !== 0 && !hooks.shouldStop?.()) {
    const now = clock()
    pairStage('sketch', sketchShop(c), now, now + sketchMs, { seed: opts.seed, startRules: SKETCH_RULES })
  }

  // The workshop on the disjunctive graph with its calendars, searched for most of the budget: each candidate move is timed
  // exactly on the calendars, re-timing only the steps it touches and those whose predecessors it moves. Its better schedules'
  // order and bench and person choices go through the decoder as they come (which lets branches overlap again and fills gaps,
  // so it is never later) and are kept when better.
  // The decoder's search: what it may move, and its state kept across the rounds.
  const historyLen = 40
  const maxIt = opts.maxIterations ?? Infinity
  const movable: number[] = []
  for (let i = 0; i < n; i++) if (!c.fixedAt[i] && c.outsideDays[i]! < 0) movable.push(i)
  const lastOf = new Int32Array(c.jobs.length)
  const cycles = opts.maxIterations !== undefined ? 1 : Math.max(1, Math.min(MAX_CYCLES, Math.floor((searchEnd - clock()) / CYCLE_MS)))
  for (let cycle = 0; cycle < cycles; cycle++) {
    const cycleEnd = clock() + (searchEnd - clock()) / (cycles - cycle)
    const graphMs = Math.max(0, (cycleEnd - clock()) * GRAPH_SHARE)
    if (obj[0] === 'weightedTardiness' && best.weightedTardiness > 0 && graphMs >= 20 && opts.maxIterations !== 0 && !hooks.shouldStop?.()) {
      const now = clock()
      const graph = calendarShop(c, best)
      pairStage('graph', graph, now, now + graphMs, { seed: opts.seed + cycle * 7919, initial: graph.initial, initialOnly: true })
    }

    if (movable.length === 0) break
    let curKey: Float64Array = bestKey.slice(),
      curChoice: Int32Array = bestChoice.slice(),
      cur = best
    const history: Decoded[] = new Array(historyLen).fill(cur)
    let lastReport = clock()

    while (iterations < maxIt) {
      if ((iterations & 3) === 0 && (clock() >= cycleEnd || hooks.shouldStop?.())) break
      iterations++
      const key = curKey.slice(),
        choice = curChoice.slice()
      // Pick the job to help: a tardy one weighted by its weighted tardiness, else the one that ends last.
      lastOf.fill(-1)
      for (let i = 0; i < n; i++) {
        const j = c.jobOf[i]!
        if (lastOf[j]! < 0 || cur.end[i]! > cur.end[lastOf[j]!]!) lastOf[j] = i
      }
      let target = -1
      const tardinessFirst = obj[0] === 'weightedTardiness' && cur.weightedTardiness > 0
      if (tardinessFirst) {
        let total = 0
        c.jobs.forEach((job, j) => {
          if (job.due !== null && cur.completion[j]! > job.due) total += job.weight * (cur.completion[j]! - job.due)
        })
        let pick = rng.next() * total
        c.jobs.forEach((job, j) => {
          if (target >= 0 || job.due === null || cur.completion[j]! <= job.due) return
          pick -= job.weight * (cur.completion[j]! - job.due)
          if (pick <= 0) target = j
        })
      }
      if (target < 0) {
        let bestEnd = -Infinity,
          ties = 0
        c.jobs.forEach((_, j) => {
          if (lastOf[j]! < 0) return
          const e = cur.completion[j]!
          if (e > bestEnd) {
            bestEnd = e
            target = j
            ties = 1
          } else if (e === bestEnd && rng.int(++ties) === 0) target = j
        })
      }
      const chain = target >= 0 ? criticalChain(c, cur, target, lastOf).filter((x) => !c.fixedAt[x] && c.outsideDays[x]! < 0) : []
      const r = rng.next()
      if (chain.length > 0 && r < 0.55) {
        // Jump ahead of the operation that holds a chain member back on its bench or person.
        const blocked = chain.filter((x) => (cur.why[x] === Why.Bench || cur.why[x] === Why.Person) && cur.blocker[x]! >= 0)
        const x = blocked.length > 0 ? blocked[rng.int(blocked.length)]! : chain[rng.int(chain.length)]!
        const b = cur.blocker[x]!
        if (b >= 0 && blocked.length > 0) key[x] = key[b]! - 1e-6 - rng.next() * 1e-3
        else key[x] = key[x]! - Math.abs(key[x]!) * 0.05 - 1
      } else if (chain.length > 0 && r < 0.8) {
        // Change the bench/person choice of a chain member (or hand it back to the earliest-finish rule).
        const withChoice = chain.filter((x) => c.options[x]!.length > 1)
        if (withChoice.length > 0) {
          const x = withChoice[rng.int(withChoice.length)]!
          const k = rng.int(c.options[x]!.length + 1) - 1
          choice[x] = k
        } else {
          const x = chain[rng.int(chain.length)]!
          key[x] = key[x]! - Math.abs(key[x]!) * 0.05 - 1
        }
      } else if (r < 0.92 && target >= 0) {
        // Move the whole job bag forward in priority.
        const shift = rng.next() * 0.2 + 0.02
        let span = 1
        for (let i = 0; i < n; i++) span = Math.max(span, Math.abs(key[i]!))
        for (let i = 0; i < n; i++) if (c.jobOf[i] === target) key[i] = key[i]! - shift * span
      } else {
        // Diversify: swap the priorities of two operations.
        const a = movable[rng.int(movable.length)]!,
          b = movable[rng.int(movable.length)]!
        const t = key[a]!
        key[a] = key[b]!
        key[b] = t
      }
      // Only what comes after the first pick that can differ is decoded again.
      const cand = decode(c, key, choice, cur, firstChangedPick(cur, curKey, curChoice, key, choice))
      const slot = iterations % historyLen
      if (compareDecoded(cand, cur, obj) <= 0 || compareDecoded(cand, history[slot]!, obj) <= 0) {
        cur = cand
        curKey = key
        curChoice = choice
        if (compareDecoded(cand, best, obj) < 0) {
          best = cand
          bestKey = key
          bestChoice = choice
          report('decoder')
          lastReport = clock()
        }
      }
      if (compareDecoded(cur, history[slot]!, obj) < 0) history[slot] = cur
      if (clock() - lastReport > 500) {
        lastReport = clock()
        report('decoder', lastReport - t0)
      }
    }
  }
  if (previous) settle()
  return done()

  /**
   * Walks the best plan back towards the previous one, for what is left of the budget: each job bag with a step on another bench
   * or person or at another time than before, then each such step, is given its previous bench and person and its previous start
   * as its priority (the others keep their places in the best plan, by start), and kept when the plan is no worse by the
   * objective — so the same lateness with fewer changes wins. Passes repeat while one of them keeps something.
   */
  function settle(): void {
    const prevOf = c.problem.previous!
    const prevStart = new Float64Array(n).fill(NaN)
    for (let i = 0; i < n; i++) {
      const at = prevOf[c.ops[i]!.id]
      if (at && !c.fixedAt[i]) prevStart[i] = at.start
    }
    // Bench work kept where the previous plan had it starts no earlier than there (a hole left by work moved later stays a hole
    // rather than being filled by work that would move up for nothing).
    const prevHold = new Float64Array(n).fill(NaN)
    for (let i = 0; i < n; i++) if (c.outsideDays[i]! < 0) prevHold[i] = prevStart[i]!
    const noHold = new Float64Array(n).fill(NaN)
    const sameHold = (a: number, b: number): boolean => a === b || (Number.isNaN(a) && Number.isNaN(b))
    /** The first pick of base that can differ: firstChangedPick, and the own pick of a step whose hold changed. */
    const firstPick = (
      base: Decoded,
      bKey: Float64Array,
      bCh: Int32Array,
      bHold: Float64Array,
      key: Float64Array,
      ch: Int32Array,
      hold: Float64Array,
    ): number => {
      let from = firstChangedPick(base, bKey, bCh, key, ch)
      const order = base.order
      if (!order) return 0
      for (let k = 0; k < from && k < order.length; k++) {
        const i = order[k]!
        if (!sameHold(bHold[i]!, hold[i]!)) {
          from = k
          break
        }
      }
      return from
    }
    const differs = (d: Decoded, i: number): boolean =>
      !Number.isNaN(prevStart[i]!) && c.outsideDays[i]! < 0 && (d.option[i] !== c.previousOption[i] || d.start[i] !== prevStart[i])
    // The best plan's own order (by start) and choices, so a candidate changes only what it reverts.
    const startKey = (d: Decoded): Float64Array => {
      const key = new Float64Array(n)
      let low = Infinity
      for (let i = 0; i < n; i++) {
        key[i] = d.start[i]! + i * 1e-9
        if (key[i]! < low) low = key[i]!
      }
      for (let i = 0; i < n; i++) if (Number.isFinite(c.pinDeadline[i]!)) key[i] = low - 1e6 + c.pinDeadline[i]! * 1e-3
      return key
    }
    const startChoice = (d: Decoded): Int32Array => {
      const choice = new Int32Array(n).fill(-1)
      for (let i = 0; i < n; i++) if (!c.fixedAt[i] && c.outsideDays[i]! < 0 && d.option[i]! >= 0) choice[i] = d.option[i]!
      return choice
    }
    let curKey = startKey(best!),
      curChoice = startChoice(best!),
      curHold = noHold
    let cur = decode(c, curKey, curChoice)
    const vsBest = compareDecoded(cur, best!, obj)
    if (vsBest > 0) {
      curKey = bestKey
      curChoice = bestChoice
      curHold = noHold
      cur = best!
    } else if (vsBest < 0) {
      // Decoded again in order of its starts, the best plan can pack tighter (a step meets fewer steps placed before it).
      best = cur
      bestKey = curKey
      bestChoice = curChoice
      report('decoder')
    }
    // Said every half second like the other stages, better plan or not, so the planner's dialog never goes quiet.
    let lastBeat = clock()
    const stopped = (): boolean => {
      const now = clock()
      if (now - lastBeat >= 500) {
        lastBeat = now
        report('decoder', now - t0)
      }
      return now >= opts.deadline || !!hooks.shouldStop?.()
    }
    // From the previous plan's side first: its priorities and choices, with the best plan's taken over one job bag at a time
    // where that lowers the objective, until it is no worse than the best — the bags that must change, and only those.
    {
      const bKey = curKey,
        bChoice = curChoice
      const key = bKey.slice(),
        choice = bChoice.slice()
      const bags: number[] = []
      const seen = new Uint8Array(c.jobs.length)
      for (let i = 0; i < n; i++)
        if (differs(cur, i)) {
          key[i] = prevStart[i]! + i * 1e-9
          if (c.previousOption[i]! >= 0) choice[i] = c.previousOption[i]!
          if (!seen[c.jobOf[i]!]) bags.push(c.jobOf[i]!)
          seen[c.jobOf[i]!] = 1
        }
      let here = decode(c, key, choice)
      iterations++
      let open = bags.slice()
      while (compareDecoded(here, cur, obj) > 0 && open.length > 0 && !stopped()) {
        // The bag whose own changes help most.
        let pick = -1,
          pickD: Decoded | null = null
        for (const j of open) {
          if (stopped()) break
          const k2 = key.slice(),
            ch2 = choice.slice()
          for (let i = 0; i < n; i++)
            if (c.jobOf[i] === j) {
              k2[i] = bKey[i]!
              ch2[i] = bChoice[i]!
            }
          const d = decode(c, k2, ch2, here, firstChangedPick(here, key, choice, k2, ch2))
          iterations++
          if (compareDecoded(d, here, obj) < 0 && (!pickD || compareDecoded(d, pickD, obj) < 0)) {
            pick = j
            pickD = d
          }
        }
        if (pick < 0 || !pickD) break
        for (let i = 0; i < n; i++)
          if (c.jobOf[i] === pick) {
            key[i] = bKey[i]!
            choice[i] = bChoice[i]!
          }
        here = pickD
        open = open.filter((j) => j !== pick)
      }
      if (compareDecoded(here, cur, obj) <= 0) {
        cur = here
        curKey = key
        curChoice = choice
        if (compareDecoded(here, best!, obj) < 0) {
          best = here
          bestKey = key
          bestChoice = choice
          report('decoder')
        }
      }
    }
    // Then each differing job bag and step given back its previous bench, person and priority; once that settles, the same again
    // with the step held at its previous start (work that moved up into time freed by others goes back).
    for (const held of [false, true])
      for (let pass = 0; pass < 4 && !stopped(); pass++) {
        let kept = 0
        // First whole job bags (a bag's steps usually moved together), then single steps.
        const groups: number[][] = []
        const byJob = new Map<number, number[]>()
        for (let i = 0; i < n; i++)
          if (differs(cur, i)) {
            const j = c.jobOf[i]!
            if (!byJob.has(j)) byJob.set(j, [])
            byJob.get(j)!.push(i)
          }
        for (const steps of byJob.values()) groups.push(steps)
        for (const steps of byJob.values()) if (steps.length > 1) for (const i of steps) groups.push([i])
        for (let g = groups.length - 1; g > 0; g--) {
          const h = rng.int(g + 1)
          const t = groups[g]!
          groups[g] = groups[h]!
          groups[h] = t
        }
        for (const steps of groups) {
          if (stopped()) break
          if (!steps.some((i) => differs(cur, i))) continue
          // Already given back (a step's start also follows the others): nothing new to try.
          if (
            steps.every(
              (i) =>
                curKey[i] === prevStart[i]! + i * 1e-9 &&
                (c.previousOption[i]! < 0 || curChoice[i] === c.previousOption[i]) &&
                (!held || sameHold(curHold[i]!, prevHold[i]!)),
            )
          )
            continue
          const key = curKey.slice(),
            choice = curChoice.slice(),
            hold = curHold.slice()
          for (const i of steps) {
            key[i] = prevStart[i]! + i * 1e-9
            if (c.previousOption[i]! >= 0) choice[i] = c.previousOption[i]!
            hold[i] = held ? prevHold[i]! : NaN
          }
          const cand = decode(c, key, choice, cur, firstPick(cur, curKey, curChoice, curHold, key, choice, hold), hold)
          iterations++
          // No worse is kept too: the priorities come closer to the previous plan's, which lets later steps back in.
          const cmp = compareDecoded(cand, cur, obj)
          if (cmp <= 0) {
            cur = cand
            curKey = key
            curChoice = choice
            curHold = hold
            if (cmp < 0) kept++
            if (compareDecoded(cand, best!, obj) < 0) {
              best = cand
              bestKey = key
              bestChoice = choice
              report('decoder')
            }
          }
        }
        if (kept === 0) break
      }
  }
}

const scoreOf = (d: Decoded) => ({
  weightedTardiness: d.weightedTardiness,
  makespan: d.makespan,
  moves: d.moves,
  shifted: d.shifted,
  feasible: d.overflow < 0,
  violations: [] as Violation[],
})
