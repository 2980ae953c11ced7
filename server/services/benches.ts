// Benches: capabilities (which operation kinds each can host) and downtime windows.
import { and, asc, eq, inArray } from 'drizzle-orm'
import type { Bench, BenchInput, BenchUpdate, DowntimeInput } from '../../shared/schemas/bench'
import type { Db, Trx } from '../db/client'
import { benchCapabilities, benchDowntime, benches, operationKinds } from '../db/schema/index'
import { AppError, invalid, notFound } from '../errors/app-error'
import type { Actor, Deps } from '../lib/route'
import { audit } from './audit'
import { changeOwnedParts } from './owned-parts'
import { isUniqueViolation, updateVersioned } from './versioned'

export async function listBenches(db: Db, workshopId: number): Promise<Bench[]> {
  const rows = await db.select().from(benches).where(eq(benches.workshopId, workshopId)).orderBy(asc(benches.name))
  if (!rows.length) return []
  const ids = rows.map((r) => r.id)
  const caps = await db.select().from(benchCapabilities).where(inArray(benchCapabilities.benchId, ids))
  const down = await db.select().from(benchDowntime).where(inArray(benchDowntime.benchId, ids)).orderBy(asc(benchDowntime.startsAt))
  return rows.map((b) => ({
    id: b.id,
    name: b.name,
    kind: b.kind,
    capacity: b.capacity,
    active: b.active,
    notes: b.notes,
    version: b.version,
    kindIds: caps.filter((c) => c.benchId === b.id).map((c) => c.kindId),
    downtime: down
      .filter((d) => d.benchId === b.id)
      .map((d) => ({ id: d.id, benchId: d.benchId, startsAt: new Date(d.startsAt).toISOString(), endsAt: new Date(d.endsAt).toISOString(), reason: d.reason })),
  }))
}

async function getBench(db: Db, workshopId: number, id: number) {
  const b = (await listBenches(db, workshopId)).find((x) => x.id === id)
  if (!b) throw notFound('Bench')
  return b
}

async function checkKinds(tx: Trx, workshopId: number, kindIds: number[]) {
  if (!kindIds.length) return
  const found = await tx
    .select({ id: operationKinds.id })
    .from(operationKinds)
    .where(and(eq(operationKinds.workshopId, workshopId), inArray(operationKinds.id, kindIds)))
  if (found.length !== new Set(kindIds).size) throw invalid('kindIds', 'names an operation kind that does not exist')
}

const nameTaken = () =>
  new AppError({ code: 'conflict', message: 'A bench with this name exists already', fields: { name: 'is already used by another bench' } })

export async function createBench({ db, realtime }: Deps, actor: Actor, input: BenchInput) {
  const id = await db
    .transaction(async (tx) => {
      await checkKinds(tx, actor.workshopId, input.kindIds)
      const [b] = await tx
        .insert(benches)
        .values({ workshopId: actor.workshopId, name: input.name, kind: input.kind, capacity: input.capacity, active: input.active, notes: input.notes })
        .returning()
      if (input.kindIds.length) await tx.insert(benchCapabilities).values([...new Set(input.kindIds)].map((kindId) => ({ benchId: b!.id, kindId })))
      await audit(tx, actor, 'create', 'bench', b!.id, { name: input.name })
      return b!.id
    })
    .catch((e) => {
      throw isUniqueViolation(e) ? nameTaken() : e
    })
  realtime.emit(actor.workshopId, 'masterdata:changed', { entity: 'bench', id })
  return getBench(db, actor.workshopId, id)
}

export async function updateBench({ db, realtime }: Deps, actor: Actor, id: number, input: BenchUpdate) {
  const { version, kindIds, ...values } = input
  await db
    .transaction(async (tx) => {
      await updateVersioned(tx, benches, 'Bench', { id, workshopId: actor.workshopId, version, values })
      if (kindIds) {
        await checkKinds(tx, actor.workshopId, kindIds)
        await tx.delete(benchCapabilities).where(eq(benchCapabilities.benchId, id))
        if (kindIds.length) await tx.insert(benchCapabilities).values([...new Set(kindIds)].map((kindId) => ({ benchId: id, kindId })))
      }
      await audit(tx, actor, 'update', 'bench', id, input as Record<string, unknown>)
    })
    .catch((e) => {
      throw isUniqueViolation(e) ? nameTaken() : e
    })
  realtime.emit(actor.workshopId, 'masterdata:changed', { entity: 'bench', id })
  return getBench(db, actor.workshopId, id)
}

const benchOf = (id: number) => ({ table: benches, entity: 'bench' as const, what: 'Bench', id })

export async function addDowntime(deps: Deps, actor: Actor, benchId: number, input: DowntimeInput) {
  await changeOwnedParts(deps, actor, benchOf(benchId), { action: 'add-downtime', details: input }, (tx) =>
    tx.insert(benchDowntime).values({ benchId, ...input }),
  )
  return getBench(deps.db, actor.workshopId, benchId)
}

export async function removeDowntime(deps: Deps, actor: Actor, benchId: number, downtimeId: number) {
  await changeOwnedParts(deps, actor, benchOf(benchId), { action: 'remove-downtime', details: { downtimeId } }, async (tx) => {
    const r = await tx
      .delete(benchDowntime)
      .where(and(eq(benchDowntime.id, downtimeId), eq(benchDowntime.benchId, benchId)))
      .returning()
    if (!r.length) throw notFound('Downtime')
  })
  return getBench(deps.db, actor.workshopId, benchId)
}
