// Metal, helpers shared by the modules of this folder (none is public): the per-workshop lock for metal writes, the workshop's
// today, the price in force per alloy, the alloy check, writing one ledger row (clientId replay, audit, event after commit),
// reading ledger rows with their corrections folded in, and the over-tolerance test.
import { and, asc, eq, inArray, lte, sql } from 'drizzle-orm'
import { mgToG } from '../../../shared/domain/metal'
import { FINISHED_OPERATION } from '../../../shared/domain/status'
import { type LossFigures, type MetalMovement } from '../../../shared/schemas/metal'
import type { Tx } from '../../db/client'
import { alloyPrices, alloys, metalMovements, operations, people, users } from '../../db/schema/index'
import { AppError, invalid } from '../../errors/app-error'
import type { Actor, Deps } from '../../lib/route'
import { dayjs } from '../../lib/time'
import { audit } from '../audit'
import { workshopZone } from '../estimates'
import { isUniqueViolation } from '../versioned'
import { LOCK } from '../../lib/locks'

export type MovementRow = typeof metalMovements.$inferSelect

/** One lock per workshop for metal writes, so the checks (returns against issues, lot status) see a settled ledger. */
export const lockMetal = (tx: Tx, workshopId: number) => tx.execute(sql`select pg_advisory_xact_lock(${LOCK.metalLedger}, ${workshopId})`)

export const today = async (db: Tx, workshopId: number) =>
  dayjs()
    .tz(await workshopZone(db, workshopId))
    .format('YYYY-MM-DD')

/** The price in force on a day for each alloy (latest effective date on or before it). */
export async function currentPrices(db: Tx, alloyIds: number[], day: string): Promise<Map<number, { pricePerGramMinor: number; effectiveOn: string }>> {
  if (!alloyIds.length) return new Map()
  const rows = await db
    .select()
    .from(alloyPrices)
    .where(and(inArray(alloyPrices.alloyId, alloyIds), lte(alloyPrices.effectiveOn, day)))
    .orderBy(asc(alloyPrices.effectiveOn), asc(alloyPrices.id))
  const m = new Map<number, { pricePerGramMinor: number; effectiveOn: string }>()
  for (const r of rows) m.set(r.alloyId, { pricePerGramMinor: r.pricePerGramMinor, effectiveOn: r.effectiveOn })
  return m
}

export async function requireAlloy(tx: Tx, workshopId: number, alloyId: number, field = 'alloyId', mustBeActive = true) {
  const [a] = await tx
    .select()
    .from(alloys)
    .where(and(eq(alloys.id, alloyId), eq(alloys.workshopId, workshopId)))
  if (!a) throw invalid(field, 'is not an alloy of this workshop')
  if (mustBeActive && !a.active) throw invalid(field, `${a.name} is switched off; switch it on in the alloy list first`)
  return a
}

export type NewMovement = Omit<typeof metalMovements.$inferInsert, 'id' | 'workshopId' | 'recordedBy' | 'recordedAt' | 'createdAt'>

/**
 * Writes one ledger row (or, for a clientId seen before in this workshop, finds the first one): lock, checks, insert, audit, then
 * the event after commit. Returns the row and whether it was a replay.
 */
