// Operation kinds: the workshop's own list of what can be done (and which carry hazards).
import { asc, eq } from 'drizzle-orm'
import type { OperationKindInput } from '../../shared/schemas/operation-kind'
import type { Db } from '../db/client'
import { operationKinds } from '../db/schema/index'
import { AppError } from '../errors/app-error'
import type { Actor, Deps } from '../lib/route'
import { audit } from './audit'
import { isUniqueViolation, updateVersioned } from './versioned'

export const listKinds = (db: Db, workshopId: number) =>
  db.select().from(operationKinds).where(eq(operationKinds.workshopId, workshopId)).orderBy(asc(operationKinds.name))

const codeTaken = (e: unknown) =>
  isUniqueViolation(e) ? new AppError({ code: 'conflict', message: 'That code is used already', fields: { code: 'is used by another kind' } }) : e

export async function createKind({ db, realtime }: Deps, actor: Actor, input: OperationKindInput) {
  const k = await db
    .transaction(async (tx) => {
      const [k] = await tx
        .insert(operationKinds)
        .values({ workshopId: actor.workshopId, ...input })
        .returning()
      await audit(tx, actor, 'create', 'operation-kind', k!.id, input)
      return k!
    })
    .catch((e) => {
      throw codeTaken(e)
    })
  realtime.emit(actor.workshopId, 'masterdata:changed', { entity: 'operation-kind', id: k.id })
  return k
}

export async function updateKind({ db, realtime }: Deps, actor: Actor, id: number, input: Partial<OperationKindInput> & { version: number }) {
  const { version, ...values } = input
  const k = await db
    .transaction(async (tx) => {
      const k = await updateVersioned(tx, operationKinds, 'Operation kind', { id, workshopId: actor.workshopId, version, values })
      await audit(tx, actor, 'update', 'operation-kind', id, input)
      return k
    })
    .catch((e) => {
      throw codeTaken(e)
    })
  realtime.emit(actor.workshopId, 'masterdata:changed', { entity: 'operation-kind', id })
  return k
}
