// Why each step starts when it does, recomputed from a timed plan (the live plan after moves by hand, or any draft).
import type { Interval, Operation, Problem, StartReason } from './model.ts'
import { firstEndingAfter, formatMinute, intersect, weekdayOf } from './calendar.ts'

/** One step of a timed plan as the board holds it. */
export interface TimedStep {
  operationId: string
  benchId: string | null
  personId: string | null
  start: number
  end: number
}

/**
 * What the workshop's calendar is made of, in the problem's minutes, so a reason can name it: the opening hours (the week
 * pattern without closures), named closures, leave and bench downtime. Without `open`, the workshop counts as open whenever
 * some bench or person works; without the lists, time off is named by whose it is only.
 */
export interface ExplainCalendar {
  open?: Interval[]
  closures?: { start: number; end: number; name: string }[]
  leave?: { personId: string; start: number; end: number; reason?: string | null }[]
  downtime?: { benchId: string; start: number; end: number; reason?: string | null }[]
}

const ALWAYS: Interval[] = [{ start: -1e15, end: 1e15 }]

/** Working minutes of `windows` inside [a, b). */
function workIn(windows: Interval[], a: number, b: number): number {
  let t = 0
  for (const w of windows) {
    if (w.end <= a) continue
    if (w.start >= b) break
    t += Math.min(b, w.end) - Math.max(a, w.start)
  }
  return t
}

/** Index of the interval of a sorted, disjoint list that holds minute m, or -1. */
function holding(list: Interval[], m: number): number {
  const i = firstEndingAfter(list, m)
  return i < list.length && list[i]!.start <= m ? i : -1
}

/** The last start or end of a sorted, disjoint list before t (-Infinity when none). */
function edgeBefore(list: Interval[], t: number): number {
  const i = firstEndingAfter(list, t - 1)
  if (i < list.length && list[i]!.start < t) return list[i]!.start
  return i > 0 ? list[i - 1]!.end : -Infinity
}

/** Sorted, disjoint union of interval lists. */
function union(lists: Interval[][]): Interval[] {
  const all = lists.flat().sort((a, b) => a.start - b.start)
  const out: Interval[] = []
  for (const x of all) {
    const last = out[out.length - 1]
    if (last && x.start <= last.end) last.end = Math.max(last.end, x.end)
    else out.push({ start: x.start, end: x.end })
  }
  return out
}

/** The bars of other steps on a bench and with a person, as a sorted, disjoint list of busy time. */
function otherBars(benchList: TimedStep[] | undefined, personList: TimedStep[] | undefined, self: string): Interval[] {
  const mine = (list: TimedStep[] | undefined) => (list ?? []).filter((x) => x.operationId !== self && x.end > x.start)
  return union([mine(benchList), mine(personList)])
}

/**
 * The earliest moment, not before `ready` and not after `latest`, from which `minutes` of working time in `windows` can be
 * worked without touching a busy stretch. It is `ready` or the end of a busy stretch, moved on to the next working minute.
 */
function earliestFit(windows: Interval[], busy: Interval[], ready: number, minutes: number, latest: number): number {
  const candidates = [ready, ...busy.map((b) => b.end).filter((e) => e > ready && e < latest)].sort((a, b) => a - b)
  for (const c of candidates) {
    const i = firstEndingAfter(windows, c)
    if (i >= windows.length) break
    const e = Math.max(c, windows[i]!.start)
    if (e >= latest) break
    let left = minutes,
      f = e
    for (let k = i; k < windows.length && left > 0; k++) {
      const a = Math.max(e, windows[k]!.start)
      const take = Math.min(left, windows[k]!.end - a)
      left -= take
      f = a + take
    }
    if (left > 0) continue
    if (!busy.some((b) => b.start < f && b.end > e)) return e
  }
  return latest
}

/** "Ada (busy with Saw outline for MG26-0071-1 Pendant)": the bench or person and the step (and its job bag) that holds it. */
export function busyWith(resource: string, step: Pick<Operation, 'name'>, job: string | undefined): string {
  return `${resource} (busy with ${step.name}${job ? ` for ${job}` : ''})`
}

/** "to come back" for outside work, else "to finish": what a successor waits for. */
export const toBeDone = (op: Pick<Operation, 'outsideWorkingDays'>): string => ((op.outsideWorkingDays ?? 0) > 0 ? 'to come back' : 'to finish')

