// Metal, refining lots: scrap and lemel gathered into a lot, sent to the refiner and settled (fine weight credited, money, metal
// back into stock), with the recovery against the fine weight sent.
import { and, desc, eq, sql } from 'drizzle-orm'
import { fineMg, gToMg } from '../../../shared/domain/metal'
import {
  type LotItemAdded,
  type RefiningItemInput,
  type RefiningLot,
  type RefiningLotInput,
  type RefiningSendInput,
  type RefiningSettleInput,
} from '../../../shared/schemas/metal'
import type { Db, Tx } from '../../db/client'
import { alloys, metalMovements, refiningLots } from '../../db/schema/index'
import { AppError, invalid } from '../../errors/app-error'
import type { Actor, Deps } from '../../lib/route'
import { audit } from '../audit'
import { requireOwned, updateVersioned } from '../versioned'
import { lockMetal, requireAlloy, record, joinedRows, iso, toMovements } from './common'

const r1 = (n: number) => Math.round(n * 10) / 10

async function lotOut(db: Tx, workshopId: number, lot: typeof refiningLots.$inferSelect): Promise<RefiningLot> {
  const items = toMovements(await joinedRows(db, and(eq(metalMovements.workshopId, workshopId), eq(metalMovements.refiningLotId, lot.id))))
  const fineness = new Map(
    (await db.select({ id: alloys.id, fineness: alloys.fineness }).from(alloys).where(eq(alloys.workshopId, workshopId))).map((a) => [a.id, a.fineness]),
  )
  const sent = items.filter((i) => i.kind === 'to-refining')
  const byAlloy = new Map<number, { alloyId: number; name: string; fineness: number; weightMg: number; fineMg: number }>()
  for (const i of sent) {
    const f = fineness.get(i.alloyId) ?? 0
    const b = byAlloy.get(i.alloyId) ?? { alloyId: i.alloyId, name: i.alloyName, fineness: f, weightMg: 0, fineMg: 0 }
    b.weightMg += i.effectiveMg
    byAlloy.set(i.alloyId, b)
  }
  for (const b of byAlloy.values()) b.fineMg = fineMg(b.weightMg, b.fineness)
  const sentMg = [...byAlloy.values()].reduce((s, b) => s + b.weightMg, 0)
  const sentFineMg = [...byAlloy.values()].reduce((s, b) => s + b.fineMg, 0)
  return {
    id: lot.id,
    number: lot.number,
    status: lot.status,
    refiner: lot.refiner,
    sentAt: lot.sentAt ? iso(lot.sentAt) : null,
    settledAt: lot.settledAt ? iso(lot.settledAt) : null,
    creditedFineMg: lot.creditedFineMg,
    creditedMinor: lot.creditedMinor,
    notes: lot.notes,
    version: lot.version,
    createdAt: iso(lot.createdAt),
    sentMg,
    sentFineMg,
    recoveryPct: lot.creditedFineMg !== null && sentFineMg > 0 ? r1((lot.creditedFineMg / sentFineMg) * 100) : null,
    byAlloy: [...byAlloy.values()],
    items,
  }
}

export async function listLots(db: Db, workshopId: number): Promise<RefiningLot[]> {
  const lots = await db.select().from(refiningLots).where(eq(refiningLots.workshopId, workshopId)).orderBy(desc(refiningLots.createdAt), desc(refiningLots.id))
  return Promise.all(lots.map((l) => lotOut(db, workshopId, l)))
}

export async function getLot(db: Db, workshopId: number, id: number): Promise<RefiningLot> {
  return lotOut(db, workshopId, await requireOwned(db, refiningLots, 'Refining lot', id, workshopId))
}

export async function createLot({ db, realtime }: Deps, actor: Actor, input: RefiningLotInput): Promise<RefiningLot> {
  const lot = await db.transaction(async (tx) => {
    await lockMetal(tx, actor.workshopId)
    let number = input.number
    if (!number) {
      const [{ n }] = (await tx
        .select({ n: sql<number>`count(*)::int` })
        .from(refiningLots)
        .where(eq(refiningLots.workshopId, actor.workshopId))) as [{ n: number }]
      number = `RL-${String(n + 1).padStart(4, '0')}`
    }
    const [clash] = await tx
      .select({ id: refiningLots.id })
      .from(refiningLots)
      .where(and(eq(refiningLots.workshopId, actor.workshopId), eq(refiningLots.number, number)))
    if (clash) throw invalid('number', 'is used by another refining lot')
    const [row] = await tx.insert(refiningLots).values({ workshopId: actor.workshopId, number, refiner: input.refiner, notes: input.notes }).returning()
    await audit(tx, actor, 'create', 'refining-lot', row!.id, { number, refiner: input.refiner })
    return lotOut(tx, actor.workshopId, row!)
  })
  realtime.emit(actor.workshopId, 'refiningLot:changed', { id: lot.id, version: lot.version, status: lot.status })
  return lot
}

