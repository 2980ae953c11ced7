// Tabu search on the disjunctive graph for calendar-free shops where each operation takes a machine and (optionally) a worker,
// with a duration per (machine, worker) pair: minimises total weighted tardiness or makespan. Moves are evaluated exactly.
import { createRng, type Rng } from './random.ts'
import { freshCopies } from './fresh-copy.ts'

/** A flattened shop: job chains of operations, each with (machine, worker, duration) options; worker -1 = none needed. */
export interface PairShop {
  n: number
  machines: number
  workers: number
  jobs: number
  jobOf: Int32Array
  jobPred: Int32Array
  jobSucc: Int32Array
  optStart: Int32Array
  optMachine: Int32Array
  optWorker: Int32Array
  optDur: Int32Array
  /** Earliest start per operation. */
  release: Int32Array
  /** Per job; Infinity when the job has no due date. */
  due: Float64Array
  weight: Float64Array
  /** Elapsed minutes after a step before its job successors may start (holds nothing); zero when absent. */
  lag?: Int32Array
  /**
   * Routing arcs beyond the chains (branches and joins): step x also waits for extraPred[extraPredStart[x]..extraPredStart[x+1])
   * and holds back extraSucc[extraSuccStart[x]..extraSuccStart[x+1]). Every sink of a job but its chain's last step must reach
   * that step through these arcs, so the last step's end is the job's completion.
   */
  extra?: { predStart: Int32Array; pred: Int32Array; succStart: Int32Array; succ: Int32Array }
  /** Working calendars: when present, an option's start and end follow its calendar instead of start + duration. */
  calendar?: PairCalendar
  /**
   * Weighted tardiness with outside work last (hallmarking): per step, NaN where it does not apply, and for a job's last step
   * that is outside work the latest moment it can be ready and still be back by the due date. Such a job's lateness moves by
   * whole workshop days, so most moves leave it unchanged; the search values the job instead by how far that step is ready
   * after this moment (weighted minutes), which falls with every minute gained and is zero exactly when the job is on time.
   * The weighted tardiness reported stays the real one.
   */
  leaveBy?: Float64Array
}

/**
 * Calendars for the pair core, in minutes from the core's time zero. optCal[o] >= 0: the option works only inside window list
 * optCal[o] (its windows are winStart/winEnd[calOffset[c]..calOffset[c+1]), with winCum the working minutes before each window)
 * and takes optDur[o] working minutes, resuming at the next window when one ends; -1: plain, start + optDur[o]; -2: outside work
 * that leaves at its start and comes back at the end of the optDur[o]-th day in days (sorted day starts and ends) opening at or
 * after it. Beyond the last window an option ends at FAR.
 */
export interface PairCalendar {
  optCal: Int32Array
  calOffset: Int32Array
  winStart: Float64Array
  winEnd: Float64Array
  winCum: Float64Array
  /**
   * Per window, the last window of its stretch: windows apart only by time the bench and the person are both away (night, a
   * shared break). A step does not run on past its stretch's end, where it would hold its bench or person through time the other
   * could work with someone else: it starts at the next stretch instead, unless it fits in none.
   */
  winStretchLast: Int32Array
  dayStart: Float64Array
  dayEnd: Float64Array
}

/** Where a calendar runs out: far enough to dominate any objective, small enough for Int32 arithmetic. */
export const FAR = 1 << 29

export type PairObjective = 'weightedTardiness' | 'makespan'

export interface PairSettings {
  seed: number
  objective: PairObjective
  /** Absolute clock value (ms) at which to stop. */
  deadline: number
  clock: () => number
  maxIterations?: number
  shouldStop?: () => boolean
  onImprove?: (value: number, iteration: number) => void
  /** Each new best schedule: options and starts (read them before returning; the arrays are reused), and the candidates evaluated so far. */
  onBest?: (option: Int32Array, start: Int32Array, evaluations: number) => void
  /** Every few iterations of the search: the candidates evaluated so far and the clock reading it just took (no extra reading). */
  onTick?: (evaluations: number, now: number) => void
  /** Schedules to start from as well (each step's option and a start order): sequences are the steps in that order. */
  initial?: { option: Int32Array; start: Float64Array }[]
  /** Tests only: time every candidate also by Kahn's order and throw if the in-order timing differs. */
  verifyOrder?: boolean
  /** Skip the dispatching rules when an initial schedule is given (they are slow on calendars). */
  initialOnly?: boolean
  /**
   * The dispatching rules that build starting schedules (default: all; for weighted tardiness 0 weighted slack, 1 modified due
   * date, 2 apparent tardiness cost, 3 due date with noise).
   */
  startRules?: number[]
  /** The tabu tenure scaled by this (default 1); `solve` gives due-date shops TWT_TENURE_SCALE. */
  tenureScale?: number
  /**
   * Weighted tardiness: draw the tardy jobs whose critical paths feed an iteration evenly among the tardy jobs instead of by
   * their weighted tardiness (default). `solve` sets it for due-date shops (see EVEN_TARGETS); the workshop's stages keep the
   * default.
   */
  evenTargets?: boolean
}

export interface PairSolution {
  option: Int32Array
  start: Int32Array
  end: Int32Array
  weightedTardiness: number
  makespan: number
  iterations: number
  /** Candidate schedules evaluated (each an exact longest-path computation). */
  evaluations: number
  firstMs: number
}

const M = 0,
  W = 1 // resource types: machine, worker
/** Reassignments evaluated exactly per iteration (the best by estimate). */
const REASSIGN_EVALUATED = 6
/** Tardy jobs whose critical paths feed one iteration's moves (chosen by weighted tardiness, or evenly: see evenTargets). */
const TARGETS = 2
/**
 * Due-date job shops draw an iteration's tardy jobs evenly rather than by weighted tardiness: the most tardy jobs have the
 * longest critical paths (more candidates, fewer iterations) and are the hardest to bring forward, while each job that an even
 * draw brings back to its due date is a gain of its own. Measured side by side (one run per core, CPU-time budgets, 2026-12-04):
 * la06, la07, la11–la14 at 5 s, seeds 1–16, summed gaps 430.5 against 479.9 % (96 pairs, 49 better, 45 worse); la01–la15 at
 * 10 s, seeds 1–4, mean gap 1.75 % against 1.94 %. One job by weighted tardiness and one evenly: 247.0 against 224.0 for evenly
 * (5 s, seeds 1–8). On generated workshops (200 job bags, 2 s, three workshops × three seeds) the even draw in the sketch and
 * graph stages was 1.2 % higher in total (eight runs of nine worse), so the workshop keeps the weighted draw.
 */
export const EVEN_TARGETS = true
/** On stagnation: share of restarts from a fresh shaken dispatch, from the best, else from where the walk is (makespan; for
 * weighted tardiness the rest start from the search's home, see HOME_SLACK). */
const RESTART_FRESH = 0.3,
  RESTART_BEST = 0.5
/** In a kick, the share of random changes that give a step another machine and worker pair (where steps have a choice). */
const REASSIGN_KICKS = 0.3
/**
 * Weighted tardiness: an episode's best becomes the search's home (where kicks start from) when within this share of the home's
 * value, better or not (threshold acceptance between local optima). On la01–la15 at 10 s, seeds 1–4: mean gaps 2.64 / 1.72 /
 * 2.35 / 1.32 % against 2.53 / 2.46 / 2.90 / 2.92 % restarting from the best or the walk; 0.01, 0.06 and 0.1 were no better
 * than none on six of them at 5 s.
 */
const HOME_SLACK = 0.03
/**
 * Weighted tardiness: the tabu tenure (8 + ⌊√n / 2⌋ to twice that for the makespan) scaled by this. Each iteration's moves come
 * from only two tardy jobs' critical paths, and a tenure that long kept the walk from them. Measured at 5 s of CPU, seeds 1–8:
 * la06, la07, la11–la14 (f = 1.3) mean gap 5.6 % against 6.4 % unscaled (0.5: 5.9 %, 0.7: 6.0 %; 0.3 worse, la11/la12 at 11 %);
 * ft10 with looser due dates (f = 1.3 / 1.5 / 1.6, few late jobs) 0.0 / 10.0 / 14.7 % against 7.6 / 13.5 / 28.5 %; the same
 * at 10 s, seeds 1–4: 0.0 / 0.0 / 11.3 % against 5.7 / 5.3 / 22.9 %; la06–la15 at 10 s 2.68 % against 2.71 % (the same).
 * Not used by the workshop search's sketch and graph: on generated workshops it came out 0.4 % higher at 2 s and 0.8 % at 10 s
 * (seven of nine runs higher) — within the spread, but one way.
 */
