// The workshop's calendar: settings (time zone, weekly hours) and closures. Each change checks the live plan against the new
// calendar in its own transaction (`calendarChange`), so its findings and figures never speak of time no longer worked.
import { and, asc, eq } from 'drizzle-orm'
import type {
  BankHolidaysAdded,
  BankHolidaysInput,
  Closure,
  ClosureInput,
  WorkshopSettingsInput,
  WorkshopSettingsRecord,
  ClosureRemoved,
} from '../../shared/schemas/calendar'
import { vatChangeProblem } from '../../shared/schemas/calendar'
import { englandWalesBankHolidays } from '../../shared/domain/bank-holidays'
import type { Db } from '../db/client'
import { closures, workshops } from '../db/schema/index'
import { invalid, notFound, staleVersion } from '../errors/app-error'
import { rateBasisPoints, vatTermsOf } from '../../shared/domain/vat'
import type { Actor, Deps } from '../lib/route'
import { calendarChange } from '../planning/live-plan'
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
    ...vatTermsOf(w),
    version: w.version,
  }
}

export async function updateSettings({ db, realtime }: Deps, actor: Actor, input: WorkshopSettingsInput): Promise<WorkshopSettingsRecord> {
  const { version, vatRatePct, ...values } = input
  const stored = vatRatePct === undefined ? {} : { vatRateBasisPoints: rateBasisPoints(vatRatePct) }
  await db.transaction((tx) =>
    calendarChange(tx, actor.workshopId, async () => {
      // The VAT terms as they stand, read under the row's lock, so the check below compares the row as saved with them.
      const [before] = await tx.select().from(workshops).where(eq(workshops.id, actor.workshopId)).for('update')
      if (!before) throw notFound('Workshop')
      const r = await tx
        .update(workshops)
        .set({ ...values, ...stored, version: sql`${workshops.version} + 1` })
        .where(and(eq(workshops.id, actor.workshopId), eq(workshops.version, version)))
        .returning()
      if (!r.length) throw staleVersion('The workshop settings')
      // The customer's documents must carry a registered workshop's number, in a UK VAT number's shape — checked on the row as
      // saved when the change touches the VAT details (a change leaving out the number or the registration too), so a number
      // stored before the check never holds back another setting (the change rolls back otherwise).
      const vatProblem = vatChangeProblem(vatTermsOf(before), vatTermsOf(r[0]!))
      if (vatProblem) throw invalid('vatNumber', vatProblem)
      await audit(tx, actor, 'update', 'workshop', actor.workshopId, { ...values, ...(vatRatePct === undefined ? {} : { vatRatePct }) })
    }),
  )
  realtime.emit(actor.workshopId, 'masterdata:changed', { entity: 'workshop', id: actor.workshopId })
  return getSettings(db, actor.workshopId)
}

export const listClosures = (db: Db, workshopId: number): Promise<Closure[]> =>
  db.select().from(closures).where(eq(closures.workshopId, workshopId)).orderBy(asc(closures.startsOn))

export async function addClosure({ db, realtime }: Deps, actor: Actor, input: ClosureInput): Promise<Closure> {
  const c = await db.transaction((tx) =>
    calendarChange(tx, actor.workshopId, async () => {
      const [c] = await tx
        .insert(closures)
        .values({ workshopId: actor.workshopId, ...input })
        .returning()
      await audit(tx, actor, 'create', 'closure', c!.id, input)
      return c!
    }),
  )
  realtime.emit(actor.workshopId, 'masterdata:changed', { entity: 'closure', id: c.id })
  return c
}

/** A year's England and Wales bank holidays as one-day closures, except days a closure already covers; in one transaction. */
export async function addBankHolidays({ db, realtime }: Deps, actor: Actor, input: BankHolidaysInput): Promise<BankHolidaysAdded> {
  const out = await db.transaction(async (tx) => {
    // The live plan's lock first (before any row lock), and with it the check of the live plan once the days are added.
    return calendarChange(tx, actor.workshopId, async () => {
      // One at a time per workshop, so two clicks at once cannot add a day twice.
      await tx.execute(sql`select id from workshops where id = ${actor.workshopId} for update`)
      const existing = await tx.select().from(closures).where(eq(closures.workshopId, actor.workshopId))
      const added: Closure[] = []
      const skipped: { date: string; name: string }[] = []
      for (const h of englandWalesBankHolidays(input.year)) {
        if (existing.some((c) => c.startsOn <= h.date && h.date <= c.endsOn)) {
          skipped.push(h)
          continue
        }
        const values = { workshopId: actor.workshopId, name: `Bank holiday: ${h.name}`, startsOn: h.date, endsOn: h.date }
        const [c] = await tx.insert(closures).values(values).returning()
        await audit(tx, actor, 'create', 'closure', c!.id, values)
        added.push(c!)
      }
      return { added, skipped }
    })
  })
  for (const c of out.added) realtime.emit(actor.workshopId, 'masterdata:changed', { entity: 'closure', id: c.id })
  return out
}

export async function removeClosure({ db, realtime }: Deps, actor: Actor, id: number): Promise<ClosureRemoved> {
  await db.transaction((tx) =>
    calendarChange(tx, actor.workshopId, async () => {
      const r = await tx
        .delete(closures)
        .where(and(eq(closures.id, id), eq(closures.workshopId, actor.workshopId)))
        .returning()
      if (!r.length) throw notFound('Closure')
      await audit(tx, actor, 'delete', 'closure', id, {})
    }),
  )
  realtime.emit(actor.workshopId, 'masterdata:changed', { entity: 'closure', id })
  return { ok: true }
}
