// Index a Problem once, then turn (priority keys, resource choices) into a timed plan by serial schedule generation on calendars.
import type { Interval, Job, Objective, Operation, Plan, PlannedOperation, Problem, Score, StartReason } from './model.ts'
import { SchedulingInputError } from './model.ts'
import { clipToWindows, firstEndingAfter, formatMinute, intersect, leaveTime, outsideWorkEnd, walkWorkingTime, weekdayOf } from './calendar.ts'
import { busyWith, dayWords, outsideLength, outsideStartWords, toBeDone } from './explain.ts'

/** One resource option of an operation, with indices and its joint working windows. */
export interface CompiledOption {
  bench: number
  person: number
  minutes: number
  windows: Interval[]
  /** The windows' ends, in order (for the decoder's forward search over them). */
  windowEnds: number[]
}

/** The problem indexed for fast decoding: only operations that are not done. */
export interface Compiled {
  problem: Problem
  n: number
  ops: Operation[]
  opIndex: Map<string, number>
  jobs: Job[]
  jobOf: Int32Array
  preds: number[][]
  succs: number[][]
  options: CompiledOption[][]
  earliest: Float64Array
  /** Earliest start allowed by finished predecessors: their finishedAt + waitAfter (-Infinity when none is known). */
  doneReady: Float64Array
  waitAfter: Float64Array
  outsideDays: Int32Array
  fixedAt: (null | { option: CompiledOption; start: number; end?: number; benchId: string | null; personId: string | null })[]
  /** Option index matching the previous plan's resources, -1 when none. */
  previousOption: Int32Array
  /** For steps that must finish before a pinned or running step of their job (transitively): that step's start; else Infinity. */
  pinDeadline: Float64Array
  benchCount: number
  personCount: number
  originWeekday: number
}

const ALWAYS: Interval[] = [{ start: -1e15, end: 1e15 }]

