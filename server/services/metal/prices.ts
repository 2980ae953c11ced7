// Metal, the price book: alloys (code, metal, fineness, density, switched on or off) and their dated prices per gram, shown only
// to the owner and managers. Every write is one transaction with its audit row; events go out after commit.
import { and, asc, desc, eq } from 'drizzle-orm'
import { isLegalFineness } from '../../../shared/domain/metal'
import { finenessMessage, type Alloy, type AlloyInput, type AlloyPrice, type AlloyPriceInput, type AlloyUpdate } from '../../../shared/schemas/metal'
import type { Db, Tx } from '../../db/client'
import { alloyPrices, alloys, users } from '../../db/schema/index'
import { invalid } from '../../errors/app-error'
import type { Actor, Deps } from '../../lib/route'
import { audit } from '../audit'
import { requireOwned, updateVersioned } from '../versioned'
import { lockMetal, today, currentPrices } from './common'

const PRICE_ROLES = new Set(['owner', 'manager'])

const alloyOut = (a: typeof alloys.$inferSelect, price: { pricePerGramMinor: number; effectiveOn: string } | undefined, showPrice: boolean): Alloy => ({
  id: a.id,
  code: a.code,
  name: a.name,
  metal: a.metal,
  fineness: a.fineness,
  densityGPerCm3: a.densityGPerCm3,
  active: a.active,
  version: a.version,
  pricePerGramMinor: showPrice ? (price?.pricePerGramMinor ?? null) : null,
  priceOn: showPrice ? (price?.effectiveOn ?? null) : null,
})

export async function listAlloys(db: Db, actor: Actor): Promise<Alloy[]> {
  const rows = await db.select().from(alloys).where(eq(alloys.workshopId, actor.workshopId)).orderBy(asc(alloys.metal), asc(alloys.fineness), asc(alloys.name))
  const prices = await currentPrices(
    db,
    rows.map((r) => r.id),
    await today(db, actor.workshopId),
  )
  return rows.map((r) => alloyOut(r, prices.get(r.id), PRICE_ROLES.has(actor.role)))
}

async function codeFree(tx: Tx, workshopId: number, code: string, exceptId: number | null) {
  const [clash] = await tx
    .select({ id: alloys.id })
    .from(alloys)
    .where(and(eq(alloys.workshopId, workshopId), eq(alloys.code, code)))
  if (clash && clash.id !== exceptId) throw invalid('code', 'is used by another alloy')
}

export async function createAlloy({ db, realtime }: Deps, actor: Actor, input: AlloyInput): Promise<Alloy> {
  const a = await db.transaction(async (tx) => {
    await lockMetal(tx, actor.workshopId)
    await codeFree(tx, actor.workshopId, input.code, null)
    const [row] = await tx
      .insert(alloys)
      .values({ workshopId: actor.workshopId, ...input })
      .returning()
    await audit(tx, actor, 'create', 'alloy', row!.id, { ...input })
    return alloyOut(row!, undefined, true)
  })
  realtime.emit(actor.workshopId, 'masterdata:changed', { entity: 'alloy', id: a.id, version: a.version })
  return a
}

export async function updateAlloy({ db, realtime }: Deps, actor: Actor, id: number, input: AlloyUpdate): Promise<Alloy> {
  const { version, ...values } = input
  const a = await db.transaction(async (tx) => {
    await lockMetal(tx, actor.workshopId)
    const before = await requireOwned(tx, alloys, 'Alloy', id, actor.workshopId)
    if (values.code !== undefined) await codeFree(tx, actor.workshopId, values.code, id)
    const metal = values.metal ?? before.metal
    const fineness = values.fineness ?? before.fineness
    if (!isLegalFineness(metal, fineness)) throw invalid('fineness', finenessMessage(metal))
    const row = await updateVersioned(tx, alloys, 'Alloy', { id, workshopId: actor.workshopId, version, values })
    await audit(tx, actor, 'update', 'alloy', id, {
      from: {
        code: before.code,
        name: before.name,
        metal: before.metal,
        fineness: before.fineness,
        densityGPerCm3: before.densityGPerCm3,
        active: before.active,
      },
      to: values,
    })
    const prices = await currentPrices(tx, [id], await today(tx, actor.workshopId))
    return alloyOut(row, prices.get(id), true)
  })
  realtime.emit(actor.workshopId, 'masterdata:changed', { entity: 'alloy', id: a.id, version: a.version })
  return a
}

export async function listPrices(db: Db, actor: Actor, alloyId: number): Promise<AlloyPrice[]> {
  await requireOwned(db, alloys, 'Alloy', alloyId, actor.workshopId)
  const rows = await db
    .select({ p: alloyPrices, setBy: users.name })
    .from(alloyPrices)
    .leftJoin(users, eq(users.id, alloyPrices.setBy))
    .where(eq(alloyPrices.alloyId, alloyId))
    .orderBy(desc(alloyPrices.effectiveOn), desc(alloyPrices.id))
  return rows.map(({ p, setBy }) => ({
    id: p.id,
    pricePerGramMinor: p.pricePerGramMinor,
    effectiveOn: p.effectiveOn,
    setBy,
    createdAt: new Date(p.createdAt as unknown as string).toISOString(),
  }))
}

export async function setPrice({ db, realtime }: Deps, actor: Actor, alloyId: number, input: AlloyPriceInput): Promise<AlloyPrice> {
  const p = await db.transaction(async (tx) => {
    const a = await requireOwned(tx, alloys, 'Alloy', alloyId, actor.workshopId)
    const [row] = await tx
      .insert(alloyPrices)
      .values({ alloyId, pricePerGramMinor: input.pricePerGramMinor, effectiveOn: input.effectiveOn, setBy: actor.userId })
      .returning()
    await audit(tx, actor, 'set-price', 'alloy', alloyId, { alloy: a.code, pricePerGramMinor: input.pricePerGramMinor, effectiveOn: input.effectiveOn })
    return {
      id: row!.id,
      pricePerGramMinor: row!.pricePerGramMinor,
      effectiveOn: row!.effectiveOn,
      setBy: actor.name,
      createdAt: new Date(row!.createdAt as unknown as string).toISOString(),
    }
  })
  realtime.emit(actor.workshopId, 'masterdata:changed', { entity: 'alloy-price', id: alloyId })
  return p
}
