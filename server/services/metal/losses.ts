// Metal, losses and tolerances: loss figures from ledger rows, each kind of work's loss tolerance (its own, else the usual
// default), and the owner's loss report by person, kind of work, month or alloy.
import { and, asc, eq, inArray, sql } from 'drizzle-orm'
import { DEFAULT_LOSS_TOLERANCE_PCT, FALLBACK_LOSS_TOLERANCE_PCT, TOLERANCE_NOTE, metalLoss, mgToG } from '../../../shared/domain/metal'
import {
  type LossFigures,
  type LossQuery,
  type MetalMovement,
  type LossRow,
  type LossTable,
  type Tolerance,
  type ToleranceInput,
} from '../../../shared/schemas/metal'
import type { Db, Tx } from '../../db/client'
import { lossTolerances, metalMovements, operationKinds } from '../../db/schema/index'
import { notFound, staleVersion } from '../../errors/app-error'
import type { Actor, Deps } from '../../lib/route'
import { dayjs } from '../../lib/time'
import { audit } from '../audit'
import { workshopZone } from '../estimates'
import { joinedRows, iso, over, atBench } from './common'
import type { Joined } from './common'

/**
 * Figures from ledger rows (corrections included as their signed differences). The fine metal is summed exactly, in thousandths
 * of a milligram (mg × parts per thousand, whole numbers), and rounded to the milligram once: a total of the same rows is the
 * same whatever order they come in (summed as fractions of a milligram, 103.5 mg read 103 or 104 mg by the order of the rows).
 */
export function lossFigures(rows: readonly Pick<Joined, 'm' | 'fineness'>[]): LossFigures {
  let issued = 0,
    fromCustomer = 0,
    piece = 0,
    scrap = 0,
    lemel = 0,
    fineMilliMg = 0
  for (const { m, fineness } of rows) {
    if (m.kind === 'issued') {
      issued += m.weightMg
      if (m.source === 'customer') fromCustomer += m.weightMg
      fineMilliMg += m.weightMg * fineness
    } else if (m.kind === 'returned') {
      if (m.form === 'piece') piece += m.weightMg
      else if (m.form === 'scrap') scrap += m.weightMg
      else lemel += m.weightMg
      fineMilliMg -= m.weightMg * fineness
    }
  }
  const l = metalLoss(issued, { pieceMg: piece, scrapMg: scrap, lemelMg: lemel })
  // Halves up, as before; a whole number over 1000 is exact at the half (103500 / 1000 = 103.5).
  const lossFineMg = Math.round(fineMilliMg / 1000)
  return {
    issuedMg: issued,
    fromCustomerMg: fromCustomer,
    pieceMg: piece,
    scrapMg: scrap,
    lemelMg: lemel,
    returnedMg: l.returnedMg,
    lossMg: l.lossMg,
    lossG: mgToG(l.lossMg),
    lossPct: l.lossPct,
    lossFineMg,
    lossFineG: mgToG(lossFineMg),
  }
}

/**
 * A job bag's (or one alloy's within it) figures: the piece is weighed back after a step and out again for the next, so summing
 * each step's weighings counts the piece once per step (a 9 g ring through five steps read 42 g weighed out, and its loss a fifth
 * of what it is). Here a piece weighed back and then weighed out again (the same alloy, later) is the bag's own metal moving
 * between steps: what it brought in is what was weighed out less those pieces, and what came back as the piece is the piece
 * not weighed out since. The loss in grams is the same as the steps' together; its share is of the metal brought in.
 * `movements`: originals with their corrections folded in, oldest first.
 */
export function bagLossFigures(
  rows: readonly Pick<Joined, 'm' | 'fineness'>[],
  movements: readonly Pick<MetalMovement, 'kind' | 'form' | 'alloyId' | 'effectiveMg' | 'source'>[],
): LossFigures {
  const steps = lossFigures(rows)
  const waiting = new Map<number, number>()
  let carried = 0,
    carriedOwn = 0
  for (const m of movements) {
    if (m.kind === 'issued') {
      const back = waiting.get(m.alloyId) ?? 0
      if (back > 0) {
        const again = Math.min(back, Math.max(0, m.effectiveMg))
        carried += again
        // The customer's own piece weighed out again is still the same metal of theirs.
        if (m.source === 'customer') carriedOwn += again
        waiting.delete(m.alloyId)
      }
    } else if (m.kind === 'returned' && m.form === 'piece') waiting.set(m.alloyId, (waiting.get(m.alloyId) ?? 0) + m.effectiveMg)
  }
  const issued = steps.issuedMg - carried
  const piece = steps.pieceMg - carried
  const l = metalLoss(issued, { pieceMg: piece, scrapMg: steps.scrapMg, lemelMg: steps.lemelMg })
  return {
    ...steps,
    issuedMg: issued,
    fromCustomerMg: steps.fromCustomerMg - carriedOwn,
    pieceMg: piece,
    returnedMg: l.returnedMg,
    lossMg: l.lossMg,
    lossG: mgToG(l.lossMg),
    lossPct: l.lossPct,
  }
}

/** Each kind of work of the workshop with its loss tolerance (its own, else the usual default, else the fallback). */
export async function listTolerances(db: Tx, workshopId: number): Promise<Tolerance[]> {
  const rows = await db
    .select({ k: operationKinds, t: lossTolerances.tolerancePct, v: lossTolerances.version })
    .from(operationKinds)
    .leftJoin(lossTolerances, eq(lossTolerances.kindId, operationKinds.id))
    .where(eq(operationKinds.workshopId, workshopId))
    .orderBy(asc(operationKinds.name))
  return rows.map(({ k, t, v }) => ({
    kindId: k.id,
    code: k.code,
    name: k.name,
    tolerancePct: t ?? DEFAULT_LOSS_TOLERANCE_PCT[k.code] ?? FALLBACK_LOSS_TOLERANCE_PCT,
    isDefault: t === null,
    version: v ?? 0,
  }))
}

