// The scheduling rule book: every planning rule named once, with one message each. The engine's plan validator, a manual move
// on the board, a claim at the bench and the promise check all report what they find through these builders.

/** Hard rules make a plan or an action impossible; soft ones are findings worth showing (a late piece). */
export const RULES = {
  'every operation planned once': 'hard',
  'done work is not planned again': 'hard',
  'bench capability': 'hard',
  skill: 'hard',
  'allowed bench and person': 'hard',
  'work adds up': 'hard',
  'within bench working time': 'hard',
  'within personal working time': 'hard',
  'work resumes only at next working time': 'hard',
  'work is interrupted only by the end of working time': 'hard',
  'bench double booking': 'hard',
  'person double booking': 'hard',
  'routing order': 'hard',
  'not before release': 'hard',
  'not before now': 'hard',
  'pinned work stays put': 'hard',
  'outside work': 'hard',
  'within the horizon': 'hard',
  'job summary matches': 'hard',
  'score matches the plan': 'hard',
  'due date': 'soft',
} as const satisfies Record<string, 'hard' | 'soft'>

export type RuleName = keyof typeof RULES
export type Severity = (typeof RULES)[RuleName]

export interface RuleViolation {
  rule: RuleName
  severity: Severity
  operationId?: string
  jobId?: string
  message: string
  details?: Record<string, unknown>
}

/** The step concerned, as named to people: its routing step name and (when known) its job bag. */
export interface StepRef {
  operationId?: string | number
  jobId?: string | number
  name: string
  bag?: string
}

/**
 * How a point in time is written: the engine writes minutes, the server the workshop's local time. A writer that also says
 * which day a minute falls on (`dayOf`) and writes a time of day alone (`timeOf`) lets a stretch within one day name it once.
 */
export type When = ((minute: number) => string) & { dayOf?: (minute: number) => string; timeOf?: (minute: number) => string }
export const minutesAsIs: When = (m) => String(m)

/** A stretch of time: "Mon 7 Dec 10:38–11:18" within one day, "Mon 7 Dec 16:00–Tue 8 Dec 09:00" across days. */
export function span(when: When, from: number, to: number): string {
  return when.dayOf && when.timeOf && when.dayOf(from) === when.dayOf(to) ? `${when(from)}–${when.timeOf(to)}` : `${when(from)}–${when(to)}`
}

const q = (name: string) => `“${name}”`
const step = (s: StepRef) => (s.bag ? `${q(s.name)} of ${s.bag}` : q(s.name))

export function violation(rule: RuleName, about: StepRef | null, message: string, details?: Record<string, unknown>): RuleViolation {
  const v: RuleViolation = { rule, severity: RULES[rule], message }
  if (about?.operationId !== undefined) v.operationId = String(about.operationId)
  if (about?.jobId !== undefined) v.jobId = String(about.jobId)
  if (details) v.details = details
  return v
}

export const isHard = (v: RuleViolation) => v.severity === 'hard'

/** One line per violation, for a banner or a refusal. */
export const describe = (list: readonly (RuleViolation | string)[], max = 3) =>
  list
    .slice(0, max)
    .map((v) => (typeof v === 'string' ? v : v.message))
    .join('; ')

// ---- the rules, as facts in and a violation (or nothing) out ----

/** The bench must be equipped for the step's kind of work. */
export function benchCapability(s: StepRef, o: { benchName: string; kindName: string; capable: boolean }): RuleViolation | null {
  if (o.capable) return null
  return violation('bench capability', s, `${o.benchName} is not equipped for ${o.kindName.toLowerCase()} (${step(s)}).`, {
    bench: o.benchName,
    kind: o.kindName,
  })
}

/** The person must hold the step's skill at its required level (level null = not recorded; undefined = not known here). */
export function skill(
  s: StepRef,
  o: { personName: string; kindName: string; level: number | null | undefined; required: number | null },
): RuleViolation | null {
  if (o.level != null && o.required !== null && o.level >= o.required) return null
  if (o.level === undefined || o.required === null) return violation('skill', s, `${o.personName} is not skilled for ${step(s)} (${o.kindName.toLowerCase()}).`)
  const has = o.level === null ? 'none is recorded for them' : `their level is ${o.level}`
  return violation('skill', s, `${o.personName} is not skilled for ${step(s)}: it needs ${o.kindName.toLowerCase()} at level ${o.required}; ${has}.`, {
    requiredLevel: o.required,
    level: o.level ?? 0,
  })
}

/** The bench and person are one of the step's options (used when neither capability nor skill explains the mismatch). */
export function allowedPair(s: StepRef, o: { bench: string | null; person: string | null; why: string }): RuleViolation {
  return violation('allowed bench and person', s, `${step(s)} is on bench ${o.bench ?? '-'} with ${o.person ?? 'nobody'}: ${o.why}.`)
}