/** Indexes a problem (assumed to have passed checkProblem). */
export function compile(problem: Problem): Compiled {
  const benchIdx = new Map(problem.benches.map((b, i) => [b.id, i]))
  const personIdx = new Map(problem.people.map((p, i) => [p.id, i]))
  const jobIdx = new Map(problem.jobs.map((j, i) => [j.id, i]))
  const doneIds = new Set(problem.operations.filter((o) => o.done).map((o) => o.id))
  const doneFinish = new Map(problem.operations.filter((o) => o.done).map((o) => [o.id, (o.finishedAt ?? o.fixed?.end ?? -Infinity) + (o.waitAfter ?? 0)]))
  const ops = problem.operations.filter((o) => !o.done)
  const n = ops.length
  const opIndex = new Map(ops.map((o, i) => [o.id, i]))
  const horizonCap = (list: Interval[]): Interval[] =>
    list.filter((w) => w.start < problem.horizon).map((w) => ({ start: w.start, end: Math.min(w.end, problem.horizon) }))
  const windowCache = new Map<string, { windows: Interval[]; windowEnds: number[] }>()
  const windowsFor = (bench: number, person: number): { windows: Interval[]; windowEnds: number[] } => {
    const key = `${bench}/${person}`
    let w = windowCache.get(key)
    if (!w) {
      const bw = bench >= 0 ? problem.benches[bench]!.available : null
      const pw = person >= 0 ? problem.people[person]!.available : null
      const windows = horizonCap(bw && pw ? intersect(bw, pw) : (bw ?? pw ?? ALWAYS))
      w = { windows, windowEnds: windows.map((x) => x.end) }
      windowCache.set(key, w)
    }
    return w
  }
  const jobOf = new Int32Array(n)
  const preds: number[][] = []
  const succs: number[][] = ops.map(() => [])
  const options: CompiledOption[][] = []
  const earliest = new Float64Array(n)
  const doneReady = new Float64Array(n).fill(-Infinity)
  const waitAfter = new Float64Array(n)
  const outsideDays = new Int32Array(n).fill(-1)
  const fixedAt: Compiled['fixedAt'] = []
  const previousOption = new Int32Array(n).fill(-1)
  ops.forEach((op, i) => {
    const j = jobIdx.get(op.jobId) ?? 0
    jobOf[i] = j
    const job = problem.jobs[j]!
    earliest[i] = Math.max(problem.now, job.release)
    waitAfter[i] = op.waitAfter ?? 0
    for (const p of op.predecessors) {
      const r = doneFinish.get(p)
      if (r !== undefined && r > doneReady[i]!) doneReady[i] = r
    }
    if (doneReady[i]! > earliest[i]!) earliest[i] = doneReady[i]!
    preds.push(
      op.predecessors
        .filter((p) => !doneIds.has(p))
        .map((p) => opIndex.get(p)!)
        .filter((p) => p !== undefined),
    )
    for (const p of preds[i]!) succs[p]!.push(i)
    if (op.outsideWorkingDays !== undefined && op.outsideWorkingDays > 0) outsideDays[i] = op.outsideWorkingDays
    const opts = op.options.map((o) => {
      const b = o.benchId === null ? -1 : (benchIdx.get(o.benchId) ?? -1)
      const p = o.personId === null ? -1 : (personIdx.get(o.personId) ?? -1)
      // A plan names only the bench and the person, so a pair listed twice takes the minutes of its first listing (as the rule book reads it).
      const first = op.options.find((x) => x.benchId === o.benchId && x.personId === o.personId)!
      return { bench: b, person: p, minutes: first.minutes, ...windowsFor(b, p) }
    })
    options.push(opts)
    if (op.fixed) {
      const f = op.fixed
      const b = f.benchId === null ? -1 : (benchIdx.get(f.benchId) ?? -1)
      const p = f.personId === null ? -1 : (personIdx.get(f.personId) ?? -1)
      const match = opts.find((o) => o.bench === b && o.person === p)
      const option = match ?? { bench: b, person: p, minutes: opts[0]?.minutes ?? 0, ...windowsFor(b, p) }
      fixedAt.push({ option, start: f.start, ...(f.end !== undefined ? { end: f.end } : {}), benchId: f.benchId, personId: f.personId })
    } else fixedAt.push(null)
    const prev = problem.previous?.[op.id]
    if (prev) previousOption[i] = op.options.findIndex((o) => o.benchId === prev.benchId && o.personId === prev.personId)
  })
  // Deadlines from pins: every unfinished step before a pinned one must be done (with its wait) by the pin's start.
  const pinDeadline = new Float64Array(n).fill(Infinity)
  const stack: number[] = []
  for (let i = 0; i < n; i++) {
    const f = fixedAt[i]
    if (!f) continue
    for (const p of preds[i]!) stack.push(p, f.start)
    while (stack.length > 0) {
      const by = stack.pop()!,
        x = stack.pop()!
      if (fixedAt[x]) continue
      if (pinDeadline[x]! <= by) continue
      pinDeadline[x] = by
      for (const p of preds[x]!) stack.push(p, by)
    }
  }
  return {
    problem,
    n,
    ops,
    opIndex,
    jobs: problem.jobs,
    jobOf,
    preds,
    succs,
    options,
    earliest,
    doneReady,
    waitAfter,
    outsideDays,
    fixedAt,
    previousOption,
    pinDeadline,
    benchCount: problem.benches.length,
    personCount: problem.people.length,
    originWeekday: weekdayOf(problem.origin),
  }
}

/** Busy time of one bench or person: sorted disjoint segments with their owning operation. */
class Timeline {
  starts: number[] = []
  ends: number[] = []
  owners: number[] = []
  /** The resource's own working time: busy blocks separated only by its time off are joined. */
  constructor(private available: Interval[]) {}
  private idleBetween(a: number, b: number): boolean {
    if (a >= b) return false
    const w = this.available[firstEndingAfter(this.available, a)]
    return w !== undefined && w.start < b
  }
  /** Index of the first busy block ending after t (the number of blocks when none does). */
  firstEndingAfter(t: number): number {
    const ends = this.ends
    let lo = 0,
      hi = ends.length
    while (lo < hi) {
      const mid = (lo + hi) >> 1
      if (ends[mid]! > t) hi = mid
      else lo = mid + 1
    }
    return lo
  }
  /** First busy segment overlapping [s, e), or -1. */
  overlap(s: number, e: number): number {
    const ends = this.ends
    let lo = 0,
      hi = ends.length
    while (lo < hi) {
      const mid = (lo + hi) >> 1
      if (ends[mid]! > s) hi = mid
      else lo = mid + 1
    }
    return lo < ends.length && this.starts[lo]! < e ? lo : -1
  }
  add(s: number, e: number, owner: number): void {
    const ends = this.ends
    let lo = 0,
      hi = ends.length
    while (lo < hi) {
      const mid = (lo + hi) >> 1
      if (ends[mid]! > s) hi = mid
      else lo = mid + 1
    }
    // Touching busy stretches are kept as one block (owned by the operation that ends it), so searches jump whole blocks.
    const joinPrev = lo > 0 && !this.idleBetween(ends[lo - 1]!, s)
    const joinNext = lo < ends.length && !this.idleBetween(e, this.starts[lo]!)
    if (joinPrev && joinNext) {
      ends[lo - 1] = ends[lo]!
      this.owners[lo - 1] = this.owners[lo]!
      this.starts.splice(lo, 1)
      ends.splice(lo, 1)
      this.owners.splice(lo, 1)
    } else if (joinPrev) {
      ends[lo - 1] = e
      this.owners[lo - 1] = owner
    } else if (joinNext) {
      this.starts[lo] = s
    } else {
      this.starts.splice(lo, 0, s)
      ends.splice(lo, 0, e)
      this.owners.splice(lo, 0, owner)
    }
  }
}

