// Fast makespan core for calendar-free, person-free shops: tabu search on the disjunctive graph with critical-block and machine-reassignment moves.
import { createRng, type Rng } from './random.ts'
import { freshCopies } from './fresh-copy.ts'

/** A flattened shop: operations in job chains, each with one or more (machine, duration) options. */
export interface ShopInstance {
  /** Number of operations. */
  n: number
  /** Number of machines. */
  m: number
  /** Number of job chains (used for the tabu tenure only). */
  jobs: number
  /** Job-chain predecessor / successor of each operation, -1 when none. */
  jobPred: Int32Array
  jobSucc: Int32Array
  /** Options of op i are optMachine/optDur[optStart[i] .. optStart[i+1]). */
  optStart: Int32Array
  optMachine: Int32Array
  optDur: Int32Array
  /** Earliest start per operation (release, now); zeros when absent. */
  earliest?: Int32Array
}

export interface ShopSearchSettings {
  seed: number
  /** Absolute clock value (ms) at which to stop. */
  deadline: number
  clock: () => number
  maxIterations?: number
  shouldStop?: () => boolean
  /** Tests only: after each move, recompute heads and tails in full and throw if the partial update differs. */
  verifyIncremental?: boolean
  /** Called whenever the best makespan improves. */
  onImprove?: (makespan: number, iteration: number) => void
}

export interface ShopSolution {
  machine: Int32Array
  duration: Int32Array
  start: Int32Array
  makespan: number
  iterations: number
  firstMs: number
}

/** A simple lower bound: longest job chain at minimum durations, and for single-option shops the heaviest machine. */
export function shopLowerBound(inst: ShopInstance): number {
  const { n, jobPred, jobSucc, optStart, optDur, optMachine, m } = inst
  const minDur = new Int32Array(n)
  let single = true
  for (let i = 0; i < n; i++) {
    let best = Infinity
    for (let k = optStart[i]!; k < optStart[i + 1]!; k++) best = Math.min(best, optDur[k]!)
    minDur[i] = best
    if (optStart[i + 1]! - optStart[i]! !== 1) single = false
  }
  let lb = 0
  for (let i = 0; i < n; i++) {
    if (jobPred[i]! >= 0) continue
    let t = inst.earliest?.[i] ?? 0
    for (let x = i; x >= 0; x = jobSucc[x]!) t = Math.max(t, inst.earliest?.[x] ?? 0) + minDur[x]!
    lb = Math.max(lb, t)
  }
  if (single) {
    const load = new Float64Array(m)
    for (let i = 0; i < n; i++) load[optMachine[optStart[i]!]!]! += minDur[i]!
    for (let k = 0; k < m; k++) lb = Math.max(lb, load[k]!)
  }
  return lb
}

const rngOf = createRng
/**
 * Tabu search for minimum makespan; anytime, deterministic for a given seed and iteration count. Each call runs on a fresh copy
 * of its code, which V8 then specialises on this call's shop (see `fresh-copy.ts`).
 */
export const solveShop = freshCopies(
  searchOnce,
  // What the search's code names outside itself; the random generator under a name of this module's own (see pair-core.ts).
  { rngOf, shopLowerBound },
  (copy) => {
    // The copy must give exactly what the search itself gives on a small job shop (three jobs on two machines).
    const inst: ShopInstance = {
      n: 6,
      m: 2,
      jobs: 3,
      jobPred: Int32Array.from([-1, 0, -1, 2, -1, 4]),
      jobSucc: Int32Array.from([1, -1, 3, -1, 5, -1]),
      optStart: Int32Array.from([0, 1, 2, 3, 4, 5, 6]),
      optMachine: Int32Array.from([0, 1, 1, 0, 0, 1]),
      optDur: Int32Array.from([3, 2, 4, 1, 2, 3]),
    }
    const settings: ShopSearchSettings = { seed: 7, deadline: Infinity, clock: () => 0, maxIterations: 50 }
    const a = copy(inst, settings),
      b = searchOnce(inst, settings)
    return a.makespan === b.makespan && a.iterations === b.iterations && a.start.join() === b.start.join()
  },
)

