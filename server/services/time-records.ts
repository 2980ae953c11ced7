// Time records: opening and closing them at the bench, their effective values after corrections, and managers' corrections.
import { and, asc, eq, inArray, isNull, sql } from 'drizzle-orm'
import type { EffectiveTimeRecord } from '../../shared/schemas/job-bag'
import type { TimeRecordAdd, TimeRecordCorrection } from '../../shared/schemas/bench-floor'
import type { Tx } from '../db/client'
import { benches, jobBags, operations, people, timeRecordCorrections, timeRecords, users } from '../db/schema/index'
import { AppError, invalid, notFound } from '../errors/app-error'
import type { Actor, Deps } from '../lib/route'
import { audit } from './audit'
import { requireEndReason } from './pause-reasons'

const minutesBetween = (a: string, b: string) => Math.max(0, (Date.parse(b) - Date.parse(a)) / 60_000)
const round1 = (n: number) => Math.round(n * 10) / 10
const iso = (s: string | null) => (s === null ? null : new Date(s).toISOString())

/** Time records of some operations with corrections applied (the newest correction of a record wins). */
export async function effectiveRecords(tx: Tx, operationIds: number[], now = new Date()): Promise<EffectiveTimeRecord[]> {
  if (!operationIds.length) return []
  const rows = await tx
    .select({ r: timeRecords, personName: people.name })
    .from(timeRecords)
    .innerJoin(people, eq(people.id, timeRecords.personId))
    .where(inArray(timeRecords.operationId, operationIds))
    .orderBy(asc(timeRecords.startedAt), asc(timeRecords.id))
  const ids = rows.map((x) => x.r.id)
  const corr = ids.length
    ? await tx
        .select({ c: timeRecordCorrections, by: users.name })
        .from(timeRecordCorrections)
        .innerJoin(users, eq(users.id, timeRecordCorrections.correctedBy))
        .where(inArray(timeRecordCorrections.timeRecordId, ids))
        .orderBy(asc(timeRecordCorrections.id))
    : []
  return rows.map(({ r, personName }) => {
    const mine = corr.filter((c) => c.c.timeRecordId === r.id)
    const last = [...mine].reverse().find((c) => c.c.kind !== 'add')?.c
    const voided = last?.kind === 'void'
    const startedAt = iso(last?.kind === 'change' && last.startedAt ? last.startedAt : r.startedAt)!
    const endedAt = iso(last?.kind === 'change' && last.endedAt ? last.endedAt : r.endedAt)
    const minutes = voided ? 0 : round1(minutesBetween(startedAt, endedAt ?? now.toISOString()))
    return {
      id: r.id,
      operationId: r.operationId,
      personId: r.personId,
      personName,
      benchId: r.benchId,
      startedAt,
      endedAt,
      endReason: r.endReason,
      note: r.note,
      minutes,
      voided,
      recordedStartedAt: iso(r.startedAt)!,
      recordedEndedAt: iso(r.endedAt),
      corrections: mine.map(({ c, by }) => ({
        id: c.id,
        kind: c.kind,
        startedAt: iso(c.startedAt),
        endedAt: iso(c.endedAt),
        reason: c.reason,
        by,
        at: new Date(c.createdAt).toISOString(),
      })),
    }
  })
}

/** Actual minutes per operation: the sum of its effective records (an open one counts up to now). */
export function actualMinutesByOperation(records: EffectiveTimeRecord[]): Map<number, number> {
  const m = new Map<number, number>()
  for (const r of records) m.set(r.operationId, round1((m.get(r.operationId) ?? 0) + r.minutes))
  return m
}

export async function openRecordOf(tx: Tx, operationId: number) {
  const [r] = await tx
    .select()
    .from(timeRecords)
    .where(and(eq(timeRecords.operationId, operationId), isNull(timeRecords.endedAt)))
  return r ?? null
}

export async function openRecord(tx: Tx, o: { operationId: number; personId: number; benchId: number | null; at: Date; clientId: string }) {
  const [r] = await tx
    .insert(timeRecords)
    .values({ operationId: o.operationId, personId: o.personId, benchId: o.benchId, startedAt: o.at.toISOString(), clientId: o.clientId })
    .returning()
  return r!
}

/** Closes the open record of an operation (if any) with its end reason. */
export async function closeRecord(tx: Tx, operationId: number, at: Date, endReason: string, note: string) {
  const [r] = await tx
    .update(timeRecords)
    .set({ endedAt: at.toISOString(), endReason, note })
    .where(and(eq(timeRecords.operationId, operationId), isNull(timeRecords.endedAt)))
    .returning()
  return r ?? null
}

async function recordInWorkshop(tx: Tx, workshopId: number, id: number) {
  const [row] = await tx
    .select({ r: timeRecords, workshopId: jobBags.workshopId, opVersion: operations.version, opStatus: operations.status })
    .from(timeRecords)
    .innerJoin(operations, eq(operations.id, timeRecords.operationId))
    .innerJoin(jobBags, eq(jobBags.id, operations.jobBagId))
    .where(and(eq(timeRecords.id, id), eq(jobBags.workshopId, workshopId)))
  if (!row) throw notFound('Time record')
  return row
}

