// Typed Socket.IO events (domain:pastTense), sent to the room of one workshop. Payloads stay small: ids and versions.
// A type alias (not an interface), so a payload also reads as a plain Record<string, unknown>.
import type { RunProgress } from './schemas/plan'

/** `origin`: the browser tab whose request caused the change (its x-client-id), absent for jobs and scripts. */
export type ChangePayload = { id: number; version?: number; seq: number; origin?: string }

export interface ServerToClientEvents {
  'order:created': (p: ChangePayload) => void
  'order:updated': (p: ChangePayload) => void
  'operation:changed': (p: ChangePayload & { status?: string }) => void
  'jobBag:changed': (p: ChangePayload & { status?: string }) => void
  /** A planner run saved a draft (runId: the run that made it). */
  'plan:drafted': (p: ChangePayload & { runId?: string }) => void
  'plan:published': (p: ChangePayload) => void
  'plan:discarded': (p: ChangePayload) => void
  /** A bar moved or pinned by hand on the live plan. */
  'plan:changed': (p: ChangePayload & { operationId: number }) => void
  /** A planner run's newest progress (as the run stores it). */
  'plan:progress': (p: { runId: string } & RunProgress) => void
  /** A planner run ended with an error (or its instance went away for good): nothing was drafted. */
  'plan:failed': (p: { runId: string; error: string; seq?: number; origin?: string }) => void
  /**
   * A planner run ended without a draft and without an error: 'no-better' — nothing beat the live plan, which stays as it is
   * (`note` words it; `best` and `live` are the two plans' weighted lateness and finish, in the engine's minutes); 'stopped' —
   * the manager stopped it.
   */
  'plan:ended': (p: {
    runId: string
    outcome: 'no-better' | 'stopped'
    note?: string
    best?: { weightedTardiness: number; makespan: number }
    live?: { weightedTardiness: number; makespan: number }
    seq?: number
    origin?: string
  }) => void
  'masterdata:changed': (p: ChangePayload & { entity: string }) => void
  /** A file uploaded to (or removed from) an order or a job bag. */
  'file:added': (p: ChangePayload & { orderId: number | null; jobBagId: number | null }) => void
  'file:removed': (p: ChangePayload & { orderId: number | null; jobBagId: number | null }) => void
  /** Metal issued, returned, bought, adjusted, corrected or sent to refining (one ledger row). */
  'metal:recorded': (p: ChangePayload & { kind: string; alloyId: number; jobBagId: number | null; refiningLotId: number | null }) => void
  /** A refining lot opened, sent or settled. */
  'refiningLot:changed': (p: ChangePayload & { status: string }) => void
  /** A quote created, edited, sent, accepted, expired or withdrawn (ids only, never amounts). */
  'quote:changed': (p: ChangePayload & { status: string }) => void
  /** Money in for an order or quote (card from the provider's signed webhook, cash, transfer); ids only. */
  'payment:received': (p: ChangePayload & { orderId: number | null; quoteId: number | null }) => void
  'payment:refunded': (p: ChangePayload & { orderId: number | null; quoteId: number | null }) => void
  'paymentLink:created': (p: ChangePayload & { orderId: number | null; quoteId: number | null }) => void
}
export interface ClientToServerEvents {
  'changes:since': (seq: number, ack: (events: { seq: number; event: string; payload: unknown }[]) => void) => void
}
export type EventName = keyof ServerToClientEvents
