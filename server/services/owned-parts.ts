// A change to the rows that belong to one master-data row (a bench's downtime, a person's leave): the row checked to be the workshop's, the change and its audit entry in one transaction, the change announced after commit.
// Downtime and leave are the calendar: the transaction takes the live plan's lock first and checks the live plan against the change.
import type { Trx } from '../db/client'
import type { Actor, Deps } from '../lib/route'
import { calendarChange } from '../planning/live-plan'
import { audit } from './audit'
import { requireOwned } from './versioned'

export async function changeOwnedParts(
  { db, realtime }: Pick<Deps, 'db' | 'realtime'>,
  actor: Actor,
  owner: { table: Parameters<typeof requireOwned>[1]; entity: 'bench' | 'person'; what: string; id: number },
  audited: { action: string; details: Record<string, unknown> },
  change: (tx: Trx) => Promise<unknown>,
): Promise<void> {
  await db.transaction((tx) =>
    calendarChange(tx, actor.workshopId, async () => {
      await requireOwned(tx, owner.table, owner.what, owner.id, actor.workshopId)
      await change(tx)
      await audit(tx, actor, audited.action, owner.entity, owner.id, audited.details)
    }),
  )
  realtime.emit(actor.workshopId, 'masterdata:changed', { entity: owner.entity, id: owner.id })
}