/** A step starts only after each predecessor ends (planned or finished) and its wait-after has passed. */
export function routingOrder(
  s: StepRef,
  o: { start: number; predecessor: string; readyAt: number; waitAfter: number; finished?: boolean; when?: When },
): RuleViolation | null {
  if (o.start >= o.readyAt) return null
  const when = o.when ?? minutesAsIs
  const wait = o.waitAfter > 0 ? ` and its ${o.waitAfter} min wait` : ''
  return violation('routing order', s, `${step(s)} must wait for ${q(o.predecessor)}${o.finished ? ' (finished)' : ''}${wait}, ready ${when(o.readyAt)}.`, {
    predecessor: o.predecessor,
    readyAt: o.readyAt,
    start: o.start,
  })
}

/** A step must end (with its wait) before a successor that is already planned starts. */
export function beforeSuccessor(
  s: StepRef,
  o: { end: number; waitAfter: number; successor: string; successorStart: number; when?: When },
): RuleViolation | null {
  if (o.end + o.waitAfter <= o.successorStart) return null
  const when = o.when ?? minutesAsIs
  return violation('routing order', s, `${step(s)} would end after ${q(o.successor)} is planned to start (${when(o.successorStart)}); move that first.`, {
    successor: o.successor,
  })
}

/** At the bench: a step is taken up only when its predecessors are finished and their waits are over. */
export function predecessorsFinished(
  s: StepRef,
  o: { open: string[]; waitMinutesLeft?: number; waitingOn?: string; waitAfter?: number },
): RuleViolation | null {
  if (o.open.length)
    return violation('routing order', s, `${step(s)} is not ready: ${o.open.map(q).join(', ')} must be finished first.`, { waitingFor: o.open })
  if (o.waitMinutesLeft && o.waitMinutesLeft > 0)
    return violation(
      'routing order',
      s,
      `${step(s)} can start in ${o.waitMinutesLeft} min: ${q(o.waitingOn ?? 'an earlier step')} has a ${o.waitAfter} min wait after it.`,
      { waitMinutesLeft: o.waitMinutesLeft },
    )
  return null
}

/** One step at a time per bench and per person. */
export function doubleBooking(
  s: StepRef,
  o: { resource: 'bench' | 'person'; name: string; other: StepRef; from: number; to: number; when?: When },
): RuleViolation {
  const when = o.when ?? minutesAsIs
  return violation(
    o.resource === 'bench' ? 'bench double booking' : 'person double booking',
    s,
    `${o.name} is booked for ${step(o.other)} ${span(when, o.from, o.to)}, the same time as ${step(s)}.`,
    { with: o.other.operationId !== undefined ? String(o.other.operationId) : undefined, from: o.from, to: o.to },
  )
}

/** Work happens inside the bench's and the person's working time; `why` names what takes the time (a closure, leave, downtime). */
export function workingTime(s: StepRef, o: { resource: 'bench' | 'person'; name: string; from: number; to: number; when?: When; why?: string }): RuleViolation {
  const when = o.when ?? minutesAsIs
  const why = o.why ? ` (${o.why})` : ''
  const details = o.why ? { from: o.from, to: o.to, why: o.why } : undefined
  return o.resource === 'bench'
    ? violation(
        'within bench working time',
        s,
        `${step(s)} works on ${o.name} during ${span(when, o.from, o.to)}, when the bench is not available${why}.`,
        details,
      )
    : violation('within personal working time', s, `${step(s)} needs ${o.name} during ${span(when, o.from, o.to)}, outside their working time${why}.`, details)
}

/** Nothing new is planned in the past. */
export function notBeforeNow(s: StepRef, o: { start: number; now: number; when?: When }): RuleViolation | null {
  if (o.start >= o.now) return null
  const when = o.when ?? minutesAsIs
  return violation('not before now', s, `${step(s)} cannot be planned in the past (${when(o.start)}, now is ${when(o.now)}).`)
}

/** Outside work is away for its workshop days and needs no bench or person. */
export function outsideWork(s: StepRef, o: { why: string }): RuleViolation {
  return violation('outside work', s, `${step(s)} is outside work: ${o.why}.`)
}

/** A piece planned to finish after its due date (a finding, not a refusal). */
export function dueDate(job: { jobId: string | number; name: string }, o: { completion: number; due: number; when?: When }): RuleViolation | null {
  if (o.completion <= o.due) return null
  const when = o.when ?? minutesAsIs
  return violation('due date', { jobId: job.jobId, name: job.name }, `${job.name} finishes ${when(o.completion)}, after its due date ${when(o.due)}.`, {
    lateBy: o.completion - o.due,
  })
}