export async function record(
  deps: Deps,
  actor: Actor,
  values: NewMovement,
  action: string,
  check: (tx: Tx) => Promise<Partial<NewMovement> | void>,
): Promise<{ row: MovementRow; replayed: boolean }> {
  const { db, realtime } = deps
  const byClientId = async (tx: Tx) => {
    if (!values.clientId) return null
    // Client ids are unique within a workshop: another workshop's entry with the same id is not this one.
    const [prev] = await tx
      .select()
      .from(metalMovements)
      .where(and(eq(metalMovements.workshopId, actor.workshopId), eq(metalMovements.clientId, values.clientId)))
    if (!prev) return null
    if (prev.kind !== values.kind || (values.correctsId ?? null) !== prev.correctsId) {
      throw new AppError({
        code: 'conflict',
        message: 'clientId: was used for another entry; send a new one',
        fields: { clientId: 'was used for another entry' },
      })
    }
    return prev
  }
  let out: { row: MovementRow; replayed: boolean }
  try {
    out = await db.transaction(async (tx) => {
      await lockMetal(tx, actor.workshopId)
      const prev = await byClientId(tx)
      if (prev) return { row: prev, replayed: true }
      const more = await check(tx)
      const [row] = await tx
        .insert(metalMovements)
        .values({ ...values, ...(more ?? {}), workshopId: actor.workshopId, recordedBy: actor.userId, recordedAt: new Date().toISOString() })
        .returning()
      await audit(tx, actor, action, 'metal-movement', row!.id, {
        kind: row!.kind,
        alloyId: row!.alloyId,
        weightMg: row!.weightMg,
        source: row!.source,
        form: row!.form,
        jobBagId: row!.jobBagId,
        operationId: row!.operationId,
        personId: row!.personId,
        refiningLotId: row!.refiningLotId,
        correctsId: row!.correctsId,
        reason: row!.reason,
        clientId: row!.clientId,
      })
      return { row: row!, replayed: false }
    })
  } catch (err) {
    // Two replays at once: the second insert hits the unique clientId; answer the row the first one wrote.
    if (!values.clientId || !isUniqueViolation(err)) throw err
    const prev = await byClientId(db)
    if (!prev) throw err
    out = { row: prev, replayed: true }
  }
  if (!out.replayed)
    realtime.emit(actor.workshopId, 'metal:recorded', {
      id: out.row.id,
      kind: out.row.kind,
      alloyId: out.row.alloyId,
      jobBagId: out.row.jobBagId,
      refiningLotId: out.row.refiningLotId,
    })
  return out
}

export interface Joined {
  m: MovementRow
  alloyName: string
  fineness: number
  opName: string | null
  kindId: number | null
  /** The step's status (null when not tied to a step). */
  opStatus: string | null
  personName: string | null
  recordedBy: string | null
}

export async function joinedRows(db: Tx, where: ReturnType<typeof and>): Promise<Joined[]> {
  return db
    .select({
      m: metalMovements,
      alloyName: alloys.name,
      fineness: alloys.fineness,
      opName: operations.name,
      kindId: operations.kindId,
      opStatus: operations.status,
      personName: people.name,
      recordedBy: users.name,
    })
    .from(metalMovements)
    .innerJoin(alloys, eq(alloys.id, metalMovements.alloyId))
    .leftJoin(operations, eq(operations.id, metalMovements.operationId))
    .leftJoin(people, eq(people.id, metalMovements.personId))
    .leftJoin(users, eq(users.id, metalMovements.recordedBy))
    .where(where)
    .orderBy(asc(metalMovements.recordedAt), asc(metalMovements.id))
}

export const iso = (v: unknown) => new Date(v as string).toISOString()

/** Original rows with their corrections folded in (effective weight), newest last. */
export function toMovements(rows: Joined[]): MetalMovement[] {
  const corrections = new Map<number, Joined[]>()
  for (const r of rows) if (r.m.correctsId !== null) corrections.set(r.m.correctsId, [...(corrections.get(r.m.correctsId) ?? []), r])
  return rows
    .filter((r) => r.m.correctsId === null)
    .map((r) => {
      const cs = corrections.get(r.m.id) ?? []
      return {
        id: r.m.id,
        kind: r.m.kind,
        alloyId: r.m.alloyId,
        alloyName: r.alloyName,
        weightMg: r.m.weightMg,
        weightG: mgToG(r.m.weightMg),
        source: r.m.source ?? null,
        form: r.m.form ?? null,
        jobBagId: r.m.jobBagId,
        operationId: r.m.operationId,
        operationName: r.opName,
        personId: r.m.personId,
        personName: r.personName,
        refiningLotId: r.m.refiningLotId,
        costMinor: r.m.costMinor,
        correctsId: null,
        reason: r.m.reason,
        recordedBy: r.recordedBy,
        recordedAt: iso(r.m.recordedAt),
        clientId: r.m.clientId,
        effectiveMg: r.m.weightMg + cs.reduce((s, c) => s + c.m.weightMg, 0),
        corrections: cs.map((c) => ({ id: c.m.id, weightMg: c.m.weightMg, reason: c.m.reason, recordedBy: c.recordedBy, recordedAt: iso(c.m.recordedAt) })),
      }
    })
}

/** Out to a step still open (status given, not done or skipped) with nothing back yet: the metal is at the bench, not lost. */
export const atBench = (f: LossFigures, stepStatus: string | null | undefined) =>
  f.issuedMg > 0 && f.returnedMg === 0 && !!stepStatus && !(FINISHED_OPERATION as readonly string[]).includes(stepStatus)
export const over = (f: LossFigures, tol: number | null) => tol !== null && f.issuedMg > 0 && f.lossPct !== null && f.lossPct > tol
