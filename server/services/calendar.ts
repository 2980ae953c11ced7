// The workshop's calendar: settings (time zone, weekly hours) and closures.
import { and, asc, eq } from 'drizzle-orm'
import type { Closure, ClosureInput, WorkshopSettingsInput, WorkshopSettingsRecord, ClosureRemoved } from '../../shared/schemas/calendar'
import type { Db } from '../db/client'
import { closures, workshops } from '../db/schema/index'
import { notFound, staleVersion } from '../errors/app-error'
import type { Actor, Deps } from '../lib/route'
import { audit } from './audit'
import { sql } from 'drizzle-orm'

export async function getSettings(db: Db, workshopId: number): Promise<WorkshopSettingsRecord> {
  const [w] = await db.select().from(workshops).where(eq(workshops.id, workshopId))
  if (!w) throw notFound('Workshop')
  return {
    id: w.id,
    name: w.name,
    timeZone: w.timeZone,
    weekPattern: w.weekPattern,
    planningLoad: w.planningLoad,
    address: w.address,
    phone: w.phone,
    contactEmail: w.contactEmail,
    currency: w.currency,
    publicUrl: w.publicUrl,
    depositPct: w.depositPct,
    quoteValidDays: w.quoteValidDays,
    noMetalBeforeDeposit: w.noMetalBeforeDeposit,
    version: w.version,
  }
}

export async function updateSettings({ db, realtime }: Deps, actor: Actor, input: WorkshopSettingsInput): Promise<WorkshopSettingsRecord> {
  const { version, ...values } = input
  await db.transaction(async (tx) => {
    const r = await tx
      .update(workshops)
      .set({ ...values, version: sql`${workshops.version} + 1` })
      .where(and(eq(workshops.id, actor.workshopId), eq(workshops.version, version)))
      .returning()
    if (!r.length) throw staleVersion('The workshop settings')
    await audit(tx, actor, 'update', 'workshop', actor.workshopId, values)
  })
  realtime.emit(actor.workshopId, 'masterdata:changed', { entity: 'workshop', id: actor.workshopId })
  return getSettings(db, actor.workshopId)
}

export const listClosures = (db: Db, workshopId: number): Promise<Closure[]> =>
  db.select().from(closures).where(eq(closures.workshopId, workshopId)).orderBy(asc(closures.startsOn))

export async function addClosure({ db, realtime }: Deps, actor: Actor, input: ClosureInput): Promise<Closure> {
  const c = await db.transaction(async (tx) => {
    const [c] = await tx
      .insert(closures)
      .values({ workshopId: actor.workshopId, ...input })
      .returning()
    await audit(tx, actor, 'create', 'closure', c!.id, input)
    return c!
  })
  realtime.emit(actor.workshopId, 'masterdata:changed', { entity: 'closure', id: c.id })
  return c
}

export async function removeClosure({ db, realtime }: Deps, actor: Actor, id: number): Promise<ClosureRemoved> {
  await db.transaction(async (tx) => {
    const r = await tx
      .delete(closures)
      .where(and(eq(closures.id, id), eq(closures.workshopId, actor.workshopId)))
      .returning()
    if (!r.length) throw notFound('Closure')
    await audit(tx, actor, 'delete', 'closure', id, {})
  })
  realtime.emit(actor.workshopId, 'masterdata:changed', { entity: 'closure', id })
  return { ok: true }
}
