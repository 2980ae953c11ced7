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