/** Reason codes kept compactly during decoding. */
export enum Why {
  Now = 0,
  Release = 1,
  Predecessor = 2,
  Bench = 3,
  Person = 4,
  WorkingTime = 5,
  Fixed = 6,
  /** Held at the start the previous plan gave it (`hold`), though it could start earlier. */
  Kept = 7,
}

/** The timed result of one decode. */
export interface Decoded {
  start: Float64Array
  end: Float64Array
  option: Int32Array
  segments: Interval[][]
  why: Uint8Array
  blocker: Int32Array
  /** Index of the first operation that could not be planned before the horizon, -1 when all fit. */
  overflow: number
  /** Pinned or running steps that start before an unfinished predecessor (with its wait) is ready: such a plan breaks a rule. */
  brokenPins: number
  completion: Float64Array
  weightedTardiness: number
  makespan: number
  moves: number
  shifted: number
  /** The decoder's picks in order (steps it placed, not pinned ones), and for each step the pick at which it became ready. */
  order?: Int32Array
  readyAt?: Int32Array
}

/**
 * Index of the first entry at or after i of a sorted list of ends (busy blocks', windows') that ends after t: a few steps, or a
 * long jump by doubling and halving.
 */
function nextEndingAfter(ends: number[], i: number, t: number): number {
  const n = ends.length
  if (i >= n || ends[i]! > t) return i
  let lo = i + 1,
    hi = lo,
    step = 1
  while (hi < n && ends[hi]! <= t) {
    lo = hi + 1
    step <<= 1
    hi = lo + step
  }
  if (hi > n) hi = n
  while (lo < hi) {
    const mid = (lo + hi) >> 1
    if (ends[mid]! > t) hi = mid
    else lo = mid + 1
  }
  return lo
}

/** Where the last successful `fit` starts, and what held it back (set by `fit`, so trying an option allocates nothing). */
let fitStart = 0,
  fitBlockedBy = -1,
  fitBlockedOn: Why = Why.WorkingTime

/**
 * Earliest start at or after t on option `o` that avoids busy bench and person time: returns the end (the start and what held it
 * back in fitStart, fitBlockedBy, fitBlockedOn), or Infinity past the horizon or when it cannot end by `limit` (another option
 * already ends by then). The work's segments are those of walkWorkingTime(o.windows, fitStart, o.minutes).
 */