export async function setTolerance({ db, realtime }: Deps, actor: Actor, kindId: number, input: ToleranceInput): Promise<Tolerance> {
  const t = await db.transaction(async (tx) => {
    const [k] = await tx
      .select()
      .from(operationKinds)
      .where(and(eq(operationKinds.id, kindId), eq(operationKinds.workshopId, actor.workshopId)))
    if (!k) throw notFound('Kind of work')
    const [before] = await tx.select().from(lossTolerances).where(eq(lossTolerances.kindId, kindId)).for('update')
    // A kind still on the usual default is at version 0; its first own figure is version 1. Two first edits at once: one inserts, the other finds the row and is stale.
    let row: { version: number } | undefined
    if (before) {
      if (before.version !== input.version) throw staleVersion('Loss tolerance')
      ;[row] = await tx
        .update(lossTolerances)
        .set({ tolerancePct: input.tolerancePct, version: sql`${lossTolerances.version} + 1` })
        .where(and(eq(lossTolerances.kindId, kindId), eq(lossTolerances.version, input.version)))
        .returning({ version: lossTolerances.version })
    } else {
      if (input.version !== 0) throw staleVersion('Loss tolerance')
      ;[row] = await tx
        .insert(lossTolerances)
        .values({ kindId, tolerancePct: input.tolerancePct, version: 1 })
        .onConflictDoNothing()
        .returning({ version: lossTolerances.version })
    }
    if (!row) throw staleVersion('Loss tolerance')
    await audit(tx, actor, 'set-tolerance', 'operation-kind', kindId, {
      kind: k.code,
      from: before?.tolerancePct ?? null,
      to: input.tolerancePct,
      version: row.version,
    })
    return { kindId, code: k.code, name: k.name, tolerancePct: input.tolerancePct, isDefault: false, version: row.version }
  })
  realtime.emit(actor.workshopId, 'masterdata:changed', { entity: 'loss-tolerance', id: kindId })
  return t
}

// ---------------------------------------------------------------------------------------------------------------
// The owner's loss figures

/**
 * Loss by person, kind of work, month or alloy. The unit is one person's work on one step of one job bag in one alloy (its issues
 * and returns); a unit counts in the month of its last entry, and is over tolerance when its loss % exceeds its kind's.
 */
export async function lossReport(db: Db, workshopId: number, q: LossQuery): Promise<LossTable> {
  const tz = await workshopZone(db, workshopId)
  const rows = await joinedRows(
    db,
    and(eq(metalMovements.workshopId, workshopId), inArray(metalMovements.kind, ['issued', 'returned']), sql`${metalMovements.jobBagId} is not null`),
  )
  const tolerances = new Map((await listTolerances(db, workshopId)).map((t) => [t.kindId, t]))
  const units = new Map<string, Joined[]>()
  for (const r of rows) {
    const k = `${r.m.jobBagId}:${r.m.operationId}:${r.m.personId}:${r.m.alloyId}`
    units.set(k, [...(units.get(k) ?? []), r])
  }
  const groups = new Map<string, { label: string; units: { rows: Joined[]; over: boolean }[] }>()
  let leftAtBench = 0
  for (const rs of units.values()) {
    const last = rs.at(-1)!
    const month = dayjs(iso(last.m.recordedAt)).tz(tz).format('YYYY-MM')
    const day = dayjs(iso(last.m.recordedAt)).tz(tz).format('YYYY-MM-DD')
    if ((q.from && day < q.from) || (q.to && day > q.to)) continue
    const kind = last.kindId !== null ? tolerances.get(last.kindId) : undefined
    const f = lossFigures(rs)
    // The metal is at the bench, not lost: left out until it comes back.
    if (atBench(f, last.opStatus)) {
      leftAtBench++
      continue
    }
    const unit = { rows: rs, over: over(f, kind ? kind.tolerancePct : null) }
    const { key, label } =
      q.groupBy === 'person'
        ? { key: String(last.m.personId ?? 0), label: last.personName ?? 'No one named' }
        : q.groupBy === 'kind'
          ? { key: String(last.kindId ?? 0), label: kind?.name ?? 'Not tied to a step' }
          : q.groupBy === 'alloy'
            ? { key: String(last.m.alloyId), label: last.alloyName }
            : { key: month, label: month }
    const g = groups.get(key) ?? { label, units: [] }
    g.units.push(unit)
    groups.set(key, g)
  }
  const row = (key: string, label: string, us: { rows: Joined[]; over: boolean }[]): LossRow => {
    const f = lossFigures(us.flatMap((u) => u.rows))
    return {
      key,
      label,
      n: us.length,
      issuedG: mgToG(f.issuedMg),
      returnedG: mgToG(f.returnedMg),
      lossG: f.lossG,
      lossPct: f.lossPct,
      lossFineG: f.lossFineG,
      overTolerance: us.filter((u) => u.over).length,
    }
  }
  const out = [...groups].map(([key, g]) => row(key, g.label, g.units))
  out.sort(q.groupBy === 'month' ? (a, b) => a.key.localeCompare(b.key) : (a, b) => b.lossG - a.lossG || a.label.localeCompare(b.label))
  const filter = Object.fromEntries(Object.entries({ from: q.from, to: q.to }).filter(([, v]) => v !== undefined))
  return {
    groupBy: q.groupBy,
    filter,
    rows: out,
    total: row(
      'total',
      'Total',
      [...groups.values()].flatMap((g) => g.units),
    ),
    atBench: leftAtBench,
    toleranceNote: TOLERANCE_NOTE,
  }
}