function searchOnce(inst: ShopInstance, settings: ShopSearchSettings): ShopSolution {
  const t0 = settings.clock()
  const { n, m, jobPred, jobSucc, optStart, optMachine, optDur } = inst
  const rel = inst.earliest ?? new Int32Array(n)
  const rng: Rng = rngOf(settings.seed)
  const lowerBound = shopLowerBound(inst)

  const mach = new Int32Array(n)
  const p = new Int32Array(n)
  const mPred = new Int32Array(n).fill(-1)
  const mSucc = new Int32Array(n).fill(-1)
  const mHead = new Int32Array(m).fill(-1)
  const r = new Int32Array(n)
  const q = new Int32Array(n)
  const topo = new Int32Array(n)
  const indeg = new Int32Array(n)

  const unlink = (x: number): void => {
    const a = mPred[x]!,
      b = mSucc[x]!
    if (a >= 0) mSucc[a] = b
    else mHead[mach[x]!] = b
    if (b >= 0) mPred[b] = a
    mPred[x] = -1
    mSucc[x] = -1
  }
  /** Puts x on machine k right after a (a = -1: at the head). */
  const linkAfter = (x: number, k: number, a: number): void => {
    mach[x] = k
    const b = a >= 0 ? mSucc[a]! : mHead[k]!
    mPred[x] = a
    mSucc[x] = b
    if (a >= 0) mSucc[a] = x
    else mHead[k] = x
    if (b >= 0) mPred[b] = x
  }

  // Constructive start: among the next operation of each job, place the one that can finish earliest (ties: most work remaining).
  {
    const minDur = new Int32Array(n)
    for (let i = 0; i < n; i++) {
      let best = Infinity
      for (let k = optStart[i]!; k < optStart[i + 1]!; k++) best = Math.min(best, optDur[k]!)
      minDur[i] = best
    }
    const remaining = new Float64Array(n)
    for (let i = 0; i < n; i++) {
      if (jobSucc[i]! >= 0) continue
      let acc = 0
      for (let x = i; x >= 0; x = jobPred[x]!) {
        acc += minDur[x]!
        remaining[x] = acc
      }
    }
    const heads: number[] = []
    for (let i = 0; i < n; i++) if (jobPred[i]! < 0) heads.push(i)
    const ready = new Float64Array(n)
    const machReady = new Float64Array(m)
    const machLast = new Int32Array(m).fill(-1)
    let left = n
    while (left > 0) {
      let bestH = -1,
        bestOpt = -1,
        bestF = Infinity,
        bestRem = -1
      for (let h = 0; h < heads.length; h++) {
        const o = heads[h]!
        if (o < 0) continue
        const est = Math.max(ready[o]!, rel[o]!)
        for (let k = optStart[o]!; k < optStart[o + 1]!; k++) {
          const f = Math.max(est, machReady[optMachine[k]!]!) + optDur[k]!
          if (f < bestF || (f === bestF && remaining[o]! > bestRem)) {
            bestF = f
            bestH = h
            bestOpt = k
            bestRem = remaining[o]!
          }
        }
      }
      const o = heads[bestH]!
      const k = optMachine[bestOpt]!
      p[o] = optDur[bestOpt]!
      linkAfter(o, k, machLast[k]!)
      machLast[k] = o
      machReady[k] = bestF
      const s = jobSucc[o]!
      if (s >= 0) ready[s] = bestF
      heads[bestH] = s
      left--
    }
  }

  // Position of each operation in the current topological order, the part of it a move re-orders, and the last step of each job.
  const pos = new Int32Array(n),
    suffix = new Int32Array(n)
  const lastOps: number[] = []
  for (let i = 0; i < n; i++) if (jobSucc[i]! < 0) lastOps.push(i)
  /** The head of x from its job and machine predecessors' heads (and its release). */
  const headOf = (x: number): number => {
    let rx = rel[x]!
    const jp = jobPred[x]!,
      mp = mPred[x]!
    if (jp >= 0) {
      const e = r[jp]! + p[jp]!
      if (e > rx) rx = e
    }
    if (mp >= 0) {
      const e = r[mp]! + p[mp]!
      if (e > rx) rx = e
    }
    return rx
  }
  /**
   * Heads after a move that changed the in-arcs of operations from position `from` of the current order on: the operations
   * before it keep their heads and places; the rest are re-ordered by Kahn's rule among themselves. False on a cycle (the order
   * is then spoilt: call computeHeads after undoing the move).
   */
  const computeHeadsFrom = (from: number): boolean => {
    let cnt = 0
    if (from === 0) for (let i = 0; i < n; i++) suffix[cnt++] = i
    else for (let k = from; k < n; k++) suffix[cnt++] = topo[k]!
    let qt = from
    for (let c = 0; c < cnt; c++) {
      const i = suffix[c]!
      const jp = jobPred[i]!,
        mp = mPred[i]!
      const d = (jp >= 0 && pos[jp]! >= from ? 1 : 0) + (mp >= 0 && pos[mp]! >= from ? 1 : 0)
      indeg[i] = d
      if (d === 0) topo[qt++] = i
    }
    let qh = from
    while (qh < qt) {
      const x = topo[qh++]!
      r[x] = headOf(x)
      const js = jobSucc[x]!,
        ms = mSucc[x]!
      if (js >= 0) {
        const d = indeg[js]! - 1
        indeg[js] = d
        if (d === 0) topo[qt++] = js
      }
      if (ms >= 0) {
        const d = indeg[ms]! - 1
        indeg[ms] = d
        if (d === 0) topo[qt++] = ms
      }
    }
    if (qt !== n) return false
    for (let k = from; k < n; k++) pos[topo[k]!] = k
    return true
  }
  /** Moves the operation at order position `a` to position `b`, shifting those between; returns the first position changed. */
  const moveInOrder = (a: number, b: number): number => {
    const x = topo[a]!
    if (a < b) {
      for (let k = a; k < b; k++) {
        const y = topo[k + 1]!
        topo[k] = y
        pos[y] = k
      }
    } else {
      for (let k = a; k > b; k--) {
        const y = topo[k - 1]!
        topo[k] = y
        pos[y] = k
      }
    }
    topo[b] = x
    pos[x] = b
    return a < b ? a : b
  }
  /** Heads from position `from` on, in the current order (valid for the graph as it is). */
  const retimeFrom = (from: number): void => {
    for (let k = from; k < n; k++) {
      const x = topo[k]!
      r[x] = headOf(x)
    }
  }
  /** Tails of the operations up to position `upTo` of the order (those after it cannot reach a changed arc); returns the makespan. */
  const computeTailsUpTo = (upTo: number): number => {
    for (let k = upTo; k >= 0; k--) {
      const x = topo[k]!
      let qx = 0
      const js = jobSucc[x]!,
        ms = mSucc[x]!
      if (js >= 0) {
        const e = q[js]! + p[js]!
        if (e > qx) qx = e
      }
      if (ms >= 0) {
        const e = q[ms]! + p[ms]!
        if (e > qx) qx = e
      }
      q[x] = qx
    }
    let c = 0
    for (const x of lastOps) {
      const e = r[x]! + p[x]!
      if (e > c) c = e
    }
    return c
  }
  /** Heads by Kahn's order over the whole graph; false when it has a cycle. */
  const computeHeads = (): boolean => computeHeadsFrom(0)
  const computeTails = (): number => computeTailsUpTo(n - 1)

  if (!computeHeads()) throw new Error('shop core: initial schedule has a cycle')
  let cmax = computeTails()
  const bestMach = new Int32Array(n),
    bestP = new Int32Array(n),
    bestPred = new Int32Array(n)
  const bestOrder: number[][] = []
  let bestCmax = Infinity
  const saveBest = (): void => {
    bestCmax = cmax
    bestMach.set(mach)
    bestP.set(p)
    bestPred.set(mPred)
    bestOrder.length = 0
    for (let k = 0; k < m; k++) {
      const seq: number[] = []
      for (let x = mHead[k]!; x >= 0; x = mSucc[x]!) seq.push(x)
      bestOrder.push(seq)
    }
  }
  const restoreBest = (): void => {
    mPred.fill(-1)
    mSucc.fill(-1)
    mHead.fill(-1)
    mach.set(bestMach)
    p.set(bestP)
    for (let k = 0; k < m; k++) {
      let last = -1
      for (const x of bestOrder[k]!) {
        linkAfter(x, k, last)
        last = x
      }
    }
    computeHeads()
    cmax = computeTails()
  }
  saveBest()
  const firstMs = settings.clock() - t0
  settings.onImprove?.(bestCmax, 0)

  // Tabu memory: orderTabu[a*n+b] = iteration until which "a before b" on a machine may not be restored; machTabu[v*m+k] likewise for returning v to machine k.
  const pairKeyed = n <= 4096
  const orderTabu = pairKeyed ? new Int32Array(n * n) : null
  const orderTabuMap = pairKeyed ? null : new Map<number, number>()
  const getOrderTabu = (a: number, b: number): number => (orderTabu ? orderTabu[a * n + b]! : (orderTabuMap!.get(a * n + b) ?? 0))
  const setOrderTabu = (a: number, b: number, v: number): void => {
    if (orderTabu) orderTabu[a * n + b] = v
    else orderTabuMap!.set(a * n + b, v)
  }
  const machTabu = new Int32Array(n * m)
  const baseTenure = 10 + Math.floor(inst.jobs / Math.max(1, m))
  const tenure = (): number => baseTenure + rng.int(Math.max(1, Math.floor(baseTenure * 0.4)) + 1)

  const path = new Int32Array(n)
  const segBuf = new Int32Array(n)
  const rBuf = new Int32Array(n)
  const seqBuf = new Int32Array(n)

  /** Longest-path estimate after reordering a contiguous stretch of one machine into segBuf[0..len). */
  const estimateStretch = (len: number, before: number, after: number): number => {
    let prevEnd = before >= 0 ? r[before]! + p[before]! : 0
    for (let k = 0; k < len; k++) {
      const x = segBuf[k]!
      let rx = rel[x]! > prevEnd ? rel[x]! : prevEnd
      const jp = jobPred[x]!
      if (jp >= 0) {
        const e = r[jp]! + p[jp]!
        if (e > rx) rx = e
      }
      rBuf[k] = rx
      prevEnd = rx + p[x]!
    }
    let nextTail = after >= 0 ? q[after]! + p[after]! : 0
    let est = 0
    for (let k = len - 1; k >= 0; k--) {
      const x = segBuf[k]!
      let qx = nextTail
      const js = jobSucc[x]!
      if (js >= 0) {
        const e = q[js]! + p[js]!
        if (e > qx) qx = e
      }
      const c = rBuf[k]! + p[x]! + qx
      if (c > est) est = c
      nextTail = qx + p[x]!
    }
    return est
  }

  let iter = 0
  let lastImprove = 0
  const maxStall = Math.max(2000, 40 * Math.floor(Math.sqrt(n)) * 10)
  const maxIter = settings.maxIterations ?? Infinity
  // Chosen move, described for application: relocate op `mvOp` to machine `mvMach` after `mvAfter` with duration `mvDur`.
  let mvOp = -1,
    mvMach = -1,
    mvAfter = -1,
    mvDur = 0,
    mvKind = 0,
    mvFrom = 0,
    mvTo = 0,
    mvBlockStart = 0
  let ties = 0

  const stopNow = (): boolean => {
    if (iter >= maxIter) return true
    if ((iter & 31) === 0) {
      if (settings.clock() >= settings.deadline) return true
      if (settings.shouldStop?.()) return true
    }
    return false
  }

  while (bestCmax > lowerBound && !stopNow()) {
    iter++
    // One critical path, ties broken at random so that different paths get explored.
    let end = -1,
      cnt = 0
    for (const i of lastOps) {
      if (q[i] === 0 && r[i]! + p[i]! === cmax) {
        cnt++
        if (rng.int(cnt) === 0) end = i
      }
    }
    let len = 0
    for (let x = end; x >= 0;) {
      path[len++] = x
      const jp = jobPred[x]!,
        mp = mPred[x]!
      const jt = jp >= 0 && r[jp]! + p[jp]! === r[x]!
      const mt = mp >= 0 && r[mp]! + p[mp]! === r[x]!
      if (jt && mt) x = rng.next() < 0.5 ? jp : mp
      else if (mt) x = mp
      else if (jt) x = jp
      else x = -1
    }
    for (let a = 0, b = len - 1; a < b; a++, b--) {
      const t = path[a]!
      path[a] = path[b]!
      path[b] = t
    }

    let bestEst = Infinity
    let anyEst = Infinity
    let anyCount = 0
    mvOp = -1
    ties = 0
    let fbOp = -1,
      fbMach = -1,
      fbAfter = -1,
      fbDur = 0,
      fbKind = 0,
      fbFrom = 0,
      fbTo = 0,
      fbBlockStart = 0
    const consider = (
      est: number,
      tabu: boolean,
      op: number,
      k: number,
      after: number,
      dur: number,
      kind: number,
      from: number,
      to: number,
      blockStart: number,
    ): void => {
      if (!tabu || est < bestCmax) {
        if (est < bestEst) {
          bestEst = est
          ties = 1
        } else if (est === bestEst) {
          ties++
          if (rng.int(ties) !== 0) return
        } else return
        mvOp = op
        mvMach = k
        mvAfter = after
        mvDur = dur
        mvKind = kind
        mvFrom = from
        mvTo = to
        mvBlockStart = blockStart
      } else if (mvOp < 0) {
        anyCount++
        if (est < anyEst || rng.int(anyCount) === 0) {
          anyEst = Math.min(anyEst, est)
          fbOp = op
          fbMach = k
          fbAfter = after
          fbDur = dur
          fbKind = kind
          fbFrom = from
          fbTo = to
          fbBlockStart = blockStart
        }
      }
    }

    // Critical blocks: maximal runs of the path joined by machine arcs.
    let bs = 0
    while (bs < len) {
      let be = bs
      while (be + 1 < len && mSucc[path[be]!] === path[be + 1]) be++
      const bl = be - bs + 1
      if (bl >= 2) {
        const k = mach[path[bs]!]!
        const before = mPred[path[bs]!]!,
          after = mSucc[path[be]!]!
        // Forward: op at i moves right after op at j (i < j), for i = first with any j, and any i with j = last.
        for (let i = bs; i < be; i++) {
          for (let j = i + 1; j <= be; j++) {
            if (i !== bs && j !== be) continue
            const u = path[i]!,
              v = path[j]!
            const js = jobSucc[u]!
            if (js === v) continue
            if (js >= 0 && !(q[js]! < p[v]! + q[v]!)) continue
            let tabu = false
            let w = 0
            for (let t = i + 1; t <= j; t++) {
              const l = path[t]!
              segBuf[w++] = l
              if (getOrderTabu(l, u) > iter) tabu = true
            }
            segBuf[w++] = u
            const est = estimateStretch(w, i === bs ? before : path[i - 1]!, j === be ? after : path[j + 1]!)
            consider(est, tabu, u, k, v, p[u]!, 0, i, j, bs)
          }
        }
        // Backward: op at j moves right before op at i (i < j), for j = last with any i, and any j with i = first.
        for (let j = be; j > bs; j--) {
          for (let i = j - 1; i >= bs; i--) {
            if (j !== be && i !== bs) continue
            if (j === i + 1) continue // adjacent swaps are already among the forward moves
            const u = path[i]!,
              v = path[j]!
            const jp = jobPred[v]!
            if (jp === u) continue
            if (jp >= 0 && !(r[jp]! < r[u]! + p[u]!)) continue
            let tabu = false
            let w = 0
            segBuf[w++] = v
            for (let t = i; t < j; t++) {
              const l = path[t]!
              segBuf[w++] = l
              if (getOrderTabu(v, l) > iter) tabu = true
            }
            const est = estimateStretch(w, i === bs ? before : path[i - 1]!, j === be ? after : path[j + 1]!)
            consider(est, tabu, v, k, i === bs ? before : path[i - 1]!, p[v]!, 1, i, j, bs)
          }
        }
      }
      bs = be + 1
    }

    // Reassignment of critical operations to another machine, at the best acyclic position there.
    for (let t = 0; t < len; t++) {
      const v = path[t]!
      const o0 = optStart[v]!,
        o1 = optStart[v + 1]!
      if (o1 - o0 < 2) continue
      const jp = jobPred[v]!,
        js = jobSucc[v]!
      const headIn = Math.max(rel[v]!, jp >= 0 ? r[jp]! + p[jp]! : 0)
      const tailOut = js >= 0 ? q[js]! + p[js]! : 0
      const rLimit = r[v]! + p[v]!,
        qLimit = q[v]! + p[v]!
      for (let o = o0; o < o1; o++) {
        const k = optMachine[o]!
        if (k === mach[v]) continue
        const d = optDur[o]!
        let sl = 0
        for (let x = mHead[k]!; x >= 0; x = mSucc[x]!) seqBuf[sl++] = x
        let bestPos = -2,
          bestPosEst = Infinity
        for (let i = 0; i <= sl; i++) {
          const a = i > 0 ? seqBuf[i - 1]! : -1
          if (a >= 0 && !(r[a]! < rLimit)) break
          const b = i < sl ? seqBuf[i]! : -1
          if (b >= 0 && !(q[b]! < qLimit)) continue
          const est = Math.max(headIn, a >= 0 ? r[a]! + p[a]! : 0) + d + Math.max(tailOut, b >= 0 ? q[b]! + p[b]! : 0)
          if (est < bestPosEst) {
            bestPosEst = est
            bestPos = a
          }
        }
        if (bestPos === -2) continue
        consider(bestPosEst, machTabu[v * m + k]! > iter, v, k, bestPos, d, 2, 0, 0, 0)
      }
    }

    if (mvOp < 0 && fbOp < 0) {
      // No move at all. A critical path of one job chain at its shortest durations proves optimality; otherwise shake.
      let chainOnly = true
      for (let t = 0; t + 1 < len; t++) if (mSucc[path[t]!] === path[t + 1] && jobSucc[path[t]!] !== path[t + 1]) chainOnly = false
      for (let t = 0; t < len && chainOnly; t++) {
        const v = path[t]!
        for (let o = optStart[v]!; o < optStart[v + 1]!; o++) if (optDur[o]! < p[v]!) chainOnly = false
      }
      if (chainOnly && cmax === bestCmax) break
      kick()
      continue
    }
    if (mvOp < 0) {
      mvOp = fbOp
      mvMach = fbMach
      mvAfter = fbAfter
      mvDur = fbDur
      mvKind = fbKind
      mvFrom = fbFrom
      mvTo = fbTo
      mvBlockStart = fbBlockStart
    }

    // Apply, remembering how to undo.
    const oldMach = mach[mvOp]!,
      oldAfter = mPred[mvOp]!,
      oldDur = p[mvOp]!
    // Arcs change into the moved operation, its old machine successor and its new one; out of it, its old machine predecessor
    // and its new one. Heads are redone from the first of the former, tails up to the last of the latter.
    const oldSucc = mSucc[mvOp]!
    const newSucc = mvAfter >= 0 ? mSucc[mvAfter]! : mHead[mvMach]!
    let from = pos[mvOp]!
    if (oldSucc >= 0 && pos[oldSucc]! < from) from = pos[oldSucc]!
    if (newSucc >= 0 && newSucc !== mvOp && pos[newSucc]! < from) from = pos[newSucc]!
    // A move along the machine usually leaves the order valid once the moved operation takes its new place in it (no job arc
    // is crossed): then the heads are re-timed in that order, in one pass; otherwise Kahn's rule re-orders the part after `from`.
    let kept = -1
    if (mvKind === 0 && mvAfter >= 0) {
      const to = pos[mvAfter]!,
        js = jobSucc[mvOp]!
      if (js < 0 || pos[js]! > to) kept = moveInOrder(pos[mvOp]!, to)
    } else if (mvKind === 1 && newSucc >= 0) {
      const to = pos[newSucc]!,
        jp = jobPred[mvOp]!
      if (jp < 0 || pos[jp]! < to) kept = moveInOrder(pos[mvOp]!, to)
    }
    unlink(mvOp)
    p[mvOp] = mvDur
    linkAfter(mvOp, mvMach, mvAfter)
    if (kept >= 0) retimeFrom(kept)
    else if (!computeHeadsFrom(from)) {
      unlink(mvOp)
      p[mvOp] = oldDur
      linkAfter(mvOp, oldMach, oldAfter)
      computeHeads()
      cmax = computeTails()
      if (mvKind === 2) machTabu[mvOp * m + mvMach] = iter + tenure()
      continue
    }
    let upTo = pos[mvOp]!
    if (oldAfter >= 0 && pos[oldAfter]! > upTo) upTo = pos[oldAfter]!
    if (mvAfter >= 0 && pos[mvAfter]! > upTo) upTo = pos[mvAfter]!
    cmax = computeTailsUpTo(upTo)
    if (settings.verifyIncremental) verifyHeadsAndTails()
    const ten = tenure()
    if (mvKind === 0) {
      const u = mvOp
      for (let t = mvFrom + 1; t <= mvTo; t++) setOrderTabu(u, path[t]!, iter + ten)
    } else if (mvKind === 1) {
      const v = mvOp
      for (let t = mvFrom; t < mvTo; t++) setOrderTabu(path[t]!, v, iter + ten)
    } else {
      machTabu[mvOp * m + oldMach] = iter + ten
    }
    void mvBlockStart

    if (cmax < bestCmax) {
      saveBest()
      lastImprove = iter
      settings.onImprove?.(bestCmax, iter)
    } else if (iter - lastImprove > maxStall) {
      kick()
    }
  }

  /**
   * Tests only: heads, tails and makespan by another method — relaxing every arc until nothing changes (Bellman–Ford on the
   * acyclic graph), in index order, with no topological order — must equal what the partial updates left.
   */
  function verifyHeadsAndTails(): void {
    const h = new Float64Array(n),
      t = new Float64Array(n)
    for (let changed = true; changed;) {
      changed = false
      for (let i = 0; i < n; i++) {
        const jp = jobPred[i]!,
          mp = mPred[i]!
        const v = Math.max(rel[i]!, jp >= 0 ? h[jp]! + p[jp]! : 0, mp >= 0 ? h[mp]! + p[mp]! : 0)
        if (v !== h[i]) {
          h[i] = v
          changed = true
        }
        const js = jobSucc[i]!,
          ms = mSucc[i]!
        const w = Math.max(0, js >= 0 ? t[js]! + p[js]! : 0, ms >= 0 ? t[ms]! + p[ms]! : 0)
        if (w !== t[i]) {
          t[i] = w
          changed = true
        }
      }
    }
    let c = 0
    for (let i = 0; i < n; i++) {
      if (h[i] !== r[i] || t[i] !== q[i]) throw new Error(`shop core: partial update differs at operation ${i} (iteration ${iter})`)
      c = Math.max(c, h[i]! + p[i]!)
    }
    if (c !== cmax) throw new Error(`shop core: partial makespan ${cmax} against ${c} (iteration ${iter})`)
  }

  /** Stagnation: go back to the best schedule and shake it with a few random critical swaps and machine changes. */
  function kick(): void {
    restoreBest()
    orderTabu?.fill(0)
    orderTabuMap?.clear()
    machTabu.fill(0)
    const kicks = 2 + rng.int(4)
    for (let s = 0; s < kicks; s++) {
      let e2 = -1,
        c2 = 0
      for (let i = 0; i < n; i++)
        if (q[i] === 0 && r[i]! + p[i]! === cmax) {
          c2++
          if (rng.int(c2) === 0) e2 = i
        }
      const cand: number[] = []
      for (let x = e2; x >= 0;) {
        const mp = mPred[x]!,
          jp = jobPred[x]!
        if (mp >= 0 && r[mp]! + p[mp]! === r[x]!) {
          if (jobSucc[mp] !== x) cand.push(x)
          x = mp
        } else if (jp >= 0 && r[jp]! + p[jp]! === r[x]!) x = jp
        else x = -1
      }
      if (cand.length === 0) break
      const v = cand[rng.int(cand.length)]!
      const u = mPred[v]!
      // Swap u and v: move u right after v.
      const om = mach[u]!,
        oa = mPred[u]!
      unlink(u)
      linkAfter(u, om, v)
      if (!computeHeads()) {
        unlink(u)
        linkAfter(u, om, oa)
        computeHeads()
      }
      cmax = computeTails()
    }
    // A random operation with alternatives moves to another machine (kept only if the graph stays acyclic).
    for (let tries = 0; tries < 3; tries++) {
      const v = rng.int(n)
      const o0 = optStart[v]!,
        o1 = optStart[v + 1]!
      if (o1 - o0 < 2) continue
      const o = o0 + rng.int(o1 - o0)
      const k = optMachine[o]!
      if (k === mach[v]) continue
      const om = mach[v]!,
        oa = mPred[v]!,
        od = p[v]!
      let after = -1
      for (let x = mHead[k]!; x >= 0; x = mSucc[x]!) {
        if (r[x]! >= r[v]!) break
        after = x
      }
      unlink(v)
      p[v] = optDur[o]!
      linkAfter(v, k, after)
      if (!computeHeads()) {
        unlink(v)
        p[v] = od
        linkAfter(v, om, oa)
        computeHeads()
      }
      cmax = computeTails()
      break
    }
    lastImprove = iter
    if (cmax < bestCmax) {
      saveBest()
      settings.onImprove?.(bestCmax, iter)
    }
  }

  restoreBest()
  const start = new Int32Array(n)
  start.set(r)
  return { machine: new Int32Array(mach), duration: new Int32Array(p), start, makespan: cmax, iterations: iter, firstMs }
}