/** The day of minute t as `at` words it, without the time ("Fri 11 Dec"). */
export const dayWords = (t: number, at: (t: number) => string): string => at(Math.floor(t / 1440) * 1440).replace(/ 00:00/, '')

/**
 * When outside work goes out, as `at` words it: the server counts the workshop's days whole for outside work (from 00:00), so
 * work that waited for the workshop to open leaves at a day's first minute — it goes out when the workshop opens that day,
 * never at midnight: "opening time on Mon 7 Dec". Any other minute is the moment it is ready to go ("Mon 7 Dec 14:35").
 */
export function outsideStartWords(t: number, at: (t: number) => string): string {
  return t % 1440 === 0 ? `opening time on ${dayWords(t, at)}` : at(t)
}

/** "out for 5 working days, back by the end of Fri 11 Dec": outside work's length in the workshop's working days. */
export function outsideLength(days: number, end: number, at: (t: number) => string): string {
  return `out for ${days} working day${days === 1 ? '' : 's'}, back by the end of ${dayWords(end - 1, at)}`
}

/** How one stretch of time before a step's start held it back. */
type Stretch = {
  from: number
  to: number
  /** shut: outside the workshop's hours (nights, weekends, breaks); closure: a named closure; off: the bench or person not working. */
  kind: 'shut' | 'closure' | 'off'
  closure?: number
  benchOff?: boolean
  personOff?: boolean
  downtime?: number
  leave?: number
}
const sameCause = (a: Stretch, b: Stretch): boolean =>
  a.kind === b.kind && a.closure === b.closure && a.benchOff === b.benchOff && a.personOff === b.personOff && a.downtime === b.downtime && a.leave === b.leave

/**
 * For every step: what held it back last before its start. Walking back from the start: the moment it could start (its
 * predecessor with its wait, its job's release, or now) when only the workshop's ordinary closed hours (nights, weekends,
 * breaks) lie between; else the bench or person busy with another step, a closure, the bench out of use, or the person off
 * work or on leave — whichever comes last, with what held it before. Pins keep their place; a step with free joint working
 * time right before it was placed there by hand. Steps planned before now (a plan older than the clock) are explained as of
 * the plan's first start.
 */
