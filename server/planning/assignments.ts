// Plan assignments as records: one typed entry per operation (shared/schemas/plan.ts), made from the engine's plan, stored
// in a draft as an object keyed by operation id, and read back from storage (older drafts' string ids become numbers).
import { storedAssignment, type PlanAssignment } from '../../shared/schemas/plan'
import type { Plan } from '../scheduler/model.ts'
import type { PlanningData } from './problem'

export type Assignment = PlanAssignment
/** A plan's assignments by operation id. */
export type Assignments = Map<number, Assignment>

/** The engine names benches and people by string ids; plans by numbers. */
export const engineId = (id: number | null) => (id === null ? null : String(id))
const recordId = (id: string | null) => (id === null ? null : Number(id))

/** The engine's plan as assignments (pinned where the operation is pinned on the live plan). */
export function fromEnginePlan(data: PlanningData, plan: Plan): Assignments {
  const iso = (m: number) => data.clock.toDate(m).toISOString()
  return new Map(
    plan.operations.map((p) => {
      const operationId = Number(p.operationId)
      const a: Assignment = { operationId, benchId: recordId(p.benchId), personId: recordId(p.personId), start: iso(p.start), end: iso(p.end) }
      if (data.meta.operations.get(p.operationId)?.op.pinned) a.pinned = true
      return [operationId, a]
    }),
  )
}

/** As a draft stores them (jsonb object keyed by operation id). */
export const toStored = (a: Assignments): Record<string, Assignment> => Object.fromEntries([...a].map(([id, x]) => [String(id), x]))

/** A draft's stored assignments, each checked against the schema; drafts saved with string ids are converted. */
export function fromStored(json: unknown): Assignments {
  const out: Assignments = new Map()
  for (const [key, value] of Object.entries((json ?? {}) as Record<string, unknown>)) {
    const a = storedAssignment(key).parse(value)
    out.set(a.operationId, a)
  }
  return out
}