/** A manager changes a record's start/end or voids it; the record itself stays as it was written. */
export async function correctTimeRecord({ db, realtime }: Deps, actor: Actor, id: number, input: TimeRecordCorrection): Promise<EffectiveTimeRecord> {
  const out = await db.transaction(async (tx) => {
    const { r } = await recordInWorkshop(tx, actor.workshopId, id)
    const [current] = await effectiveRecords(tx, [r.operationId]).then((all) => all.filter((x) => x.id === id))
    const startedAt = input.startedAt ?? current!.startedAt
    const endedAt = input.endedAt ?? current!.endedAt
    if (!input.void) {
      if (!endedAt) throw invalid('endedAt', 'is needed: the record is still open (pause or finish the work first)')
      if (Date.parse(endedAt) <= Date.parse(startedAt)) throw invalid('endedAt', 'must be after the start')
      if (Date.parse(endedAt) > Date.now() + 60_000) throw invalid('endedAt', 'must not be in the future')
    } else if (!r.endedAt) {
      throw new AppError({ code: 'unprocessable', message: 'An open time record cannot be voided; pause or finish the work first' })
    }
    await tx.insert(timeRecordCorrections).values({
      workshopId: actor.workshopId,
      timeRecordId: id,
      kind: input.void ? 'void' : 'change',
      startedAt: input.void ? null : startedAt,
      endedAt: input.void ? null : endedAt,
      previousStartedAt: current!.startedAt,
      previousEndedAt: current!.endedAt,
      reason: input.reason,
      correctedBy: actor.userId,
    })
    const bumped = await bumpOperation(tx, r.operationId)
    await audit(tx, actor, input.void ? 'void-time' : 'correct-time', 'operation', r.operationId, {
      timeRecordId: id,
      from: { startedAt: current!.startedAt, endedAt: current!.endedAt },
      to: input.void ? 'void' : { startedAt, endedAt },
      reason: input.reason,
    })
    return { operationId: r.operationId, ...bumped }
  })
  realtime.emit(actor.workshopId, 'operation:changed', { id: out.operationId, version: out.version, status: out.status })
  const [rec] = (await effectiveRecords(db, [out.operationId])).filter((x) => x.id === id)
  return rec!
}

/** A manager adds a record that was never taken (forgot to tap); kept with who and why. */
export async function addTimeRecord({ db, realtime }: Deps, actor: Actor, operationId: number, input: TimeRecordAdd): Promise<EffectiveTimeRecord> {
  const out = await db.transaction(async (tx) => {
    const [op] = await tx
      .select({ id: operations.id })
      .from(operations)
      .innerJoin(jobBags, eq(jobBags.id, operations.jobBagId))
      .where(and(eq(operations.id, operationId), eq(jobBags.workshopId, actor.workshopId)))
    if (!op) throw notFound('Operation')
    const [p] = await tx
      .select({ id: people.id })
      .from(people)
      .where(and(eq(people.id, input.personId), eq(people.workshopId, actor.workshopId)))
    if (!p) throw invalid('personId', 'is not a person of this workshop')
    if (input.benchId) {
      const [b] = await tx
        .select({ id: benches.id })
        .from(benches)
        .where(and(eq(benches.id, input.benchId), eq(benches.workshopId, actor.workshopId)))
      if (!b) throw invalid('benchId', 'is not a bench of this workshop')
    }
    if (Date.parse(input.endedAt) > Date.now() + 60_000) throw invalid('endedAt', 'must not be in the future')
    await requireEndReason(tx, actor.workshopId, input.endReason)
    const [r] = await tx
      .insert(timeRecords)
      .values({
        operationId,
        personId: input.personId,
        benchId: input.benchId,
        startedAt: input.startedAt,
        endedAt: input.endedAt,
        endReason: input.endReason,
        note: '',
      })
      .returning()
    await tx.insert(timeRecordCorrections).values({
      workshopId: actor.workshopId,
      timeRecordId: r!.id,
      kind: 'add',
      startedAt: input.startedAt,
      endedAt: input.endedAt,
      reason: input.reason,
      correctedBy: actor.userId,
    })
    const bumped = await bumpOperation(tx, operationId)
    await audit(tx, actor, 'add-time', 'operation', operationId, {
      timeRecordId: r!.id,
      personId: input.personId,
      startedAt: input.startedAt,
      endedAt: input.endedAt,
      reason: input.reason,
    })
    return { id: r!.id, ...bumped }
  })
  realtime.emit(actor.workshopId, 'operation:changed', { id: operationId, version: out.version, status: out.status })
  const [rec] = (await effectiveRecords(db, [operationId])).filter((x) => x.id === out.id)
  return rec!
}

async function bumpOperation(tx: Tx, operationId: number) {
  const [u] = await tx
    .update(operations)
    .set({ version: sql`${operations.version} + 1` })
    .where(eq(operations.id, operationId))
    .returning({ version: operations.version, status: operations.status })
  return u!
}
