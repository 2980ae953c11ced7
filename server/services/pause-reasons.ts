// The workshop's pause reasons: listed for every screen, added and changed by the owner, and checked when a bench pauses.
import { and, asc, eq, ne, sql } from 'drizzle-orm'
import { DEFAULT_PAUSE_REASONS, FINISHED, pauseReasonCode } from '../../shared/domain/pause-reasons'
import type { PauseReason, PauseReasonInput, PauseReasonUpdate } from '../../shared/schemas/pause-reason'
import type { Tx } from '../db/client'
import { pauseReasons } from '../db/schema/index'
import { invalid } from '../errors/app-error'
import type { Actor, Deps } from '../lib/route'
import { audit } from './audit'
import { requireOwned, updateVersioned } from './versioned'
import { LOCK } from '../lib/locks'

const out = (r: typeof pauseReasons.$inferSelect): PauseReason => ({
  id: r.id,
  code: r.code,
  label: r.label,
  needsNote: r.needsNote,
  active: r.active,
  sort: r.sort,
  version: r.version,
})

/** A workshop that has none yet (new, or from before reasons were its own) gets the defaults, once. */
async function ensureDefaults(tx: Tx, workshopId: number) {
  const [any] = await tx.select({ id: pauseReasons.id }).from(pauseReasons).where(eq(pauseReasons.workshopId, workshopId)).limit(1)
  if (any) return
  await tx
    .insert(pauseReasons)
    .values(DEFAULT_PAUSE_REASONS.map((d) => ({ workshopId, ...d })))
    .onConflictDoNothing()
}

/** Every reason of the workshop, switched-off ones too (history still names them), in the order the bench shows them. */
export async function listPauseReasons(db: Tx, workshopId: number): Promise<PauseReason[]> {
  await ensureDefaults(db, workshopId)
  const rows = await db.select().from(pauseReasons).where(eq(pauseReasons.workshopId, workshopId)).orderBy(asc(pauseReasons.sort), asc(pauseReasons.id))
  return rows.map(out)
}

/** The reason a bench gave, if it is one of the workshop's and still on; else 400 on `reason` (and on `note` when it needs one). */
export async function requirePauseReason(tx: Tx, workshopId: number, code: string, note: string): Promise<PauseReason> {
  const all = await listPauseReasons(tx, workshopId)
  const r = all.find((x) => x.code === code)
  const offered = all
    .filter((x) => x.active)
    .map((x) => x.code)
    .join(', ')
  if (!r) throw invalid('reason', `is not one of this workshop’s pause reasons (${offered})`)
  if (!r.active) throw invalid('reason', `“${r.label}” is switched off in the workshop settings; choose another (${offered})`)
  if (r.needsNote && !note.trim()) throw invalid('note', `say briefly why (“${r.label}” needs a note)`)
  return r
}

/** How a time record may end when the office adds it: finished, or one of the workshop's reasons (switched-off ones too, for past work). */
export async function requireEndReason(tx: Tx, workshopId: number, code: string) {
  if (code === FINISHED) return
  const all = await listPauseReasons(tx, workshopId)
  if (!all.some((x) => x.code === code))
    throw invalid('endReason', `must be finished or one of this workshop’s pause reasons (${all.map((x) => x.code).join(', ')})`)
}

async function labelFree(tx: Tx, workshopId: number, label: string, exceptId: number | null) {
  const [clash] = await tx
    .select({ id: pauseReasons.id })
    .from(pauseReasons)
    .where(
      and(
        eq(pauseReasons.workshopId, workshopId),
        sql`lower(${pauseReasons.label}) = lower(${label})`,
        exceptId === null ? undefined : ne(pauseReasons.id, exceptId),
      ),
    )
  if (clash) throw invalid('label', 'is a pause reason already')
}

export async function createPauseReason({ db, realtime }: Deps, actor: Actor, input: PauseReasonInput): Promise<PauseReason> {
  const r = await db.transaction(async (tx) => {
    await tx.execute(sql`select pg_advisory_xact_lock(${LOCK.pauseReasons}, ${actor.workshopId})`)
    const all = await listPauseReasons(tx, actor.workshopId)
    await labelFree(tx, actor.workshopId, input.label, null)
    const base = pauseReasonCode(input.label)
    const taken = new Set([...all.map((x) => x.code), FINISHED])
    let code = base
    for (let i = 2; taken.has(code); i++) code = `${base}-${i}`
    // New reasons go after the others but before the catch-all "Other" (sort 1000).
    const sort = Math.max(0, ...all.filter((x) => x.sort < 1000).map((x) => x.sort)) + 10
    const [row] = await tx.insert(pauseReasons).values({ workshopId: actor.workshopId, code, label: input.label, needsNote: input.needsNote, sort }).returning()
    await audit(tx, actor, 'create', 'pause-reason', row!.id, { code, label: input.label, needsNote: input.needsNote })
    return out(row!)
  })
  realtime.emit(actor.workshopId, 'masterdata:changed', { entity: 'pause-reason', id: r.id })
  return r
}

export async function updatePauseReason({ db, realtime }: Deps, actor: Actor, id: number, input: PauseReasonUpdate): Promise<PauseReason> {
  const { version, ...values } = input
  const r = await db.transaction(async (tx) => {
    await tx.execute(sql`select pg_advisory_xact_lock(${LOCK.pauseReasons}, ${actor.workshopId})`)
    const before = await requireOwned(tx, pauseReasons, 'Pause reason', id, actor.workshopId)
    if (values.label !== undefined) await labelFree(tx, actor.workshopId, values.label, id)
    if (values.active === false && before.active) {
      const [{ n }] = (await tx
        .select({ n: sql<number>`count(*)::int` })
        .from(pauseReasons)
        .where(and(eq(pauseReasons.workshopId, actor.workshopId), eq(pauseReasons.active, true), ne(pauseReasons.id, id)))) as [{ n: number }]
      if (n === 0) throw invalid('active', 'at least one pause reason must stay on, or the bench cannot pause')
    }
    const row = await updateVersioned(tx, pauseReasons, 'Pause reason', { id, workshopId: actor.workshopId, version, values })
    await audit(tx, actor, 'update', 'pause-reason', id, {
      code: before.code,
      from: { label: before.label, needsNote: before.needsNote, active: before.active },
      to: values,
    })
    return out(row)
  })
  realtime.emit(actor.workshopId, 'masterdata:changed', { entity: 'pause-reason', id: r.id })
  return r
}