function fit(o: CompiledOption, t: number, benches: Timeline[], people: Timeline[], limit = Infinity): number {
  let blockedBy = -1
  let blockedOn: Why = Why.WorkingTime
  const bt = o.bench >= 0 ? benches[o.bench]! : null
  const pt = o.person >= 0 ? people[o.person]! : null
  const win = o.windows
  const minutes = o.minutes
  let w: Interval | undefined
  // t only grows here: the window and the bench's and person's busy blocks are followed from where they were, not searched again.
  let wi = firstEndingAfter(win, t)
  const bEnds = bt?.ends,
    bStarts = bt?.starts,
    pEnds = pt?.ends,
    pStarts = pt?.starts
  let bi = bt ? bt.firstEndingAfter(t) : 0,
    pi = pt ? pt.firstEndingAfter(t) : 0
  for (;;) {
    // Skip to a moment when the pair works and neither is busy, then check the whole stretch of work.
    for (;;) {
      // Cannot finish by `limit` any more: another option is already at least as good.
      if (t + minutes > limit) return Infinity
      wi = nextEndingAfter(o.windowEnds, wi, t)
      w = win[wi]
      if (!w) return Infinity
      if (w.start > t) t = w.start
      if (bEnds) {
        bi = nextEndingAfter(bEnds, bi, t)
        if (bi < bEnds.length && bStarts![bi]! <= t) {
          t = bEnds[bi]!
          blockedBy = bt!.owners[bi]!
          blockedOn = Why.Bench
          continue
        }
      }
      if (pEnds) {
        pi = nextEndingAfter(pEnds, pi, t)
        if (pi < pEnds.length && pStarts![pi]! <= t) {
          t = pEnds[pi]!
          blockedBy = pt!.owners[pi]!
          blockedOn = Why.Person
          continue
        }
      }
      break
    }
    if (minutes > 0) {
      // The work's first stretch runs at least to the end of this window or of the work: busy time starting before that is in
      // the way, found without walking the calendar (the same block the walk's first segment would meet: the first one ending
      // after t, which starts after t).
      const fe = Math.min(w.end, t + minutes)
      if (bEnds && bi < bEnds.length && bStarts![bi]! < fe) {
        t = bEnds[bi]!
        blockedBy = bt!.owners[bi]!
        blockedOn = Why.Bench
        continue
      }
      if (pEnds && pi < pEnds.length && pStarts![pi]! < fe) {
        t = pEnds[pi]!
        blockedBy = pt!.owners[pi]!
        blockedOn = Why.Person
        continue
      }
    }
    // Walk the work through the windows from t; each stretch (touching windows make one) must meet no busy time of the bench,
    // then of the person — the first stretch that does pushes t to the end of that busy block.
    let left = minutes,
      k = wi,
      at = t,
      s0 = 0,
      e0 = t,
      open = false,
      pushTo = -Infinity,
      bj = bi,
      pj = pi
    for (;;) {
      // The next window's share of the work joins the open stretch when it touches it; otherwise the open stretch is checked.
      let ns = 0,
        ne = 0
      const last = left <= 0
      if (!last) {
        const ww = win[k]
        if (!ww) return Infinity // the windows run out before the work is done
        ns = at > ww.start ? at : ww.start
        ne = Math.min(ww.end, ns + left)
        left -= ne - ns
        at = ne
        k++
        if (open && e0 === ns) {
          e0 = ne
          continue
        }
        if (!open) {
          s0 = ns
          e0 = ne
          open = true
          continue
        }
      }
      if (!open) break // no work to do (0 minutes)
      if (e0 > s0) {
        if (bEnds) {
          bj = nextEndingAfter(bEnds, bj, s0)
          if (bj < bEnds.length && bStarts![bj]! < e0) {
            pushTo = bEnds[bj]!
            blockedBy = bt!.owners[bj]!
            blockedOn = Why.Bench
            break
          }
        }
        if (pEnds) {
          pj = nextEndingAfter(pEnds, pj, s0)
          if (pj < pEnds.length && pStarts![pj]! < e0) {
            pushTo = pEnds[pj]!
            blockedBy = pt!.owners[pj]!
            blockedOn = Why.Person
            break
          }
        }
      }
      if (last) break
      s0 = ns
      e0 = ne
    }
    if (pushTo === -Infinity) {
      fitStart = t
      fitBlockedBy = blockedBy
      fitBlockedOn = blockedOn
      return open ? e0 : t
    }
    t = pushTo
  }
}

/** Min-heap of operation indices ordered by key, ties by index (so the order taken never depends on the heap's history). */
class KeyHeap {
  private items: number[] = []
  constructor(private key: Float64Array) {}
  get size(): number {
    return this.items.length
  }
  private less(x: number, y: number): boolean {
    const k = this.key
    return k[x]! < k[y]! || (k[x] === k[y] && x < y)
  }
  push(x: number): void {
    const a = this.items
    a.push(x)
    let i = a.length - 1
    while (i > 0) {
      const p = (i - 1) >> 1
      if (!this.less(x, a[p]!)) break
      a[i] = a[p]!
      i = p
    }
    a[i] = x
  }
  pop(): number {
    const a = this.items
    const top = a[0]!,
      last = a.pop()!
    if (a.length > 0) {
      let i = 0
      for (;;) {
        const l = 2 * i + 1,
          r = l + 1
        let m = i,
          mv = last
        if (l < a.length && this.less(a[l]!, mv)) {
          m = l
          mv = a[l]!
        }
        if (r < a.length && this.less(a[r]!, mv)) m = r
        if (m === i) break
        a[i] = a[m]!
        i = m
      }
      a[i] = last
    }
    return top
  }
}