export const TWT_TENURE_SCALE = 0.6

/** Lower bound on the makespan: the longest job chain at its shortest durations (from its release). */
export function pairLowerBound(s: PairShop): number {
  let lb = 0
  for (let i = 0; i < s.n; i++) {
    if (s.jobPred[i]! >= 0) continue
    let t = 0
    for (let x = i; x >= 0; x = s.jobSucc[x]!) {
      let d = Infinity
      for (let o = s.optStart[x]!; o < s.optStart[x + 1]!; o++) d = Math.min(d, s.optDur[o]!)
      t = Math.max(t, s.release[x]!) + d
    }
    lb = Math.max(lb, t)
  }
  return lb
}

const rngOf = createRng
/** The search (see `fresh-copy.ts`: each call runs on a fresh copy of its code, which V8 then specialises on this call's shop). */
export const solvePairShop = freshCopies(
  searchOnce,
  // What the search's code names outside itself. The random generator goes under a name of this module's own, which no module
  // transform rewrites (an import's name may be).
  { rngOf, FAR, M, W, REASSIGN_EVALUATED, TARGETS, RESTART_FRESH, RESTART_BEST, REASSIGN_KICKS, HOME_SLACK, pairLowerBound },
  (copy) => {
    // The copy must give exactly what the search itself gives on a small due-date shop (three jobs on two machines).
    const shop: PairShop = {
      n: 6,
      machines: 2,
      workers: 0,
      jobs: 3,
      jobOf: Int32Array.from([0, 0, 1, 1, 2, 2]),
      jobPred: Int32Array.from([-1, 0, -1, 2, -1, 4]),
      jobSucc: Int32Array.from([1, -1, 3, -1, 5, -1]),
      optStart: Int32Array.from([0, 1, 2, 3, 4, 5, 6]),
      optMachine: Int32Array.from([0, 1, 1, 0, 0, 1]),
      optWorker: Int32Array.from([-1, -1, -1, -1, -1, -1]),
      optDur: Int32Array.from([3, 2, 4, 1, 2, 3]),
      release: new Int32Array(6),
      due: Float64Array.from([4, 5, 6]),
      weight: Float64Array.from([1, 2, 3]),
    }
    const settings: PairSettings = { seed: 7, objective: 'weightedTardiness', deadline: Infinity, clock: () => 0, maxIterations: 50 }
    const a = copy(shop, settings),
      b = searchOnce(shop, settings)
    return a.weightedTardiness === b.weightedTardiness && a.iterations === b.iterations && a.start.join() === b.start.join()
  },
)