export function explainStarts(problem: Problem, steps: TimedStep[], calendar: ExplainCalendar = {}): Map<string, StartReason> {
  const ops = new Map(problem.operations.map((o) => [o.id, o]))
  const jobs = new Map(problem.jobs.map((j) => [j.id, j]))
  const bench = new Map(problem.benches.map((b) => [b.id, b]))
  const person = new Map(problem.people.map((p) => [p.id, p]))
  const byId = new Map(steps.map((s) => [s.operationId, s]))
  const weekday = weekdayOf(problem.origin)
  const at = (t: number): string => formatMinute(t, weekday, problem.origin)
  const dayOf = (t: number): string => dayWords(t, at)
  const days = (a: number, b: number): string => (dayOf(a) === dayOf(b - 1) ? `on ${dayOf(a)}` : `from ${dayOf(a)} to ${dayOf(b - 1)}`)
  /** Whether [a, b) takes in a Saturday or a Sunday. */
  const hasWeekend = (a: number, b: number): boolean => {
    for (let day = Math.floor(a / 1440); day <= Math.floor((b - 1) / 1440); day++) {
      const d = (((weekday + day) % 7) + 7) % 7
      if (d === 0 || d === 6) return true
    }
    return false
  }
  const jobName = (opId: string): string | undefined => jobs.get(ops.get(opId)?.jobId ?? '')?.name
  const benchName = (id: string): string => bench.get(id)?.name ?? id
  const personName = (id: string): string => person.get(id)?.name ?? id

  // The workshop's hours: given, or any time some bench or person works.
  const open = calendar.open ?? union([...problem.benches.map((b) => b.available), ...problem.people.map((p) => p.available)])
  const closures = [...(calendar.closures ?? [])].sort((a, b) => a.start - b.start)
  const closed = union([closures])
  const downtime = calendar.downtime ?? []
  const leave = calendar.leave ?? []

  /** Other steps on a bench or with a person, by end (those ending exactly at a moment are what held a step then). */
  const byEnd = (key: (s: TimedStep) => string | null): Map<string, TimedStep[]> => {
    const m = new Map<string, TimedStep[]>()
    for (const s of steps) {
      const k = key(s)
      if (k) (m.get(k) ?? m.set(k, []).get(k)!).push(s)
    }
    for (const list of m.values()) list.sort((a, b) => a.end - b.end)
    return m
  }
  const onBench = byEnd((s) => s.benchId),
    withPerson = byEnd((s) => s.personId)
  /** The step of `list` (not `self`) that ends exactly at t and ran before it. */
  const endingAt = (list: TimedStep[] | undefined, self: string, t: number): TimedStep | null => {
    if (!list) return null
    let lo = 0,
      hi = list.length
    while (lo < hi) {
      const mid = (lo + hi) >> 1
      if (list[mid]!.end < t) lo = mid + 1
      else hi = mid
    }
    for (let i = lo; i < list.length && list[i]!.end === t; i++) if (list[i]!.operationId !== self && list[i]!.start < t) return list[i]!
    return null
  }
  /** The latest end before t of a step of `list`. */
  const endBefore = (list: TimedStep[] | undefined, t: number): number => {
    if (!list) return -Infinity
    let lo = 0,
      hi = list.length
    while (lo < hi) {
      const mid = (lo + hi) >> 1
      if (list[mid]!.end < t) lo = mid + 1
      else hi = mid
    }
    return lo > 0 ? list[lo - 1]!.end : -Infinity
  }
  const windowCache = new Map<string, Interval[]>()
  const jointOf = (b: string | null, p: string | null): Interval[] => {
    const key = `${b}/${p}`
    let w = windowCache.get(key)
    if (!w) {
      const bw = b ? bench.get(b)?.available : undefined
      const pw = p ? person.get(p)?.available : undefined
      w = bw && pw ? intersect(bw, pw) : (bw ?? pw ?? ALWAYS)
      windowCache.set(key, w)
    }
    return w
  }
  // A plan older than the clock: its steps not yet begun are explained as of its first start (when it was made, or later).
  let planFrom = Infinity
  for (const s of steps) {
    const op = ops.get(s.operationId)
    if (op && !op.fixed && !op.done && s.start < planFrom) planFrom = s.start
  }

  const out = new Map<string, StartReason>()
  for (const s of steps) {
    const op = ops.get(s.operationId)
    if (!op) continue
    const outsideDays = op.outsideWorkingDays ?? 0
    const outside = outsideDays > 0
    const away = outside ? `; ${outsideLength(outsideDays, s.end, at)}` : ''
    /** The step's start: outside work that waited for the workshop to open goes out at opening time, never at midnight. */
    const startAt = outside ? outsideStartWords(s.start, at) : at(s.start)
    if (op.fixed) {
      out.set(s.operationId, { kind: 'fixed', detail: `${outside ? 'pinned to go out' : 'pinned'} at ${startAt}${away}` })
      continue
    }
    const now = s.start < problem.now ? Math.min(problem.now, planFrom) : problem.now
    // What allows the start: now, the job's release, the predecessor ready last (with its wait).
    let ready = now,
      readyBy: 'now' | 'release' | 'predecessor' = 'now',
      readyPred: string | null = null,
      readyWait = 0
    const job = jobs.get(op.jobId)
    if (job && job.release > problem.now && job.release > ready) {
      ready = job.release
      readyBy = 'release'
    }
    let lateBy: { pred: string; at: number } | null = null,
      lastPred: { pred: string; at: number } | null = null
    for (const pid of op.predecessors) {
      const pred = ops.get(pid)
      if (!pred) continue
      const end = pred.done ? pred.finishedAt : byId.get(pid)?.end
      if (end === undefined) continue
      const r = end + (pred.waitAfter ?? 0)
      if (r > s.start) {
        if (!lateBy || r > lateBy.at) lateBy = { pred: pid, at: r }
        continue
      }
      if (!lastPred || r > lastPred.at) lastPred = { pred: pid, at: r }
      if (r > ready || (r === ready && readyBy !== 'predecessor')) {
        ready = r
        readyBy = 'predecessor'
        readyPred = pid
        readyWait = pred.waitAfter ?? 0
      }
    }
    if (lateBy) {
      out.set(s.operationId, {
        kind: 'by-hand',
        detail: `placed at ${startAt}, before ${ops.get(lateBy.pred)!.name} is done (${at(lateBy.at)})`,
        blockerId: lateBy.pred,
      })
      continue
    }

    // Walk back from the start through what held the step at each moment, until the moment it could start.
    const benchId = outside ? null : s.benchId
    const personId = outside ? null : s.personId
    const benchList = benchId ? onBench.get(benchId) : undefined
    const personList = personId ? withPerson.get(personId) : undefined
    const benchAvail = benchId ? bench.get(benchId)?.available : undefined
    const personAvail = personId ? person.get(personId)?.available : undefined
    const hours = outside ? problem.workshopDays : open
    const stretches: Stretch[] = []
    let t = s.start
    let stop: { by: 'ready' } | { by: 'bench' | 'person'; step: TimedStep } | { by: 'free' } = { by: 'ready' }
    for (let guard = 0; guard < 2000; guard++) {
      if (t <= ready) break
      const xb = endingAt(benchList, s.operationId, t)
      if (xb) {
        stop = { by: 'bench', step: xb }
        break
      }
      const xp = endingAt(personList, s.operationId, t)
      if (xp) {
        stop = { by: 'person', step: xp }
        break
      }
      const m = t - 1
      const ci = holding(closed, m)
      let here: Stretch
      if (ci >= 0) here = { from: 0, to: t, kind: 'closure', closure: closures.findIndex((c) => c.start <= m && m < c.end) }
      else if (holding(hours, m) < 0) here = { from: 0, to: t, kind: 'shut' }
      else {
        const benchOff = !!benchAvail && holding(benchAvail, m) < 0
        const personOff = !!personAvail && holding(personAvail, m) < 0
        if (!benchOff && !personOff) {
          stop = { by: 'free' }
          break
        }
        here = { from: 0, to: t, kind: 'off', benchOff, personOff }
        if (benchOff) here.downtime = downtime.findIndex((d) => d.benchId === benchId && d.start <= m && m < d.end)
        if (personOff) here.leave = leave.findIndex((l) => l.personId === personId && l.start <= m && m < l.end)
      }
      let from = Math.max(ready, edgeBefore(closed, t), edgeBefore(hours, t), endBefore(benchList, t), endBefore(personList, t))
      if (benchAvail) from = Math.max(from, edgeBefore(benchAvail, t))
      if (personAvail) from = Math.max(from, edgeBefore(personAvail, t))
      here.from = from
      const last = stretches[stretches.length - 1]
      if (last && last.from === t && sameCause(last, here)) last.from = from
      else stretches.push(here)
      t = from
    }

    if (stop.by === 'free') {
      const joint = outside ? problem.workshopDays : jointOf(s.benchId, s.personId)
      if (outside) {
        out.set(s.operationId, { kind: 'by-hand', detail: `placed at ${startAt}; it could go out from ${at(ready)}${away}` })
        continue
      }
      // The earliest moment from which its bench and person are both at work and free of other bars for as much working time
      // as the step takes where it stands (its earlier steps done, and not before now).
      const earliest = earliestFit(joint, otherBars(benchList, personList, s.operationId), ready, workIn(joint, s.start, s.end), s.start)
      const free = workIn(joint, earliest, s.start)
      const length = free >= 60 ? `${Math.round(free / 6) / 10} h` : `${free} min`
      const from = earliest <= now ? 'now' : at(earliest)
      out.set(s.operationId, {
        kind: 'by-hand',
        detail: `placed at ${startAt}; it could start ${length} of working time earlier, from ${from} (its bench and person free for the whole step from then, its earlier steps done)`,
      })
      continue
    }

    const held = stretches.findIndex((x) => x.kind !== 'shut')
    /** "ready since Fri 18 Dec 15:15, when Polish finished"; outside work back at midnight is back by the end of its last day. */
    const readySince = (predId: string, r: number): string => {
      const pred = ops.get(predId)!
      const wait = pred.waitAfter ?? 0
      const back = (pred.outsideWorkingDays ?? 0) > 0
      const when = back && wait === 0 && r % 1440 === 0 ? `the end of ${dayOf(r - 1)}` : at(r)
      return `ready since ${when}, ${wait > 0 ? `after ${pred.name} and its ${wait} min wait` : `when ${pred.name} ${back ? 'came back' : 'finished'}`}`
    }
    const readyNote = (): string => {
      if (readyBy === 'predecessor') return readySince(readyPred!, ready)
      if (readyBy === 'release') return `job ${job!.name} released at ${at(ready)}`
      return ''
    }
    const busyNote = (): string => {
      if (stop.by !== 'bench' && stop.by !== 'person') return ''
      const res = stop.by === 'bench' ? benchName(benchId!) : personName(personId!)
      return busyWith(res, ops.get(stop.step.operationId) ?? { name: 'other work' }, jobName(stop.step.operationId))
    }
    // The predecessor that had it ready last, when that was before what allowed the start.
    const sinceNote = (): string => (lastPred && lastPred.at < ready ? `; ${readySince(lastPred.pred, lastPred.at)}` : '')

    if (held < 0) {
      // Nothing but the workshop's closed hours between what allowed the start and the start.
      if (stop.by === 'bench' || stop.by === 'person') {
        out.set(s.operationId, { kind: stop.by, blockerId: stop.step.operationId, detail: `waiting for ${busyNote()} until ${startAt}${away}` })
      } else if (readyBy === 'predecessor') {
        const pred = ops.get(readyPred!)!
        out.set(s.operationId, {
          kind: 'predecessor',
          blockerId: readyPred!,
          detail: `waiting for ${pred.name} ${toBeDone(pred)}${readyWait > 0 ? ` and ${readyWait} min wait` : ''} until ${startAt}${away}`,
        })
      } else if (readyBy === 'release') {
        out.set(s.operationId, { kind: 'release', detail: `job ${job!.name} is released at ${at(job!.release)}${away}` })
      } else {
        out.set(s.operationId, { kind: 'now', detail: `${outside ? 'goes out' : 'starts'} as soon as planning allows (${startAt})${sinceNote()}${away}` })
      }
      continue
    }

    // Held last by a closure, the bench out of use, or the person off work or on leave.
    const x = stretches[held]!
    const whatHeld = (y: Stretch, sentence: boolean): string => {
      if (y.kind === 'closure') {
        const c = closures[y.closure!]
        return c ? `the workshop ${sentence ? 'is ' : ''}closed ${days(c.start, c.end)} (${c.name})` : `the workshop ${sentence ? 'is ' : ''}closed`
      }
      if (y.kind === 'shut') return 'the weekend'
      const parts: string[] = []
      if (y.benchOff) {
        const d = y.downtime !== undefined && y.downtime >= 0 ? downtime[y.downtime] : undefined
        const name = benchName(benchId!)
        if (d)
          parts.push(
            sentence
              ? `${name} is out of use until ${at(Math.min(d.end, s.start))}${d.reason ? ` (${d.reason})` : ''}`
              : `${name} out of use${d.reason ? ` (${d.reason})` : ''}`,
          )
        else parts.push(sentence ? `${name} is not available until ${at(y.to)}` : `${name} not available`)
      }
      if (y.personOff) {
        const l = y.leave !== undefined && y.leave >= 0 ? leave[y.leave] : undefined
        const name = personName(personId!)
        if (l) parts.push(`${name} ${sentence ? 'is ' : ''}on leave${sentence ? ` ${days(l.start, l.end)}` : ''}${l.reason ? ` (${l.reason})` : ''}`)
        else parts.push(sentence ? `${name} is off work until ${at(y.to)}` : `${name} off work`)
      }
      return parts.join(' and ')
    }
    let detail = whatHeld(x, true)
    if (x.to < s.start) detail += `, then outside workshop hours until ${startAt}`
    // What held it before, in the order it came: other causes, and whole weekends closed.
    const before: string[] = []
    const named = new Set([whatHeld(x, false)])
    for (let i = stretches.length - 1; i > held; i--) {
      const y = stretches[i]!
      if (y.kind === 'shut' && !(y.to - y.from >= 1440 && hasWeekend(y.from, y.to))) continue
      const words = whatHeld(y, false)
      if (!named.has(words)) before.push(words)
      named.add(words)
    }
    const busy = busyNote()
    if (busy) before.unshift(busy)
    if (before.length) detail += `; before that ${before.join(', then ')}`
    const note = readyNote()
    if (note && stop.by === 'ready') detail += `; ${note}`
    out.set(s.operationId, { kind: 'working-time', detail: detail + away })
  }
  return out
}