/**
 * The first pick of `base` (decoded with baseKey and baseChoice) at which decoding with key and choice can take another step or
 * place it otherwise: the picks before it are the same, so `decode(c, key, choice, base, from)` may resume there. A step whose
 * choice changed or whose key rose is taken the same way until its own pick. A step whose key fell can be taken earlier, but only
 * at the first pick (from when it became ready) whose step it now goes before in the heap's order (key, then index): until then
 * each pick's step is still the lowest of the steps ready; if there is none before its own pick, it is taken there as before.
 * Comparing with the steps' old keys is exact for unchanged ones and errs early (never late) where the step taken also changed.
 */
export function firstChangedPick(base: Decoded, baseKey: Float64Array, baseChoice: Int32Array, key: Float64Array, choice: Int32Array): number {
  const order = base.order,
    ready = base.readyAt
  const n = key.length
  if (!order || !ready) return 0
  let first = n
  let pickOf: Int32Array | null = null
  for (let i = 0; i < n; i++) {
    const keyChanged = key[i] !== baseKey[i]
    if (!keyChanged && choice[i] === baseChoice[i]) continue
    if (!pickOf) {
      pickOf = new Int32Array(n).fill(order.length)
      for (let k = 0; k < order.length; k++) pickOf[order[k]!] = k
    }
    const own = pickOf[i]!
    if (!keyChanged || key[i]! > baseKey[i]!) {
      if (own < first) first = own
      continue
    }
    // Taken at its own pick after all (no step it now goes before came first), it is placed as before: nothing changes.
    const ki = key[i]!
    const stop = own < first ? own : first
    for (let k = ready[i]!; k < stop; k++) {
      const o = order[k]!
      const ko = baseKey[o]!
      if (ki < ko || (ki === ko && i < o)) {
        first = k
        break
      }
    }
  }
  return first
}

/**
 * Serial schedule generation: repeatedly takes the eligible operation with the lowest key and places it at its earliest
 * feasible time; choice[i] >= 0 forces that option, -1 picks the option that finishes first (ties: previous plan's).
 * With `base` (a decode of the same problem) and `from`: no step whose key or choice differs from base's became ready before
 * pick `from` of base, so base's first `from` picks are taken as they are and the decoding goes on from there (same result).
 * `hold[i]` (NaN for none), bench work only: the step starts no earlier than that (the previous plan's start, when a re-plan keeps
 * it there); a step whose hold differs from base's counts as changed, like one whose choice differs.
 */
