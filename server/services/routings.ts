// Routings and their steps (a small graph: steps may branch and join).
import { and, asc, eq, inArray } from 'drizzle-orm'
import type { Routing, RoutingInput } from '../../shared/schemas/routing'
import { routingWarnings } from '../../shared/domain/routing-warnings'
import type { Db, Trx } from '../db/client'
import { operationKinds, routings, routingSteps } from '../db/schema/index'
import { AppError, invalid, notFound } from '../errors/app-error'
import type { Actor, Deps } from '../lib/route'
import { audit } from './audit'
import { isUniqueViolation, updateVersioned } from './versioned'

export async function listRoutings(db: Db, workshopId: number): Promise<Routing[]> {
  const rows = await db.select().from(routings).where(eq(routings.workshopId, workshopId)).orderBy(asc(routings.name))
  if (!rows.length) return []
  const steps = await db
    .select()
    .from(routingSteps)
    .where(
      inArray(
        routingSteps.routingId,
        rows.map((r) => r.id),
      ),
    )
    .orderBy(asc(routingSteps.seq))
  const kinds = await db
    .select({ id: operationKinds.id, outside: operationKinds.outside })
    .from(operationKinds)
    .where(eq(operationKinds.workshopId, workshopId))
  const outside = new Set(kinds.filter((k) => k.outside).map((k) => k.id))
  return rows.map((t) => {
    const own = steps
      .filter((s) => s.routingId === t.id)
      .map((s) => ({
        id: s.id,
        key: s.key,
        kindId: s.kindId,
        name: s.name,
        baseMinutes: s.baseMinutes,
        perStoneMinutes: s.perStoneMinutes,
        perMmMinutes: s.perMmMinutes,
        sizeBandFactors: s.sizeBandFactors,
        roleFactors: s.roleFactors,
        requiredLevel: s.requiredLevel,
        waitAfterMinutes: s.waitAfterMinutes,
        leadDays: s.leadDays,
        after: s.after,
      }))
    return {
      id: t.id,
      code: t.code,
      name: t.name,
      description: t.description,
      kind: t.kind,
      learningRate: t.learningRate,
      resizesRing: t.resizesRing,
      version: t.version,
      steps: own,
      warnings: routingWarnings(own, (k) => outside.has(k)),
    }
  })
}

export async function getRouting(db: Db, workshopId: number, id: number) {
  const t = (await listRoutings(db, workshopId)).find((x) => x.id === id)
  if (!t) throw notFound('Routing')
  return t
}

async function writeSteps(tx: Trx, workshopId: number, routingId: number, steps: RoutingInput['steps']) {
  const kindIds = [...new Set(steps.map((s) => s.kindId))]
  const found = await tx
    .select({ id: operationKinds.id })
    .from(operationKinds)
    .where(and(eq(operationKinds.workshopId, workshopId), inArray(operationKinds.id, kindIds)))
  const ok = new Set(found.map((f) => f.id))
  steps.forEach((s, i) => {
    if (!ok.has(s.kindId)) throw invalid(`steps.${i}.kindId`, 'is not an operation kind of this workshop')
  })
  await tx.delete(routingSteps).where(eq(routingSteps.routingId, routingId))
  await tx.insert(routingSteps).values(steps.map((s, seq) => ({ routingId, seq, ...s })))
}

const codeTaken = (e: unknown) =>
  isUniqueViolation(e) ? new AppError({ code: 'conflict', message: 'That code is used already', fields: { code: 'is used by another routing' } }) : e

export async function createRouting({ db, realtime }: Deps, actor: Actor, input: RoutingInput) {
  const id = await db
    .transaction(async (tx) => {
      const [t] = await tx
        .insert(routings)
        .values({
          workshopId: actor.workshopId,
          code: input.code,
          name: input.name,
          description: input.description,
          kind: input.kind,
          learningRate: input.learningRate,
          resizesRing: input.resizesRing,
        })
        .returning()
      await writeSteps(tx, actor.workshopId, t!.id, input.steps)
      await audit(tx, actor, 'create', 'routing', t!.id, { code: input.code, kind: input.kind, learningRate: input.learningRate })
      return t!.id
    })
    .catch((e) => {
      throw codeTaken(e)
    })
  realtime.emit(actor.workshopId, 'masterdata:changed', { entity: 'routing', id })
  return getRouting(db, actor.workshopId, id)
}

export async function updateRouting({ db, realtime }: Deps, actor: Actor, id: number, input: RoutingInput & { version: number }) {
  const { version, steps, ...values } = input
  await db
    .transaction(async (tx) => {
      await updateVersioned(tx, routings, 'Routing', { id, workshopId: actor.workshopId, version, values })
      await writeSteps(tx, actor.workshopId, id, steps)
      await audit(tx, actor, 'update', 'routing', id, { code: input.code, kind: input.kind, steps: steps.length, learningRate: input.learningRate })
    })
    .catch((e) => {
      throw codeTaken(e)
    })
  realtime.emit(actor.workshopId, 'masterdata:changed', { entity: 'routing', id })
  return getRouting(db, actor.workshopId, id)
}