function searchOnce(s: PairShop, settings: PairSettings): PairSolution {
  const t0 = settings.clock()
  const { n, jobs, jobOf, jobPred, jobSucc, optStart, optMachine, optWorker, optDur, release, due, weight } = s
  const rng: Rng = rngOf(settings.seed)
  const twtMode = settings.objective === 'weightedTardiness'
  const lastOf = new Int32Array(jobs).fill(-1)
  const lag = s.lag ?? new Int32Array(n)
  const leaveBy = twtMode ? s.leaveBy : undefined
  let flexible = false
  for (let i = 0; i < n && !flexible; i++) if (optStart[i + 1]! - optStart[i]! > 1) flexible = true
  const xps = s.extra?.predStart ?? new Int32Array(n + 1),
    xp = s.extra?.pred ?? new Int32Array(0)
  const xss = s.extra?.succStart ?? new Int32Array(n + 1),
    xs = s.extra?.succ ?? new Int32Array(0)
  for (let i = 0; i < n; i++) if (jobSucc[i]! < 0 && xss[i + 1] === xss[i]) lastOf[jobOf[i]!] = i
  const hasExtra = xp.length > 0
  const cal = s.calendar
  const optCal = cal?.optCal,
    calOffset = cal?.calOffset,
    winStart = cal?.winStart,
    winEnd = cal?.winEnd,
    winCum = cal?.winCum
  const stretchLast = cal?.winStretchLast
  const dayStart = cal?.dayStart,
    dayEnd = cal?.dayEnd
  /** First moment at or after t when option o can work. */
  const startAt = (o: number, t: number): number => {
    const c = optCal![o]!
    if (c < 0) return t
    let lo = calOffset![c]!,
      hi = calOffset![c + 1]!
    const last = hi
    while (lo < hi) {
      const mid = (lo + hi) >> 1
      if (winEnd![mid]! > t) hi = mid
      else lo = mid + 1
    }
    if (lo >= last) return FAR
    let st = winStart![lo]! > t ? winStart![lo]! : t
    const d = optDur[o]!
    for (let guard = 0; guard < 16; guard++) {
      const sl = stretchLast![lo]!
      if (winCum![lo]! + (st - winStart![lo]!) + d <= winCum![sl]! + winEnd![sl]! - winStart![sl]!) return st
      const nk = sl + 1
      if (nk >= last) return st
      const nl = stretchLast![nk]!
      if (winCum![nl]! + winEnd![nl]! - winStart![nl]! - winCum![nk]! < d) return st
      lo = nk
      st = winStart![nk]!
    }
    return st
  }
  /** End of option o's work started at s (a moment startAt gave). */
  const endAt = (o: number, st: number): number => {
    const c = optCal![o]!
    const d = optDur[o]!
    if (c === -1) return st + d
    if (c === -2) {
      let lo = 0,
        hi = dayStart!.length
      while (lo < hi) {
        const mid = (lo + hi) >> 1
        if (dayStart![mid]! >= st) hi = mid
        else lo = mid + 1
      }
      const k = lo + d - 1
      return k < dayStart!.length ? dayEnd![k]! : FAR
    }
    if (st >= FAR) return FAR
    if (d <= 0) return st
    let lo = calOffset![c]!,
      hi = calOffset![c + 1]!
    const last = hi
    while (lo < hi) {
      const mid = (lo + hi) >> 1
      if (winEnd![mid]! > st) hi = mid
      else lo = mid + 1
    }
    if (lo >= last) return FAR
    // Working minutes counted from the calendar's start: the end is where they reach the start's count plus d.
    const goal = winCum![lo]! + (st - winStart![lo]!) + d
    if (goal <= winCum![lo]! + winEnd![lo]! - winStart![lo]!) return st + d
    hi = last
    while (lo < hi) {
      const mid = (lo + hi) >> 1
      if (winCum![mid]! + winEnd![mid]! - winStart![mid]! >= goal) hi = mid
      else lo = mid + 1
    }
    if (lo >= last) return FAR
    return winStart![lo]! + (goal - winCum![lo]!)
  }

  // Current solution: option, duration, resources, and the two kinds of sequences as linked lists.
  const opt = new Int32Array(n),
    p = new Int32Array(n)
  const res = [new Int32Array(n), new Int32Array(n)]
  const pred = [new Int32Array(n).fill(-1), new Int32Array(n).fill(-1)]
  const succ = [new Int32Array(n).fill(-1), new Int32Array(n).fill(-1)]
  const head = [new Int32Array(s.machines).fill(-1), new Int32Array(Math.max(1, s.workers)).fill(-1)]

  // Order positions of the current schedule; a move only changes heads from the first position whose in-arcs it touches.
  const pos = new Int32Array(n),
    topoCur = new Int32Array(n),
    prefMax = new Int32Array(n + 1)
  let touched = n,
    touchedHi = -1
  // Steps whose in-arcs or option the move under evaluation changed carry the current stamp; a candidate re-times a step only
  // when it carries it (its own arcs changed, or a predecessor's end did), and keeps the current times of the others.
  const dirty = new Uint32Array(n),
    touchedList = new Int32Array(n)
  let stamp = 1,
    nTouched = 0
  const touch = (x: number): void => {
    if (x < 0) return
    if (dirty[x] !== stamp) touchedList[nTouched++] = x
    dirty[x] = stamp
    const k = pos[x]!
    if (k < touched) touched = k
    if (k > touchedHi) touchedHi = k
  }
  /** Starts a candidate: nothing touched yet. */
  const beginMove = (): void => {
    touched = n
    touchedHi = -1
    nTouched = 0
    stamp++
  }
  const unlink = (t: number, x: number): void => {
    const k = res[t]![x]!
    if (k < 0) return
    const a = pred[t]![x]!,
      b = succ[t]![x]!
    touch(x)
    touch(b)
    if (a >= 0) succ[t]![a] = b
    else head[t]![k] = b
    if (b >= 0) pred[t]![b] = a
    pred[t]![x] = -1
    succ[t]![x] = -1
  }
  const linkAfter = (t: number, x: number, k: number, a: number): void => {
    res[t]![x] = k
    if (k < 0) return
    const b = a >= 0 ? succ[t]![a]! : head[t]![k]!
    touch(x)
    touch(b)
    // Its new predecessor keeps its times but must be in the stretch of the order a candidate puts in Kahn's order.
    if (a >= 0 && pos[a]! > touchedHi) touchedHi = pos[a]!
    pred[t]![x] = a
    succ[t]![x] = b
    if (a >= 0) succ[t]![a] = x
    else head[t]![k] = x
    if (b >= 0) pred[t]![b] = x
  }
  // Undo log of relocations: type, op, old resource, old predecessor, old option.
  const undo: number[] = []
  const relocate = (t: number, x: number, k: number, after: number): void => {
    undo.push(t, x, res[t]![x]!, pred[t]![x]!, opt[x]!)
    unlink(t, x)
    linkAfter(t, x, k, after)
  }
  const rollback = (mark: number): void => {
    while (undo.length > mark) {
      const o = undo.pop()!,
        a = undo.pop()!,
        k = undo.pop()!,
        x = undo.pop()!,
        t = undo.pop()!
      unlink(t, x)
      linkAfter(t, x, k, a)
      opt[x] = o
      p[x] = optDur[o]!
    }
  }

  // Longest paths (heads) by Kahn's order into r; returns the objective or Infinity on a cycle.
  const indeg = new Int32Array(n),
    topo = new Int32Array(n)
  const rCur = new Int32Array(n),
    rTmp = new Int32Array(n)
  // Ends, and the moment each step was ready (before its calendar let it start), beside the heads.
  const eCur = new Int32Array(n),
    eTmp = new Int32Array(n),
    yCur = new Int32Array(n),
    yTmp = new Int32Array(n)
  const endsOf = (r: Int32Array): Int32Array => (r === rCur ? eCur : eTmp)
  const readyOf = (r: Int32Array): Int32Array => (r === rCur ? yCur : yTmp)
  const comp = new Float64Array(jobs)
  let evaluations = 0
  let lastMakespan = 0,
    lastTwt = 0
  /** Operations the last propagate() placed (fewer than its part of the order means a cycle). */
  let passed = 0
  /** Times step x from its predecessors' ends in `en`: ready moment into y, start into r, end into en; returns the end. */
  const place = (x: number, r: Int32Array, en: Int32Array, y: Int32Array): number => {
    let rx = release[x]!
    const a = jobPred[x]!,
      b = pred[M]![x]!,
      c = pred[W]![x]!
    if (a >= 0) {
      const e = en[a]! + lag[a]!
      if (e > rx) rx = e
    }
    if (b >= 0) {
      const e = en[b]!
      if (e > rx) rx = e
    }
    if (c >= 0) {
      const e = en[c]!
      if (e > rx) rx = e
    }
    for (let q = xps[x]!; q < xps[x + 1]!; q++) {
      const z = xp[q]!
      const e = en[z]! + lag[z]!
      if (e > rx) rx = e
    }
    y[x] = rx
    let ex: number
    if (cal) {
      const o = opt[x]!
      rx = startAt(o, rx)
      ex = endAt(o, rx)
    } else ex = rx + p[x]!
    r[x] = rx
    en[x] = ex
    return ex
  }
  // A candidate writes its times into the Tmp arrays, which otherwise equal the current ones: the steps it wrote are listed and
  // put back before the next candidate (all of them after the current schedule itself was re-timed).
  const written = new Int32Array(n)
  let nWritten = 0,
    tmpAll = true
  const restoreTmp = (): void => {
    if (tmpAll) {
      rTmp.set(rCur)
      eTmp.set(eCur)
      yTmp.set(yCur)
      tmpAll = false
    } else
      for (let k = 0; k < nWritten; k++) {
        const x = written[k]!
        rTmp[x] = rCur[x]!
        eTmp[x] = eCur[x]!
        yTmp[x] = yCur[x]!
      }
    nWritten = 0
  }
  // Steps past the part of the order a candidate re-times in full wait in a heap by order position once a predecessor's end moved.
  const queued = new Uint32Array(n),
    heap = new Int32Array(n)
  let heapN = 0,
    segHi = n
  const push = (x: number): void => {
    if (queued[x] === stamp) return
    queued[x] = stamp
    const px = pos[x]!
    let i = heapN++
    while (i > 0) {
      const up = (i - 1) >> 1
      const y = heap[up]!
      if (pos[y]! <= px) break
      heap[i] = y
      i = up
    }
    heap[i] = x
  }
  const pop = (): number => {
    const top = heap[0]!
    const x = heap[--heapN]!
    const px = pos[x]!
    let i = 0
    for (;;) {
      let c = 2 * i + 1
      if (c >= heapN) break
      if (c + 1 < heapN && pos[heap[c + 1]!]! < pos[heap[c]!]!) c++
      if (pos[heap[c]!]! >= px) break
      heap[i] = heap[c]!
      i = c
    }
    heap[i] = x
    return top
  }
  const mark = (z: number): void => {
    dirty[z] = stamp
    if (pos[z]! > segHi) push(z)
  }
  /** Re-times step x for a candidate when it carries the stamp, and passes the stamp on to its successors when its end moved. */
  const retime = (x: number, r: Int32Array, en: Int32Array, y: Int32Array): number => {
    if (skipClean && dirty[x] !== stamp) return en[x]!
    const old = en[x]!
    const ex = place(x, r, en, y)
    written[nWritten++] = x
    if (ex !== old) {
      const js = jobSucc[x]!,
        ms = succ[M]![x]!,
        ws = succ[W]![x]!
      if (js >= 0) mark(js)
      if (ms >= 0) mark(ms)
      if (ws >= 0) mark(ws)
      for (let q = xss[x]!; q < xss[x + 1]!; q++) mark(xs[q]!)
    }
    return ex
  }
  /** The steps after the fully re-timed part whose predecessors' ends moved, in order. */
  const drain = (): void => {
    while (heapN > 0) {
      if (heapN > heapLimit) {
        // A wide ripple: a pass over the rest of the order is cheaper than the heap.
        const k0 = pos[heap[0]!]!
        heapN = 0
        segHi = n
        for (let k = k0; k < n; k++) {
          const x = topoCur[k]!
          if (dirty[x] === stamp) retime(x, rTmp, eTmp, yTmp)
        }
        return
      }
      retime(pop(), rTmp, eTmp, yTmp)
    }
  }
  const heapLimit = Math.max(8, n >> 6)
  /** Off only to check: every step from the first touched one is re-timed. */
  let skipClean = true
  /** Kahn's order from the qt ready operations in topo (indegrees set): heads into r; returns the latest end, from `cmax` up. */
  const propagate = (r: Int32Array, qt: number, cmax: number, candidate = false): number => {
    const sm = succ[M]!,
      sw = succ[W]!
    const en = endsOf(r),
      y = readyOf(r)
    let qh = 0
    while (qh < qt) {
      const x = topo[qh++]!
      const ex = candidate ? retime(x, r, en, y) : place(x, r, en, y)
      if (ex > cmax) cmax = ex
      const js = jobSucc[x]!,
        ms = sm[x]!,
        ws = sw[x]!
      if (js >= 0 && --indeg[js]! === 0) topo[qt++] = js
      if (ms >= 0 && --indeg[ms]! === 0) topo[qt++] = ms
      if (ws >= 0 && --indeg[ws]! === 0) topo[qt++] = ws
      for (let q = xss[x]!; q < xss[x + 1]!; q++) {
        const z = xs[q]!
        if (--indeg[z]! === 0) topo[qt++] = z
      }
    }
    passed = qt
    return cmax
  }
  const evaluate = (r: Int32Array): number => {
    evaluations++
    let qt = 0
    for (let i = 0; i < n; i++) {
      const d = (jobPred[i]! >= 0 ? 1 : 0) + (pred[M]![i]! >= 0 ? 1 : 0) + (pred[W]![i]! >= 0 ? 1 : 0) + xps[i + 1]! - xps[i]!
      indeg[i] = d
      if (d === 0) topo[qt++] = i
    }
    const cmax = propagate(r, qt, 0)
    if (r === rCur) tmpAll = true
    if (passed !== n) return Infinity
    if (r === rCur) {
      topoCur.set(topo)
      let mx = 0
      for (let k = 0; k < n; k++) {
        const x = topo[k]!
        pos[x] = k
        prefMax[k] = mx
        if (eCur[x]! > mx) mx = eCur[x]!
      }
      prefMax[n] = mx
    }
    return finish(r, cmax)
  }
  /** The current schedule's totals (set when it is timed), from which a candidate's are updated. */
  let curLean = 0,
    curLeaveTwt = 0,
    curTwt = 0,
    curSum = 0,
    curCmax = 0
  const lastJob = new Int32Array(n).fill(-1)
  for (let j = 0; j < jobs; j++) if (lastOf[j]! >= 0) lastJob[lastOf[j]!] = j
  /** A candidate's value from the current totals and the jobs' last steps it re-timed. */
  const finishMove = (): number => {
    let twt = curTwt,
      sum = curSum,
      cmax = curCmax,
      lean = curLean,
      leaveTwt = curLeaveTwt,
      scan = false
    for (let k = 0; k < nWritten; k++) {
      const x = written[k]!
      const j = lastJob[x]!
      if (j < 0) continue
      let leave = false
      if (leaveBy) {
        const l = leaveBy[x]!
        if (l === l) {
          leave = true
          const yw = yCur[x]!,
            yn = yTmp[x]!
          if (yw > l || yn > l) lean += weight[j]! * ((yn > l ? yn - l : 0) - (yw > l ? yw - l : 0))
        }
      }
      const was = eCur[x]!,
        now = eTmp[x]!
      if (was === now) continue
      sum += now - was
      const d = due[j]!
      if (now > d || was > d) {
        const change = weight[j]! * ((now > d ? now - d : 0) - (was > d ? was - d : 0))
        twt += change
        if (leave) leaveTwt += change
      }
      if (now > cmax) cmax = now
      else if (was === curCmax) scan = true
    }
    if (scan) {
      cmax = 0
      for (let j = 0; j < jobs; j++) {
        const l = lastOf[j]!
        if (l >= 0 && eTmp[l]! > cmax) cmax = eTmp[l]!
      }
    }
    lastMakespan = cmax
    lastTwt = twt
    if (leaveBy) return twt - leaveTwt + lean + cmax * 1e-7
    if (twtMode) return twt + cmax * 1e-7
    return cmax + sum * 1e-9
  }
  const finish = (r: Int32Array, cmax: number): number => {
    let twt = 0,
      sum = 0,
      lean = 0,
      leaveTwt = 0
    const en = endsOf(r)
    const y = readyOf(r)
    for (let j = 0; j < jobs; j++) {
      const l = lastOf[j]!
      const c = l >= 0 ? en[l]! : 0
      comp[j] = c
      sum += c
      const late = c > due[j]! ? weight[j]! * (c - due[j]!) : 0
      twt += late
      const b = leaveBy && l >= 0 ? leaveBy[l]! : NaN
      if (b === b) {
        leaveTwt += late
        if (y[l]! > b) lean += weight[j]! * (y[l]! - b)
      }
    }
    lastMakespan = cmax
    lastTwt = twt
    if (r === rCur) {
      curTwt = twt
      curLean = lean
      curLeaveTwt = leaveTwt
      curSum = sum
      curCmax = cmax
    }
    if (leaveBy) return twt - leaveTwt + lean + cmax * 1e-7
    // Makespan breaks ties between equal weighted tardiness, so plateaus still lead somewhere.
    if (twtMode) return twt + cmax * 1e-7
    // The jobs' total completion time breaks ties between equal makespans, so the walk across a plateau still goes somewhere.
    return cmax + sum * 1e-9
  }

  // A sequence move that crosses no other arc of the steps it moves keeps the current order valid once the moved step takes its
  // new place in it: the candidate is then timed in that order in one pass (no Kahn queue). orderA/orderB: old and new place.
  let orderA = -1,
    orderB = -1
  /** Before a sequence move is applied: can it be timed in the current order? Sets orderA/orderB when so. */
  const keepsOrder = (kind: number, t: number, u: number, v: number): void => {
    orderA = -1
    if (kind === 3) return
    const o = 1 - t
    if (kind === 0 && res[o]![u]! >= 0 && res[o]![u] === res[o]![v]) return // the other shared resource is reordered too
    if (kind === 0 || kind === 1) {
      // u goes right after v: its successors other than on t must come after v.
      const pv = pos[v]!
      const js = jobSucc[u]!,
        os = succ[o]![u]!
      if ((js >= 0 && pos[js]! <= pv) || (os >= 0 && pos[os]! <= pv)) return
      for (let q = xss[u]!; q < xss[u + 1]!; q++) if (pos[xs[q]!]! <= pv) return
      orderA = pos[u]!
      orderB = pv
    } else {
      // v goes right before u: its predecessors other than on t must come before u.
      const pu = pos[u]!
      const jp = jobPred[v]!,
        op = pred[o]![v]!
      if ((jp >= 0 && pos[jp]! >= pu) || (op >= 0 && pos[op]! >= pu)) return
      for (let q = xps[v]!; q < xps[v + 1]!; q++) if (pos[xp[q]!]! >= pu) return
      orderA = pos[v]!
      orderB = pu
    }
  }
  /** Moves the step at order position a to position b, shifting those between. */
  const shiftOrder = (a: number, b: number): void => {
    const x = topoCur[a]!
    if (a < b)
      for (let k = a; k < b; k++) {
        const y = topoCur[k + 1]!
        topoCur[k] = y
        pos[y] = k
      }
    else
      for (let k = a; k > b; k--) {
        const y = topoCur[k - 1]!
        topoCur[k] = y
        pos[y] = k
      }
    topoCur[b] = x
    pos[x] = b
  }

  /**
   * Heads after a move, into rTmp: positions before the first touched one keep the current heads; the rest in the current order
   * with the moved step in its new place where that order still holds (see keepsOrder), else by Kahn's order.
   */
  /**
   * In-degrees of the steps at order positions from..to counted over predecessors at position from or later, and those with none
   * queued in topo; returns how many are queued.
   */
  const readyIn = (from: number, to: number): number => {
    const pm = pred[M]!,
      pw = pred[W]!
    let qt = 0
    for (let k = from; k <= to; k++) {
      const x = topoCur[k]!
      const a = jobPred[x]!,
        b = pm[x]!,
        c = pw[x]!
      let d = (a >= 0 && pos[a]! >= from ? 1 : 0) + (b >= 0 && pos[b]! >= from ? 1 : 0) + (c >= 0 && pos[c]! >= from ? 1 : 0)
      for (let q = xps[x]!; q < xps[x + 1]!; q++) if (pos[xp[q]!]! >= from) d++
      indeg[x] = d
      if (d === 0) topo[qt++] = x
    }
    return qt
  }
  const evaluateMove = (): number => {
    const from = touched
    if (from >= n) {
      restoreTmp()
      return finish(rTmp, prefMax[n]!)
    }
    if (skipClean) {
      evaluations++
      restoreTmp()
      heapN = 0
      if (orderA >= 0) {
        // The moved step in its new place keeps the order valid: its stretch of the order in one pass, then what follows.
        const a = orderA,
          b = orderB
        const lo = a < b ? a : b
        segHi = a < b ? b : a
        shiftOrder(a, b)
        for (let k = lo; k <= segHi; k++) retime(topoCur[k]!, rTmp, eTmp, yTmp)
        for (let k = 0; k < nTouched; k++) if (pos[touchedList[k]!]! > segHi) push(touchedList[k]!)
        drain()
        shiftOrder(b, a)
      } else {
        // Only arcs between touched steps changed, so the current order still holds outside positions from..to of the touched
        // steps: Kahn's order within them (a cycle shows there), then what follows in the current order.
        const to = touchedHi
        segHi = to
        let qt = readyIn(from, to)
        const sm = succ[M]!,
          sw = succ[W]!
        let qh = 0
        while (qh < qt) {
          const x = topo[qh++]!
          retime(x, rTmp, eTmp, yTmp)
          const js = jobSucc[x]!,
            ms = sm[x]!,
            ws = sw[x]!
          if (js >= 0 && pos[js]! <= to && --indeg[js]! === 0) topo[qt++] = js
          if (ms >= 0 && pos[ms]! <= to && --indeg[ms]! === 0) topo[qt++] = ms
          if (ws >= 0 && pos[ws]! <= to && --indeg[ws]! === 0) topo[qt++] = ws
          for (let q = xss[x]!; q < xss[x + 1]!; q++) {
            const z = xs[q]!
            if (pos[z]! <= to && --indeg[z]! === 0) topo[qt++] = z
          }
        }
        if (qt !== to - from + 1) {
          if (settings.verifyOrder) verifyCandidate(Infinity, 'Kahn')
          return Infinity
        }
        drain()
      }
      segHi = n
      const v = finishMove()
      if (settings.verifyOrder) verifyCandidate(v, orderA >= 0 ? 'in-order' : 'Kahn')
      return v
    }
    // Reference (tests): every step from the first touched one re-timed by Kahn's order.
    evaluations++
    rTmp.set(rCur)
    eTmp.set(eCur)
    yTmp.set(yCur)
    tmpAll = true
    const cmax = propagate(rTmp, readyIn(from, n - 1), prefMax[from]!, true)
    if (passed !== n - from) return Infinity
    return finish(rTmp, cmax)
  }
  /** Tests: the candidate just timed, timed again by Kahn's order re-timing every step from the first touched one. */
  const verifyCandidate = (v: number, how: string): void => {
    const ends = eTmp.slice()
    orderA = -1
    evaluations--
    skipClean = false
    const w = evaluateMove()
    skipClean = true
    if (v === Infinity || w === Infinity) {
      if (v !== w) throw new Error(`pair core: ${how} value ${v} against ${w}`)
      return
    }
    for (let i = 0; i < n; i++) if (eTmp[i] !== ends[i]) throw new Error(`pair core: ${how} timing differs at step ${i}`)
    if (Math.abs(w - v) > 1e-9 * Math.max(1, Math.abs(w))) throw new Error(`pair core: ${how} value ${v} against ${w}`)
  }

  // ---------- first schedule: the best of a few dispatching rules ----------
  const minDur = new Float64Array(n)
  for (let i = 0; i < n; i++) {
    let d = Infinity
    for (let o = optStart[i]!; o < optStart[i + 1]!; o++) d = Math.min(d, optDur[o]!)
    minDur[i] = d
  }
  const remaining = new Float64Array(n)
  for (let j = 0; j < jobs; j++) {
    let acc = 0
    for (let x = lastOf[j]!; x >= 0; x = jobPred[x]!) {
      acc += minDur[x]!
      remaining[x] = acc
    }
  }
  const build = (rule: number): void => {
    undo.length = 0
    for (const t of [M, W]) {
      pred[t]!.fill(-1)
      succ[t]!.fill(-1)
      head[t]!.fill(-1)
      res[t]!.fill(-1)
    }
    const ready = new Float64Array(n)
    const mReady = new Float64Array(s.machines),
      wReady = new Float64Array(Math.max(1, s.workers))
    const mLast = new Int32Array(s.machines).fill(-1),
      wLast = new Int32Array(Math.max(1, s.workers)).fill(-1)
    const heads: number[] = []
    for (let i = 0; i < n; i++) if (jobPred[i]! < 0) heads.push(i)
    const bestOpt = new Int32Array(n),
      bestEst = new Float64Array(n),
      bestFin = new Float64Array(n)
    // A head's best option changes only when its machine's or worker's ready time does: kept until then.
    const known = new Uint8Array(n)
    for (let left = n; left > 0; left--) {
      let fStar = Infinity
      for (const x of heads) {
        if (x < 0) continue
        if (known[x]) {
          if (bestFin[x]! < fStar) fStar = bestFin[x]!
          continue
        }
        known[x] = 1
        const e0 = Math.max(ready[x]!, release[x]!)
        let bf = Infinity,
          bo = -1,
          be = 0
        for (let o = optStart[x]!; o < optStart[x + 1]!; o++) {
          const w = optWorker[o]!
          let e = Math.max(e0, mReady[optMachine[o]!]!, w >= 0 ? wReady[w]! : 0)
          let f: number
          if (cal) {
            e = startAt(o, e)
            f = endAt(o, e)
          } else f = e + optDur[o]!
          if (f < bf) {
            bf = f
            bo = o
            be = e
          }
        }
        bestOpt[x] = bo
        bestEst[x] = be
        bestFin[x] = bf
        if (bf < fStar) fStar = bf
      }
      // Among the operations that could start before the earliest finish, take the one the rule ranks first.
      let pick = -1,
        pickKey = Infinity
      for (let h = 0; h < heads.length; h++) {
        const x = heads[h]!
        if (x < 0 || bestEst[x]! >= fStar) continue
        const j = jobOf[x]!
        const slack = (Number.isFinite(due[j]!) ? due[j]! : 1e12) - bestEst[x]! - remaining[x]!
        const wj = Math.max(1e-6, weight[j]!) // a weight of 0 is allowed: its job still needs a finite key
        let key: number
        if (!twtMode) key = rule === 0 ? -remaining[x]! : rule === 1 ? bestFin[x]! - remaining[x]! * 1e-3 : bestEst[x]! + rng.next()
        else if (rule === 0)
          key = slack > 0 ? slack / wj : slack * wj // weighted slack
        else if (rule === 1)
          key = Math.max(due[j]!, bestEst[x]! + remaining[x]!) // modified due date
        else if (rule === 2)
          key = (-wj / Math.max(1e-6, minDur[x]!)) * Math.exp(-Math.max(0, slack) / (2 * Math.max(1, minDur[x]!))) // apparent tardiness cost
        else if (rule === 3) key = due[j]! + rng.next() * 20
        else key = (slack > 0 ? slack / wj : slack * wj) + (rng.next() - 0.5) * 2 * Math.max(10, Math.abs(slack)) // weighted slack, shaken
        if (pick < 0 || key < pickKey) {
          pickKey = key
          pick = h
        }
      }
      const x = heads[pick]!
      const o = bestOpt[x]!
      const k = optMachine[o]!,
        w = optWorker[o]!
      opt[x] = o
      p[x] = optDur[o]!
      linkAfter(M, x, k, mLast[k]!)
      mLast[k] = x
      mReady[k] = bestFin[x]!
      if (w >= 0) {
        linkAfter(W, x, w, wLast[w]!)
        wLast[w] = x
        wReady[w] = bestFin[x]!
      } else res[W]![x] = -1
      const js = jobSucc[x]!
      if (js >= 0) ready[js] = bestFin[x]! + lag[x]!
      heads[pick] = js
      for (const z of heads) {
        if (z < 0 || !known[z]) continue
        for (let q = optStart[z]!; q < optStart[z + 1]!; q++)
          if (optMachine[q] === k || (w >= 0 && optWorker[q] === w)) {
            known[z] = 0
            break
          }
      }
    }
  }
  type Saved = { opt: Int32Array; order: number[][][] }
  const snapshot = (into: Saved): void => {
    into.opt.set(opt)
    for (const t of [M, W]) {
      into.order[t] = []
      for (let k = 0; k < head[t]!.length; k++) {
        const seq: number[] = []
        for (let x = head[t]![k]!; x >= 0; x = succ[t]![x]!) seq.push(x)
        into.order[t]!.push(seq)
      }
    }
  }
  const restore = (from: Saved): void => {
    undo.length = 0
    opt.set(from.opt)
    for (let i = 0; i < n; i++) p[i] = optDur[opt[i]!]!
    for (const t of [M, W]) {
      pred[t]!.fill(-1)
      succ[t]!.fill(-1)
      head[t]!.fill(-1)
      res[t]!.fill(-1)
      from.order[t]!.forEach((seq, k) => {
        let last = -1
        for (const x of seq) {
          linkAfter(t, x, k, last)
          last = x
        }
      })
    }
  }
  const best = { opt: new Int32Array(n), order: [[], []] as number[][][] }
  let bestVal = Infinity
  const inits = settings.initial ?? []
  const init = inits[0]
  for (const init of inits) {
    undo.length = 0
    for (const t of [M, W]) {
      pred[t]!.fill(-1)
      succ[t]!.fill(-1)
      head[t]!.fill(-1)
      res[t]!.fill(-1)
    }
    const byStart = Array.from({ length: n }, (_, i) => i).sort((a, b) => init.start[a]! - init.start[b]! || a - b)
    const mLast = new Int32Array(s.machines).fill(-1),
      wLast = new Int32Array(Math.max(1, s.workers)).fill(-1)
    for (const x of byStart) {
      const o = init.option[x]!
      opt[x] = o
      p[x] = optDur[o]!
      const k = optMachine[o]!,
        w = optWorker[o]!
      linkAfter(M, x, k, mLast[k]!)
      mLast[k] = x
      if (w >= 0) {
        linkAfter(W, x, w, wLast[w]!)
        wLast[w] = x
      } else res[W]![x] = -1
    }
    const v = evaluate(rCur)
    if (v < bestVal) {
      bestVal = v
      snapshot(best)
    }
  }
  if (!init || !(settings.initialOnly || hasExtra))
    for (const rule of settings.startRules ?? (twtMode ? [0, 1, 2, 3] : [0, 1, 2])) {
      build(rule)
      const v = evaluate(rCur)
      if (v < bestVal) {
        bestVal = v
        snapshot(best)
      }
    }
  if (!Number.isFinite(bestVal)) {
    // No schedule to start from (an initial order with a cycle and no rule to build one): give the initial back untouched.
    const start = new Int32Array(n),
      end = new Int32Array(n)
    if (init)
      for (let i = 0; i < n; i++) {
        start[i] = Math.round(init.start[i]!)
        end[i] = start[i]!
      }
    return {
      option: init ? new Int32Array(init.option) : new Int32Array(optStart.subarray(0, n)),
      start,
      end,
      weightedTardiness: Infinity,
      makespan: Infinity,
      iterations: 0,
      evaluations,
      firstMs: settings.clock() - t0,
    }
  }
  restore(best)
  let cur = evaluate(rCur)
  let bestTwt = lastTwt,
    bestCmax = lastMakespan
  const firstMs = settings.clock() - t0
  settings.onImprove?.(twtMode ? lastTwt : lastMakespan, 0)
  // Progress is reported when the objective itself improves, not its tie-breaker.
  let reported = twtMode ? lastTwt : lastMakespan
  const report = (): void => {
    const v = twtMode ? lastTwt : lastMakespan
    if (v < reported) {
      reported = v
      settings.onImprove?.(v, iter)
    }
  }
  const lowerBound = twtMode ? 0 : pairLowerBound(s)

  // ---------- tabu search ----------
  const bigTabu = n <= 3000
  const tabuBefore = bigTabu ? new Int32Array(n * n) : null
  const tabuMap = bigTabu ? null : new Map<number, number>()
  const getTabu = (a: number, b: number): number => (tabuBefore ? tabuBefore[a * n + b]! : (tabuMap!.get(a * n + b) ?? 0))
  const setTabu = (a: number, b: number, v: number): void => {
    if (tabuBefore) tabuBefore[a * n + b] = v
    else tabuMap!.set(a * n + b, v)
  }
  const tabuOpt = new Int32Array(optDur.length)
  const baseTenure = Math.max(1, Math.round((8 + Math.floor(Math.sqrt(n) / 2)) * (settings.tenureScale ?? 1)))
  const tenure = (): number => baseTenure + rng.int(baseTenure + 1)
  let iter = 0,
    lastImprove = 0
  const maxIter = settings.maxIterations ?? Infinity
  const maxStall = Math.max(300, 4 * n)
  const path: number[] = []
  const arcType: number[] = [] // for path[i] (i > 0): the resource type of the arc from path[i-1], -1 for a job arc

  /** A critical path ending at op `end`: tight arcs traced back, ties at random. */
  const tracePath = (end: number): void => {
    path.length = 0
    arcType.length = 0
    const back: number[] = [],
      types: number[] = []
    for (let x = end; x >= 0;) {
      back.push(x)
      const a = jobPred[x]!,
        b = pred[M]![x]!,
        c = pred[W]![x]!
      const cand: number[] = [],
        ct: number[] = []
      const y = yCur[x]!
      if (b >= 0 && eCur[b]! === y) {
        cand.push(b)
        ct.push(M)
      }
      if (c >= 0 && eCur[c]! === y) {
        cand.push(c)
        ct.push(W)
      }
      if (a >= 0 && eCur[a]! + lag[a]! === y) {
        cand.push(a)
        ct.push(-1)
      }
      for (let q = xps[x]!; q < xps[x + 1]!; q++) {
        const z = xp[q]!
        if (eCur[z]! + lag[z]! === y) {
          cand.push(z)
          ct.push(-1)
        }
      }
      if (cand.length === 0) {
        types.push(-2)
        break
      }
      const k = rng.int(cand.length)
      types.push(ct[k]!)
      x = cand[k]!
    }
    // types[i] is the arc into back[i]; arcType[k] is the arc path[k-1] -> path[k].
    for (let k = 0; k < back.length; k++) {
      path.push(back[back.length - 1 - k]!)
      arcType.push(k === 0 ? -2 : types[back.length - 1 - k]!)
    }
  }

  // Candidate moves: kind 0 = swap u before... (u, v adjacent on resource t: v goes before u); kind 1 = u after v (insertion);
  // kind 2 = v before u (insertion); kind 3 = op u to option v.
  const cKind: number[] = [],
    cT: number[] = [],
    cU: number[] = [],
    cV: number[] = []
  const seen = new Set<number>()
  const addMove = (kind: number, t: number, u: number, v: number): void => {
    const key = ((kind * 2 + Math.max(0, t)) * n + u) * (optDur.length + n) + v
    if (seen.has(key)) return
    seen.add(key)
    cKind.push(kind)
    cT.push(t)
    cU.push(u)
    cV.push(v)
  }
  /** Applies a move; returns false when it cannot be made. */
  const apply = (kind: number, t: number, u: number, v: number): boolean => {
    if (kind === 0) {
      // v directly follows u on resource t: put u right after v, and order them the same way on the other shared resource.
      relocate(t, u, res[t]![u]!, v)
      const o = 1 - t
      if (res[o]![u]! >= 0 && res[o]![u]! === res[o]![v]!) {
        if (succ[o]![u] === v) relocate(o, u, res[o]![u]!, v)
        else {
          // Only reorder when u is before v there; then v goes right before u.
          let before = false
          for (let x = succ[o]![u]!; x >= 0; x = succ[o]![x]!)
            if (x === v) {
              before = true
              break
            }
          if (before) relocate(o, v, res[o]![v]!, pred[o]![u]!)
        }
      }
      return true
    }
    if (kind === 1) {
      relocate(t, u, res[t]![u]!, v)
      return true
    }
    if (kind === 2) {
      relocate(t, v, res[t]![v]!, pred[t]![u]!)
      return true
    }
    // Reassignment: op u takes option v, placed on the new machine and worker by its current start.
    const o = v
    const k = optMachine[o]!,
      w = optWorker[o]!
    const placeAfter = (tt: number, kk: number): number => {
      let a = -1
      for (let x = head[tt]![kk]!; x >= 0; x = succ[tt]![x]!) {
        if (x === u) continue
        if (rCur[x]! < rCur[u]! || (rCur[x]! === rCur[u]! && x < u)) a = x
        else break
      }
      return a
    }
    const oldOpt = opt[u]!
    undo.push(M, u, res[M]![u]!, pred[M]![u]!, oldOpt)
    unlink(M, u)
    opt[u] = o
    p[u] = optDur[o]!
    linkAfter(M, u, k, placeAfter(M, k))
    undo.push(W, u, res[W]![u]!, pred[W]![u]!, oldOpt)
    unlink(W, u)
    if (w >= 0) linkAfter(W, u, w, placeAfter(W, w))
    else res[W]![u] = -1
    return true
  }
  /** Would the move recreate an order the tabu list forbids? */
  const isTabu = (kind: number, t: number, u: number, v: number): boolean => {
    if (kind === 0) return getTabu(v, u) > iter
    if (kind === 1) {
      for (let x = succ[t]![u]!; x >= 0; x = succ[t]![x]!) {
        if (getTabu(x, u) > iter) return true
        if (x === v) break
      }
      return false
    }
    if (kind === 2) {
      for (let x = pred[t]![v]!; x >= 0; x = pred[t]![x]!) {
        if (getTabu(v, x) > iter) return true
        if (x === u) break
      }
      return false
    }
    return tabuOpt[v]! > iter
  }
  // Tails of the current schedule (longest path after each step, excluding it), from the order of its last evaluation.
  const qCur = new Int32Array(n)
  const computeTails = (): void => {
    const sm = succ[M]!,
      sw = succ[W]!
    for (let k = n - 1; k >= 0; k--) {
      const x = topoCur[k]!
      let qx = 0
      const a = jobSucc[x]!,
        b = sm[x]!,
        c = sw[x]!
      if (a >= 0) {
        const e = lag[x]! + eCur[a]! - rCur[a]! + qCur[a]!
        if (e > qx) qx = e
      }
      if (b >= 0) {
        const e = eCur[b]! - rCur[b]! + qCur[b]!
        if (e > qx) qx = e
      }
      if (c >= 0) {
        const e = eCur[c]! - rCur[c]! + qCur[c]!
        if (e > qx) qx = e
      }
      for (let q = xss[x]!; q < xss[x + 1]!; q++) {
        const z = xs[q]!
        const e = lag[x]! + eCur[z]! - rCur[z]! + qCur[z]!
        if (e > qx) qx = e
      }
      qCur[x] = qx
    }
  }
  const skip: number[] = []
  const estimateOf: number[] = []
  // Each resource's sequence as an array (positions by start), rebuilt once per iteration when a reassignment is estimated.
  const seqAt = [new Int32Array(n), new Int32Array(n)]
  const seqOff = [new Int32Array(s.machines + 1), new Int32Array(Math.max(1, s.workers) + 1)]
  let seqIter = -1
  const buildSequences = (): void => {
    seqIter = iter
    for (const tt of [M, W]) {
      const at = seqAt[tt]!,
        off = seqOff[tt]!
      let q = 0
      for (let kk = 0; kk < head[tt]!.length; kk++) {
        off[kk] = q
        for (let x = head[tt]![kk]!; x >= 0; x = succ[tt]![x]!) at[q++] = x
      }
      off[head[tt]!.length] = q
    }
  }
  let estHead = 0,
    estTail = 0
  /** Where u would go on resource kk of type tt (after the steps that start before it): raises estHead and estTail by its neighbours. */
  const around = (tt: number, kk: number, u: number): void => {
    const at = seqAt[tt]!
    const ru = rCur[u]!
    // Starts never fall along a sequence: the first place starting at or after u's is found by bisection.
    let lo = seqOff[tt]![kk]!,
      hi = seqOff[tt]![kk + 1]!
    const end = hi
    const first = lo
    while (lo < hi) {
      const mid = (lo + hi) >> 1
      if (rCur[at[mid]!]! < ru) lo = mid + 1
      else hi = mid
    }
    let a = lo > first ? at[lo - 1]! : -1,
      b = lo < end ? at[lo]! : -1
    for (let q = lo; q < end; q++) {
      const x = at[q]!
      if (x === u) {
        b = succ[tt]![x]!
        continue
      }
      if (rCur[x]! === ru && x < u) {
        a = x
        b = succ[tt]![x]!
      } else break
    }
    if (b === u) b = succ[tt]![u]!
    if (a >= 0 && eCur[a]! > estHead) estHead = eCur[a]!
    if (b >= 0) {
      const e = eCur[b]! - rCur[b]! + qCur[b]!
      if (e > estTail) estTail = e
    }
  }
  /** Longest path through step u once it takes option o at the place the move would give it. */
  const reassignEstimate = (u: number, o: number): number => {
    if (seqIter !== iter) buildSequences()
    const k = optMachine[o]!,
      w = optWorker[o]!
    const jp = jobPred[u]!,
      js = jobSucc[u]!
    estHead = Math.max(release[u]!, jp >= 0 ? eCur[jp]! + lag[jp]! : 0)
    estTail = js >= 0 ? lag[u]! + eCur[js]! - rCur[js]! + qCur[js]! : 0
    for (let q = xps[u]!; q < xps[u + 1]!; q++) {
      const z = xp[q]!
      estHead = Math.max(estHead, eCur[z]! + lag[z]!)
    }
    for (let q = xss[u]!; q < xss[u + 1]!; q++) {
      const z = xs[q]!
      estTail = Math.max(estTail, lag[u]! + eCur[z]! - rCur[z]! + qCur[z]!)
    }
    around(M, k, u)
    if (w >= 0) around(W, w, u)
    if (cal) {
      const st = startAt(o, estHead)
      return endAt(o, st) + estTail
    }
    return estHead + optDur[o]! + estTail
  }

  /** Before a move is made: forbid undoing it for a while (the orders it reverses, or the option it leaves). */
  const remember = (kind: number, t: number, u: number, v: number): void => {
    const ten = iter + tenure()
    if (kind === 0) setTabu(u, v, ten)
    else if (kind === 1) {
      for (let x = succ[t]![u]!; x >= 0; x = succ[t]![x]!) {
        setTabu(u, x, ten)
        if (x === v) break
      }
    } else if (kind === 2) {
      for (let x = pred[t]![v]!; x >= 0; x = pred[t]![x]!) {
        setTabu(x, v, ten)
        if (x === u) break
      }
    } else tabuOpt[opt[u]!] = ten
  }

  // The clock is read every eighth iteration, or sooner when iterations are dear (a workshop's weigh hundreds of candidates
  // each, and eight of them overran a stage's share of a 2 s budget by up to half a second).
  let evaluationsAtCheck = 0
  const stopNow = (): boolean => {
    if (iter >= maxIter) return true
    if ((iter & 7) === 0 || evaluations - evaluationsAtCheck >= 200) {
      evaluationsAtCheck = evaluations
      const now = settings.clock()
      if (now >= settings.deadline) return true
      if (settings.shouldStop?.()) return true
      settings.onTick?.(evaluations, now)
    }
    return false
  }
  const homeSlack = twtMode ? HOME_SLACK : 0
  // Weighted tardiness: where kicks start from (home) and the best of the episode since the last kick (see HOME_SLACK).
  let home: Saved = { opt: new Int32Array(n), order: [[], []] },
    epi: Saved = { opt: new Int32Array(n), order: [[], []] },
    homeVal = Infinity
  if (homeSlack > 0) {
    snapshot(home)
    snapshot(epi)
    homeVal = cur
  }
  const targets: number[] = []
  let failedKicks = 0,
    kickBase = Infinity,
    episodeBest = cur
  while ((twtMode ? bestTwt > 0 : bestCmax > lowerBound) && !stopNow()) {
    iter++
    computeTails()
    // Jobs whose completion the objective sees: tardy jobs (at most a handful, by weighted tardiness), or the last to finish.
    targets.length = 0
    if (twtMode) {
      const tardy: number[] = []
      for (let j = 0; j < jobs; j++) if (comp[j]! > due[j]!) tardy.push(j)
      for (let pick = 0; pick < Math.min(TARGETS, tardy.length); pick++) {
        let chosen = tardy.length - 1
        if (settings.evenTargets) chosen = rng.int(tardy.length)
        else {
          let tot = 0
          for (const j of tardy) tot += weight[j]! * (comp[j]! - due[j]!)
          let r = rng.next() * tot
          for (let q = 0; q < tardy.length; q++) {
            r -= weight[tardy[q]!]! * (comp[tardy[q]!]! - due[tardy[q]!]!)
            if (r <= 0) {
              chosen = q
              break
            }
          }
        }
        targets.push(tardy[chosen]!)
        tardy.splice(chosen, 1)
      }
    }
    if (targets.length === 0) {
      let c = 0
      for (let j = 0; j < jobs; j++)
        if (comp[j] === lastMakespan) {
          c++
          if (rng.int(c) === 0) {
            targets.length = 0
            targets.push(j)
          }
        }
    }
    cKind.length = 0
    cT.length = 0
    cU.length = 0
    cV.length = 0
    seen.clear()
    for (const j of targets) {
      tracePath(lastOf[j]!)
      // Blocks: runs of the path joined by arcs of one resource.
      let bs = 0
      while (bs < path.length) {
        let be = bs
        const t = be + 1 < path.length ? arcType[be + 1]! : -1
        if (t >= 0) while (be + 1 < path.length && arcType[be + 1] === t) be++
        if (be > bs) {
          for (let i = bs; i < be; i++) addMove(0, t, path[i]!, path[i + 1]!)
          // Any operation of the block to its front or its back (the first and last pairs are the swaps above).
          for (let i = bs; i <= be; i++) {
            if (i < be - 1) addMove(1, t, path[i]!, path[be]!)
            if (i > bs + 1) addMove(2, t, path[bs]!, path[i]!)
          }
        }
        bs = be > bs ? be : bs + 1
      }
      for (const x of path) {
        if (optStart[x + 1]! - optStart[x]! < 2) continue
        for (let o = optStart[x]!; o < optStart[x + 1]!; o++) if (o !== opt[x]) addMove(3, -1, x, o)
      }
    }
    // Reassignments are many: rank them by the longest path through the step afterwards and evaluate only the most promising.
    skip.length = 0
    const ranked: number[] = []
    for (let c = 0; c < cKind.length; c++)
      if (cKind[c] === 3) {
        ranked.push(c)
        estimateOf[c] = reassignEstimate(cU[c]!, cV[c]!)
      }
    if (ranked.length > REASSIGN_EVALUATED) {
      ranked.sort((a, b) => estimateOf[a]! - estimateOf[b]!)
      for (let q = REASSIGN_EVALUATED; q < ranked.length; q++) skip[ranked[q]!] = 1
    }
    let bestMove = -1,
      bestMoveVal = Infinity,
      ties = 0
    let fallback = -1,
      fallbackVal = Infinity
    for (let c = 0; c < cKind.length; c++) {
      if (skip[c]) continue
      const mark = undo.length
      const tabu = isTabu(cKind[c]!, cT[c]!, cU[c]!, cV[c]!)
      beginMove()
      keepsOrder(cKind[c]!, cT[c]!, cU[c]!, cV[c]!)
      apply(cKind[c]!, cT[c]!, cU[c]!, cV[c]!)
      const v = evaluateMove()
      orderA = -1
      rollback(mark)
      if (!Number.isFinite(v)) continue
      if (!tabu || v < bestVal) {
        if (v < bestMoveVal) {
          bestMoveVal = v
          bestMove = c
          ties = 1
        } else if (v === bestMoveVal && rng.int(++ties) === 0) bestMove = c
      } else if (v < fallbackVal) {
        fallbackVal = v
        fallback = c
      }
    }
    if (bestMove < 0) bestMove = fallback
    if (bestMove < 0) {
      perturb()
      continue
    }
    const k = cKind[bestMove]!,
      t = cT[bestMove]!,
      u = cU[bestMove]!,
      v = cV[bestMove]!
    remember(k, t, u, v)
    undo.length = 0
    apply(k, t, u, v)
    undo.length = 0
    cur = evaluate(rCur)
    if (cur < episodeBest - 1e-12) {
      episodeBest = cur
      lastImprove = iter
      if (homeSlack > 0) snapshot(epi)
    }
    if (cur < bestVal - 1e-12) {
      bestVal = cur
      bestTwt = lastTwt
      bestCmax = lastMakespan
      snapshot(best)
      report()
      settings.onBest?.(opt, rCur, evaluations)
    } else if (iter - lastImprove > maxStall) perturb()
  }

  /** Stagnation: back to the best (or home), then a few random critical swaps. */
  function perturb(): void {
    // Each failed round shakes harder; now and then the walk goes on from where it is instead of from the best.
    failedKicks = bestVal < kickBase ? 0 : failedKicks + 1
    kickBase = bestVal
    const from = rng.next()
    // Weighted tardiness: the episode just ended becomes home when within HOME_SLACK of it, and kicks start from home; makespan:
    // from the best or where the walk is. Either way some start from a fresh shaken dispatch.
    if (homeSlack > 0 && episodeBest <= homeVal * (1 + homeSlack)) {
      const t = home
      home = epi
      epi = t
      homeVal = episodeBest
    }
    if (from < RESTART_FRESH && !hasExtra) {
      build(4)
      undo.length = 0
    } else if (homeSlack > 0) restore(home)
    else if (from < RESTART_FRESH + RESTART_BEST) restore(best)
    cur = evaluate(rCur)
    tabuBefore?.fill(0)
    tabuMap?.clear()
    tabuOpt.fill(0)
    const kicks = 2 + rng.int(4) + Math.min(failedKicks, Math.max(4, n >> 3))
    for (let q = 0; q < kicks; q++) {
      const j = rng.int(jobs)
      tracePath(lastOf[j]!)
      if (flexible && rng.next() < REASSIGN_KICKS) {
        // A step of the path to another of its machine and worker pairs, at its current start there.
        const withChoice = path.filter((x) => optStart[x + 1]! - optStart[x]! > 1)
        if (withChoice.length > 0) {
          const x = withChoice[rng.int(withChoice.length)]!
          let o = optStart[x]! + rng.int(optStart[x + 1]! - optStart[x]! - 1)
          if (o >= opt[x]!) o++
          const mark = undo.length
          apply(3, -1, x, o)
          if (!Number.isFinite(evaluate(rCur))) {
            rollback(mark)
            evaluate(rCur)
          }
          undo.length = 0
          continue
        }
      }
      const arcs: number[] = []
      for (let i = 1; i < path.length; i++) if (arcType[i]! >= 0) arcs.push(i)
      if (arcs.length === 0) continue
      const i = arcs[rng.int(arcs.length)]!
      const mark = undo.length
      apply(0, arcType[i]!, path[i - 1]!, path[i]!)
      if (!Number.isFinite(evaluate(rCur))) {
        rollback(mark)
        evaluate(rCur)
      }
      undo.length = 0
    }
    cur = evaluate(rCur)
    lastImprove = iter
    episodeBest = cur
    if (homeSlack > 0) snapshot(epi)
    if (cur < bestVal) {
      bestVal = cur
      bestTwt = lastTwt
      bestCmax = lastMakespan
      snapshot(best)
      report()
      settings.onBest?.(opt, rCur, evaluations)
    }
  }

  restore(best)
  evaluate(rCur)
  const end = new Int32Array(eCur)
  return {
    option: new Int32Array(opt),
    start: new Int32Array(rCur),
    end,
    weightedTardiness: lastTwt,
    makespan: lastMakespan,
    iterations: iter,
    evaluations,
    firstMs,
  }
}
