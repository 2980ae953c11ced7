// The audit trail: who changed what, written inside the same transaction as the change.
import type { Tx } from '../db/client'
import { auditLog } from '../db/schema/index'
import type { Actor } from '../lib/route'

export async function audit(tx: Tx, actor: Actor, action: string, entity: string, entityId: number | null, details: Record<string, unknown> = {}) {
  // At a bench station the person who entered their PIN is named, with the station, whether or not they have an account.
  const at = actor.station
    ? { station: actor.station.benchName, stationBenchId: actor.station.benchId, actingPersonId: actor.personId, actingPersonName: actor.name }
    : {}
  await tx.insert(auditLog).values({ workshopId: actor.workshopId, userId: actor.userId, action, entity, entityId, details: { ...details, ...at } })
}
