// Plan assignments as stored (ISO times, per operation) and read back from the operations' planned fields.
import { and, eq, inArray, isNotNull } from 'drizzle-orm'
import type { Tx } from '../db/client'
import * as s from '../db/schema/index'
import type { Plan, StartReason } from '../scheduler/model.ts'
import type { PlanningData } from './problem'

export interface Assignment {
  benchId: string | null
  personId: string | null
  start: string
  end: string
  segments: { start: string; end: string }[]
  reason: StartReason | null
}

export function toAssignments(data: PlanningData, plan: Plan): Record<string, Assignment> {
  const c = data.clock
  const iso = (m: number) => c.toDate(m).toISOString()
  return Object.fromEntries(
    plan.operations.map((p) => [p.operationId, { benchId: p.benchId, personId: p.personId, start: iso(p.start), end: iso(p.end), segments: p.segments.map((x) => ({ start: iso(x.start), end: iso(x.end) })), reason: p.reason }]),
  )
}

/** The live plan: what the operations table holds now (published plan plus manual moves and work done). */
export async function currentAssignments(db: Tx, workshopId: number): Promise<Record<string, Assignment>> {
  const rows = await db
    .select({ id: s.operations.id, benchId: s.operations.plannedBenchId, personId: s.operations.plannedPersonId, start: s.operations.plannedStart, end: s.operations.plannedEnd })
    .from(s.operations)
    .innerJoin(s.jobBags, eq(s.jobBags.id, s.operations.jobBagId))
    .where(and(eq(s.jobBags.workshopId, workshopId), isNotNull(s.operations.plannedStart), inArray(s.operations.status, ['pending', 'ready', 'claimed', 'paused', 'running'])))
  return Object.fromEntries(
    rows.map((r) => [String(r.id), { benchId: r.benchId === null ? null : String(r.benchId), personId: r.personId === null ? null : String(r.personId), start: new Date(r.start!).toISOString(), end: new Date(r.end ?? r.start!).toISOString(), segments: [], reason: null }]),
  )
}
