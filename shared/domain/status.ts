// Lifecycle states of orders, job bags and operations, and the moves allowed between them.
export const ORDER_STATUSES = ['quoted', 'open', 'in-work', 'ready', 'collected', 'cancelled'] as const
export type OrderStatus = (typeof ORDER_STATUSES)[number]

export const JOB_BAG_STATUSES = ['waiting', 'in-work', 'on-hold', 'complete', 'cancelled'] as const
export type JobBagStatus = (typeof JOB_BAG_STATUSES)[number]

export const OPERATION_STATUSES = ['pending', 'ready', 'claimed', 'running', 'paused', 'done', 'skipped'] as const
export type OperationStatus = (typeof OPERATION_STATUSES)[number]

export const PLAN_STATUSES = ['draft', 'published', 'superseded', 'discarded'] as const
export type PlanStatus = (typeof PLAN_STATUSES)[number]

export const HAZARDS = ['acid', 'pickle', 'torch', 'lathe', 'investment'] as const
export type Hazard = (typeof HAZARDS)[number]

/** Usual cautions per hazard (see TRADE references); always deferring to local codes. */
export const HAZARD_CAUTIONS: Record<Hazard, string> = {
  acid: 'Acid or etchant: add acid to water, never the reverse. Wear gloves, goggles and an apron; keep the eyewash near; ventilate (nitric etching gives off nitrogen dioxide).',
  pickle: 'Pickle: wear eye protection when putting work in and taking it out; use copper or plastic tongs; spent pickle is hazardous waste.',
  torch: 'Torch and gas: check flashback arrestors, leak-test hoses, open cylinder valves slowly; keep the bench clear of flammables.',
  lathe: 'Polishing lathe: no gloves, rings or loose clothing; tie long hair back; hold work below the centre of the mop; extraction on.',
  investment: 'Casting investment (silica): mix in an enclosure or with extraction, wear a suitable respirator, clean up wet — never sweep dry.',
}
export const HAZARD_FOOTER = 'Follow local codes and the workshop’s safety rules.'

/** Allowed moves of an operation. Outside work (casting, hallmarking) goes ready → running (sent out) → done (back), without a claim. */
export const OPERATION_TRANSITIONS: Record<OperationStatus, readonly OperationStatus[]> = {
  pending: ['ready', 'skipped'],
  ready: ['claimed', 'running', 'pending', 'skipped'],
  claimed: ['running', 'ready', 'skipped'],
  running: ['paused', 'done'],
  paused: ['running', 'done'],
  done: [],
  skipped: ['pending', 'ready'],
}

/** Allowed moves of a job bag; waiting / in-work / complete follow its operations, on-hold and cancelled are set by a manager. */
export const JOB_BAG_TRANSITIONS: Record<JobBagStatus, readonly JobBagStatus[]> = {
  waiting: ['in-work', 'on-hold', 'complete', 'cancelled'],
  'in-work': ['waiting', 'on-hold', 'complete', 'cancelled'],
  'on-hold': ['waiting', 'in-work', 'complete', 'cancelled'],
  complete: ['in-work'],
  cancelled: [],
}

export const canMoveOperation = (from: string, to: OperationStatus): boolean => (OPERATION_TRANSITIONS[from as OperationStatus] ?? []).includes(to)
export const canMoveJobBag = (from: string, to: JobBagStatus): boolean => from === to || (JOB_BAG_TRANSITIONS[from as JobBagStatus] ?? []).includes(to)

/** Operations that count as finished for their successors. */
export const FINISHED_OPERATION: readonly OperationStatus[] = ['done', 'skipped']
/** Operations someone is holding (claimed, running or paused). */
export const HELD_OPERATION: readonly OperationStatus[] = ['claimed', 'running', 'paused']

/**
 * The job bag's status as its operations stand: all finished → complete; anything held or done → in-work; else waiting.
 * A manager's on-hold or cancelled stays until the manager lifts it (complete still wins over on-hold).
 */
export function deriveJobBagStatus(current: string, operationStatuses: readonly string[]): JobBagStatus {
  if (current === 'cancelled') return 'cancelled'
  const all = operationStatuses.length > 0 && operationStatuses.every((s) => FINISHED_OPERATION.includes(s as OperationStatus))
  if (all) return 'complete'
  if (current === 'on-hold') return 'on-hold'
  const started = operationStatuses.some((s) => s === 'done' || HELD_OPERATION.includes(s as OperationStatus))
  return started ? 'in-work' : 'waiting'
}

/** The cautions to show and print for a list of hazards (unknown ones are ignored), footer last. */
export function cautionsFor(hazards: readonly string[]): string[] {
  const list = hazards.filter((h): h is Hazard => (HAZARDS as readonly string[]).includes(h)).map((h) => HAZARD_CAUTIONS[h])
  return list.length ? [...list, HAZARD_FOOTER] : []
}