export function decode(c: Compiled, key: Float64Array, choice: Int32Array, base?: Decoded, from = 0, hold?: Float64Array): Decoded {
  const n = c.n
  const order = new Int32Array(n),
    readyAt = new Int32Array(n).fill(n)
  let taken = 0
  const start = new Float64Array(n),
    end = new Float64Array(n)
  const option = new Int32Array(n).fill(-1)
  const segments: Interval[][] = new Array(n)
  const why = new Uint8Array(n),
    blocker = new Int32Array(n).fill(-1)
  const benches: Timeline[] = c.problem.benches.map((b) => new Timeline(b.available))
  const people: Timeline[] = c.problem.people.map((p) => new Timeline(p.available))
  const placed = new Uint8Array(n)
  const waiting = new Int32Array(n)
  let overflow = -1
  const heap = new KeyHeap(key)

  for (let i = 0; i < n; i++) {
    const f = c.fixedAt[i]
    if (!f) continue
    if (c.outsideDays[i]! > 0) {
      // Sent out (or pinned to leave): away for its working days from the day it left, whatever the plan does.
      const back = outsideWorkEnd(c.problem.workshopDays, f.start, c.outsideDays[i]!)
      if (back === null && overflow < 0) overflow = i
      start[i] = f.start
      end[i] = back ?? f.start + c.outsideDays[i]! * 1440
      segments[i] = [{ start: f.start, end: end[i]! }]
      option[i] = -1
      why[i] = Why.Fixed
      placed[i] = 1
      continue
    }
    const segs = f.end !== undefined ? clipToWindows(f.option.windows, f.start, f.end) : walkWorkingTime(f.option.windows, f.start, f.option.minutes)
    const s = segs && segs.length > 0 ? segs : [{ start: f.start, end: f.end ?? f.start + f.option.minutes }]
    segments[i] = s
    start[i] = f.start
    end[i] = f.end ?? s[s.length - 1]!.end
    for (const g of s) {
      if (g.end <= g.start) continue
      if (f.option.bench >= 0) benches[f.option.bench]!.add(g.start, g.end, i)
      if (f.option.person >= 0) people[f.option.person]!.add(g.start, g.end, i)
    }
    option[i] = c.options[i]!.indexOf(f.option)
    why[i] = Why.Fixed
    placed[i] = 1
  }
  // Resuming from a decode whose first `from` picks are known to be the same (no step whose key or choice differs was ready
  // before then): those steps keep their places and only the rest is decoded.
  const resume = base?.order && base.readyAt && base.overflow < 0 ? Math.min(from, base.order.length) : 0
  for (let q = 0; q < resume; q++) {
    const i = base!.order![q]!
    start[i] = base!.start[i]!
    end[i] = base!.end[i]!
    option[i] = base!.option[i]!
    segments[i] = base!.segments[i]!
    why[i] = base!.why[i]!
    blocker[i] = base!.blocker[i]!
    const o = option[i]! >= 0 && !(c.outsideDays[i]! > 0) ? c.options[i]![option[i]!] : undefined
    if (o)
      for (const g of segments[i]!) {
        if (g.end <= g.start) continue
        if (o.bench >= 0) benches[o.bench]!.add(g.start, g.end, i)
        if (o.person >= 0) people[o.person]!.add(g.start, g.end, i)
      }
    placed[i] = 1
    readyAt[i] = base!.readyAt![i]!
    order[taken++] = i
  }
  for (let i = 0; i < n; i++) {
    if (placed[i]) continue
    let w = 0
    for (const p of c.preds[i]!) if (!placed[p]) w++
    waiting[i] = w
    if (w === 0) {
      readyAt[i] = resume > 0 ? base!.readyAt![i]! : 0
      heap.push(i)
    }
  }
  const release = (i: number): void => {
    for (const s of c.succs[i]!)
      if (!placed[s]) {
        waiting[s] = waiting[s]! - 1
        if (waiting[s] === 0) {
          readyAt[s] = taken
          heap.push(s)
        }
      }
  }

  while (heap.size > 0) {
    const i = heap.pop()
    order[taken++] = i
    // Earliest start from now, release and predecessors (with their wait-after).
    let est = c.problem.now,
      w: Why = Why.Now,
      blk = -1
    const rel = c.jobs[c.jobOf[i]!]!.release
    if (rel > est) {
      est = rel
      w = Why.Release
    }
    if (c.doneReady[i]! > est) {
      est = c.doneReady[i]!
      w = Why.Predecessor
    }
    for (const p of c.preds[i]!) {
      const e = end[p]! + c.waitAfter[p]!
      if (e > est) {
        est = e
        w = Why.Predecessor
        blk = p
      }
    }
    if (c.outsideDays[i]! > 0) {
      const e = outsideWorkEnd(c.problem.workshopDays, est, c.outsideDays[i]!)
      if (e === null) {
        if (overflow < 0) overflow = i
      }
      const fin = e ?? est + c.outsideDays[i]! * 1440
      // It is sent out while the workshop is open: ready at night or on a closed day, it leaves when the workshop next opens
      // (no workshop day opens in between, so it is back at the same close).
      const leave = leaveTime(c.problem.workshopDays, est)
      start[i] = leave
      end[i] = fin
      segments[i] = [{ start: leave, end: fin }]
      why[i] = leave > est ? Why.WorkingTime : w
      blocker[i] = leave > est ? -1 : blk
    } else {
      // Held where the previous plan had it (its start, unless something now makes it later): it does not move up into time
      // freed by others.
      if (hold && hold[i]! > est) {
        est = hold[i]!
        w = Why.Kept
        blk = -1
      }
      const opts = c.options[i]!
      const forced = choice[i]!
      let bestK = -1,
        bestEnd = Infinity,
        bestStart = 0,
        bestBlockedBy = -1,
        bestBlockedOn: Why = Why.WorkingTime
      for (let k = 0; k < opts.length; k++) {
        if (forced >= 0 && k !== forced) continue
        const e = fit(opts[k]!, est, benches, people, bestEnd)
        if (e === Infinity) continue
        const better =
          e < bestEnd || (e === bestEnd && (k === c.previousOption[i] || (bestK !== c.previousOption[i] && opts[k]!.minutes < opts[bestK]!.minutes)))
        if (better) {
          bestK = k
          bestEnd = e
          bestStart = fitStart
          bestBlockedBy = fitBlockedBy
          bestBlockedOn = fitBlockedOn
        }
      }
      if (bestK < 0) {
        if (overflow < 0) overflow = i
        const d = opts[0]?.minutes ?? 0
        start[i] = est
        end[i] = est + d
        segments[i] = [{ start: est, end: est + d }]
        option[i] = opts.length > 0 ? 0 : -1
        why[i] = w
        blocker[i] = blk
      } else {
        const o = opts[bestK]!
        // Only the chosen option's segments are built (fit checked them without keeping them).
        const segs = walkWorkingTime(o.windows, bestStart, o.minutes)!
        const s0 = segs[0]!.start
        start[i] = s0
        end[i] = bestEnd
        segments[i] = segs
        option[i] = bestK
        for (const g of segs) {
          if (g.end <= g.start) continue
          if (o.bench >= 0) benches[o.bench]!.add(g.start, g.end, i)
          if (o.person >= 0) people[o.person]!.add(g.start, g.end, i)
        }
        if (s0 > est) {
          why[i] = bestBlockedBy >= 0 ? bestBlockedOn : Why.WorkingTime
          blocker[i] = bestBlockedBy
        } else {
          why[i] = w
          blocker[i] = blk
        }
      }
    }
    placed[i] = 1
    release(i)
  }
  // Operations left unplaced sit on a cycle; checkProblem rules that out, so this is defensive.
  for (let i = 0; i < n; i++)
    if (!placed[i]) {
      if (overflow < 0) overflow = i
      start[i] = end[i] = c.problem.now
      segments[i] = []
    }

  let brokenPins = 0
  for (let i = 0; i < n; i++) {
    if (!c.fixedAt[i]) continue
    for (const p of c.preds[i]!)
      if (end[p]! + c.waitAfter[p]! > start[i]!) {
        brokenPins++
        break
      }
  }
  const { completion, makespan, weightedTardiness } = scoreOfEnds(c, end)
  let moves = 0,
    shifted = 0
  for (let i = 0; i < n; i++) {
    const prev = c.problem.previous?.[c.ops[i]!.id]
    if (prev && !c.fixedAt[i]) {
      // Outside work takes no bench and no person: it moved when the previous plan gave it one (its options do not count).
      const moved = c.outsideDays[i]! > 0 ? prev.benchId !== null || prev.personId !== null : option[i] !== c.previousOption[i]
      if (moved) moves++
      else if (Math.abs(start[i]! - prev.start) >= 1) shifted++
    }
  }
  return {
    start,
    end,
    option,
    segments,
    why,
    blocker,
    overflow,
    brokenPins,
    completion,
    weightedTardiness,
    makespan,
    moves,
    shifted,
    order: order.subarray(0, taken),
    readyAt,
  }
}