/** Scrap or lemel from stock into an open lot (a to-refining row). */
export async function addToLot(deps: Deps, actor: Actor, lotId: number, input: RefiningItemInput): Promise<LotItemAdded> {
  const lot = await requireOwned(deps.db, refiningLots, 'Refining lot', lotId, actor.workshopId)
  const r = await record(
    deps,
    actor,
    {
      kind: 'to-refining',
      alloyId: input.alloyId,
      weightMg: gToMg(input.weightG),
      form: input.form,
      refiningLotId: lot.id,
      clientId: input.clientId ?? null,
    },
    'send-to-refining',
    async (tx) => {
      await requireAlloy(tx, actor.workshopId, input.alloyId, 'alloyId', false)
      const [now] = await tx.select({ status: refiningLots.status }).from(refiningLots).where(eq(refiningLots.id, lot.id))
      if (now?.status !== 'open')
        throw new AppError({ code: 'conflict', message: `Refining lot ${lot.number} has been ${now?.status}; open a new lot for more scrap` })
    },
  )
  return { replayed: r.replayed, lot: await getLot(deps.db, actor.workshopId, lotId) }
}

export async function sendLot({ db, realtime }: Deps, actor: Actor, id: number, input: RefiningSendInput): Promise<RefiningLot> {
  const lot = await db.transaction(async (tx) => {
    await lockMetal(tx, actor.workshopId)
    const before = await requireOwned(tx, refiningLots, 'Refining lot', id, actor.workshopId)
    if (before.version !== input.version)
      await updateVersioned(tx, refiningLots, 'Refining lot', { id, workshopId: actor.workshopId, version: input.version, values: {} })
    if (before.status !== 'open') throw new AppError({ code: 'conflict', message: `Refining lot ${before.number} has been ${before.status} already` })
    const [{ n }] = (await tx
      .select({ n: sql<number>`count(*)::int` })
      .from(metalMovements)
      .where(eq(metalMovements.refiningLotId, id))) as [{ n: number }]
    if (n === 0) throw invalid('id', 'the lot is empty; add scrap or lemel before sending it')
    const row = await updateVersioned(tx, refiningLots, 'Refining lot', {
      id,
      workshopId: actor.workshopId,
      version: input.version,
      values: { status: 'sent', sentAt: new Date().toISOString(), ...(input.refiner !== undefined ? { refiner: input.refiner } : {}) },
    })
    await audit(tx, actor, 'send', 'refining-lot', id, { number: before.number, refiner: row.refiner })
    return lotOut(tx, actor.workshopId, row)
  })
  realtime.emit(actor.workshopId, 'refiningLot:changed', { id: lot.id, version: lot.version, status: lot.status })
  return lot
}

export async function settleLot({ db, realtime }: Deps, actor: Actor, id: number, input: RefiningSettleInput): Promise<RefiningLot> {
  const { lot, movementId } = await db.transaction(async (tx) => {
    await lockMetal(tx, actor.workshopId)
    const before = await requireOwned(tx, refiningLots, 'Refining lot', id, actor.workshopId)
    if (before.version !== input.version)
      await updateVersioned(tx, refiningLots, 'Refining lot', { id, workshopId: actor.workshopId, version: input.version, values: {} })
    if (before.status !== 'sent')
      throw new AppError({
        code: 'conflict',
        message: before.status === 'open' ? `Refining lot ${before.number} has not been sent yet` : `Refining lot ${before.number} is settled already`,
      })
    let movementId: number | null = null
    if (input.returnedAlloyId !== undefined && input.returnedWeightG !== undefined) {
      await requireAlloy(tx, actor.workshopId, input.returnedAlloyId, 'returnedAlloyId', false)
      const [m] = await tx
        .insert(metalMovements)
        .values({
          workshopId: actor.workshopId,
          alloyId: input.returnedAlloyId,
          kind: 'from-refining',
          weightMg: gToMg(input.returnedWeightG),
          refiningLotId: id,
          recordedBy: actor.userId,
          recordedAt: new Date().toISOString(),
        })
        .returning()
      movementId = m!.id
    }
    const row = await updateVersioned(tx, refiningLots, 'Refining lot', {
      id,
      workshopId: actor.workshopId,
      version: input.version,
      values: {
        status: 'settled',
        settledAt: new Date().toISOString(),
        creditedFineMg: input.creditedFineG !== undefined ? gToMg(input.creditedFineG) : null,
        creditedMinor: input.creditedMinor ?? null,
        ...(input.notes !== undefined ? { notes: input.notes } : {}),
      },
    })
    await audit(tx, actor, 'settle', 'refining-lot', id, {
      number: before.number,
      creditedFineMg: row.creditedFineMg,
      creditedMinor: row.creditedMinor,
      returnedAlloyId: input.returnedAlloyId ?? null,
      returnedWeightG: input.returnedWeightG ?? null,
      movementId,
    })
    return { lot: await lotOut(tx, actor.workshopId, row), movementId }
  })
  realtime.emit(actor.workshopId, 'refiningLot:changed', { id: lot.id, version: lot.version, status: lot.status })
  if (movementId !== null)
    realtime.emit(actor.workshopId, 'metal:recorded', {
      id: movementId,
      kind: 'from-refining',
      alloyId: input.returnedAlloyId!,
      jobBagId: null,
      refiningLotId: id,
    })
  return lot
}
