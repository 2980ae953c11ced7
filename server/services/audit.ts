// The audit trail: who changed what, written inside the same transaction as the change.
import type { Tx } from '../db/client'
import { auditLog } from '../db/schema/index'
import type { Actor } from '../lib/route'

export async function audit(tx: Tx, actor: Actor, action: string, entity: string, entityId: number | null, details: Record<string, unknown> = {}) {
  await tx.insert(auditLog).values({ workshopId: actor.workshopId, userId: actor.userId, action, entity, entityId, details })
}