/** Each job's completion (its latest end), the makespan and the weighted tardiness of a plan's ends. */
export function scoreOfEnds(c: Compiled, end: Float64Array): { completion: Float64Array; makespan: number; weightedTardiness: number } {
  const completion = new Float64Array(c.jobs.length).fill(-Infinity)
  let makespan = 0
  for (let i = 0; i < c.n; i++) {
    const j = c.jobOf[i]!
    if (end[i]! > completion[j]!) completion[j] = end[i]!
    if (end[i]! > makespan) makespan = end[i]!
  }
  let weightedTardiness = 0
  c.jobs.forEach((job, j) => {
    if (job.due !== null && completion[j]! > job.due) weightedTardiness += job.weight * (completion[j]! - job.due)
  })
  return { completion, makespan, weightedTardiness }
}

/** Lexicographic comparison of two decodes: negative when a is better; overflowing decodes are always worse. */
export function compareDecoded(a: Decoded, b: Decoded, objective: Objective[]): number {
  const ao = a.overflow >= 0 ? 1 : 0,
    bo = b.overflow >= 0 ? 1 : 0
  if (ao !== bo) return ao - bo
  if (a.brokenPins !== b.brokenPins) return a.brokenPins - b.brokenPins
  for (const k of objective) {
    const d = a[k] - b[k]
    if (d !== 0) return d
  }
  return 0
}

const WHY_KIND: StartReason['kind'][] = ['now', 'release', 'predecessor', 'bench', 'person', 'working-time', 'fixed', 'kept']

/** Builds the public Plan, with human-readable reasons, from a decode. */
export function toPlan(c: Compiled, d: Decoded, stats: Plan['stats']): Plan {
  const p = c.problem
  const at = (t: number): string => formatMinute(t, c.originWeekday, p.origin)
  const operations: PlannedOperation[] = []
  for (let i = 0; i < c.n; i++) {
    const op = c.ops[i]!
    const opt = d.option[i]! >= 0 ? c.options[i]![d.option[i]!]! : null
    const fixed = c.fixedAt[i]
    const benchId = fixed ? fixed.benchId : c.outsideDays[i]! > 0 || !opt || opt.bench < 0 ? null : p.benches[opt.bench]!.id
    const personId = fixed ? fixed.personId : c.outsideDays[i]! > 0 || !opt || opt.person < 0 ? null : p.people[opt.person]!.id
    const kind = WHY_KIND[d.why[i]!]!
    const b = d.blocker[i]!
    const bop = b >= 0 ? c.ops[b]! : null
    // Outside work that waited for the workshop to open goes out at opening time, never at midnight (whole workshop days).
    const startAt = c.outsideDays[i]! > 0 ? outsideStartWords(d.start[i]!, at) : at(d.start[i]!)
    let detail: string
    switch (kind) {
      case 'fixed':
        detail = `pinned at ${startAt}`
        break
      case 'now':
        detail = `${c.outsideDays[i]! > 0 ? 'goes out' : 'starts'} as soon as planning allows (${startAt})`
        break
      case 'release':
        detail = `job ${c.jobs[c.jobOf[i]!]!.name} is released at ${at(c.jobs[c.jobOf[i]!]!.release)}`
        break
      case 'predecessor':
        detail = bop
          ? `waiting for ${bop.name} ${toBeDone(bop)}${c.waitAfter[b]! > 0 ? ` and ${c.waitAfter[b]} min wait` : ''} until ${startAt}`
          : `waiting for a predecessor until ${startAt}`
        break
      case 'bench':
      case 'person': {
        const name =
          kind === 'bench'
            ? benchId
              ? (p.benches.find((x) => x.id === benchId)?.name ?? benchId)
              : 'the bench'
            : personId
              ? (p.people.find((x) => x.id === personId)?.name ?? personId)
              : 'the person'
        detail = `waiting for ${bop ? busyWith(name, bop, c.jobs[c.jobOf[b]!]?.name) : `${name} (busy)`} until ${startAt}`
        break
      }
      case 'kept':
        detail = `kept at ${startAt}, where the plan it replaces had it`
        break
      default:
        detail =
          c.outsideDays[i]! > 0
            ? d.start[i]! % 1440 === 0
              ? `goes out when the workshop next opens, on ${dayWords(d.start[i]!, at)}`
              : `goes out when the workshop next opens (${startAt})`
            : `outside working time of ${[benchId && p.benches.find((x) => x.id === benchId)?.name, personId && p.people.find((x) => x.id === personId)?.name].filter(Boolean).join(' and ') || 'the workshop'} until ${startAt}`
    }
    // Outside work is counted in the workshop's working days.
    if (c.outsideDays[i]! > 0) detail += `; ${outsideLength(c.outsideDays[i]!, d.end[i]!, at)}`
    const reason: StartReason = { kind, detail, ...(bop ? { blockerId: bop.id } : {}) }
    operations.push({ operationId: op.id, jobId: op.jobId, benchId, personId, start: d.start[i]!, end: d.end[i]!, segments: d.segments[i]!, reason })
  }
  const jobs: Plan['jobs'] = []
  c.jobs.forEach((job, j) => {
    const completion = d.completion[j]!
    if (completion === -Infinity) return
    const lateness = job.due === null ? 0 : completion - job.due
    jobs.push({ jobId: job.id, completion, lateness, tardiness: Math.max(0, lateness) })
  })
  const score: Score = { weightedTardiness: d.weightedTardiness, makespan: d.makespan, moves: d.moves, shifted: d.shifted, feasible: true, violations: [] }
  return { operations, jobs, score, stats }
}

/** Throws when a decode could not fit everything before the horizon. */
export function assertWithinHorizon(c: Compiled, d: Decoded): void {
  if (d.overflow < 0) return
  const op = c.ops[d.overflow]!
  const job = c.jobs[c.jobOf[d.overflow]!]!
  throw new SchedulingInputError({
    code: 'beyond-horizon',
    jobId: job.id,
    operationId: op.id,
    message: `Job ${job.name}: operation ${op.name} cannot be planned before the end of the calendars (minute ${c.problem.horizon}); extend the horizon or free capacity`,
  })
}
