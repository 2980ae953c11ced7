// Metal, the ledger: weighings out to the bench and back, purchases, stock adjustments and corrections (a new row naming the row
// it corrects, who and why), listing the ledger, and a job bag's metal account (loss by step, person and alloy; the hallmark
// check). A write carrying a clientId that was seen before answers the first row instead of writing a second.
import { and, asc, eq, sql } from 'drizzle-orm'
import {
  FALLBACK_LOSS_TOLERANCE_PCT,
  HALLMARK_THRESHOLD_G,
  PIECE_METAL_ALLOY,
  TOLERANCE_NOTE,
  gToMg,
  mgToG,
  needsHallmark,
  worksOnCustomersPiece,
  type AlloyMetal,
} from '../../../shared/domain/metal'
import {
  type AdjustmentInput,
  type CorrectionInput,
  type IssueInput,
  type JobBagMetal,
  type MetalMovement,
  type MovementQuery,
  type PurchaseInput,
  type RecordedCorrection,
  type RecordedMovement,
  type ReturnInput,
} from '../../../shared/schemas/metal'
import type { Db, Tx } from '../../db/client'
import { alloys, jobBags, metalMovements, operationKinds, operations, people, refiningLots } from '../../db/schema/index'
import { AppError, invalid, notFound } from '../../errors/app-error'
import type { Actor, Deps } from '../../lib/route'
import { requireAlloy, record, joinedRows, toMovements, over, atBench } from './common'
import type { Joined } from './common'
import { bagLossFigures, lossFigures, listTolerances } from './losses'

async function requireBag(tx: Tx, workshopId: number, jobBagId: number) {
  const [b] = await tx
    .select()
    .from(jobBags)
    .where(and(eq(jobBags.id, jobBagId), eq(jobBags.workshopId, workshopId)))
  if (!b) throw invalid('jobBagId', 'is not a job bag of this workshop')
  return b
}
async function requirePerson(tx: Tx, workshopId: number, personId: number) {
  const [p] = await tx
    .select({ id: people.id })
    .from(people)
    .where(and(eq(people.id, personId), eq(people.workshopId, workshopId)))
  if (!p) throw invalid('personId', 'is not a person of this workshop')
}
async function requireStep(tx: Tx, jobBagId: number, operationId: number | undefined) {
  if (operationId === undefined) return
  const [o] = await tx
    .select({ id: operations.id })
    .from(operations)
    .where(and(eq(operations.id, operationId), eq(operations.jobBagId, jobBagId)))
  if (!o) throw invalid('operationId', 'is not a step of this job bag')
}

/** Issued and returned (after corrections) of one alloy in one job bag, in mg. */
async function bagTotals(tx: Tx, jobBagId: number, alloyId: number) {
  const [t] = await tx
    .select({
      issued: sql<number>`coalesce(sum(case when ${metalMovements.kind} = 'issued' then ${metalMovements.weightMg} end), 0)::int`,
      returned: sql<number>`coalesce(sum(case when ${metalMovements.kind} = 'returned' then ${metalMovements.weightMg} end), 0)::int`,
    })
    .from(metalMovements)
    .where(and(eq(metalMovements.jobBagId, jobBagId), eq(metalMovements.alloyId, alloyId)))
  return t!
}

export async function issueMetal(deps: Deps, actor: Actor, input: IssueInput): Promise<RecordedMovement> {
  const r = await record(
    deps,
    actor,
    {
      kind: 'issued',
      alloyId: input.alloyId,
      weightMg: gToMg(input.weightG),
      source: input.source,
      jobBagId: input.jobBagId,
      operationId: input.operationId ?? null,
      personId: input.personId,
      reason: input.reason,
      clientId: input.clientId ?? null,
    },
    'issue',
    async (tx) => {
      await requireBag(tx, actor.workshopId, input.jobBagId)
      await requireAlloy(tx, actor.workshopId, input.alloyId)
      await requirePerson(tx, actor.workshopId, input.personId)
      await requireStep(tx, input.jobBagId, input.operationId)
    },
  )
  return { replayed: r.replayed, movement: await movementById(deps.db, actor.workshopId, r.row.id) }
}

export async function returnMetal(deps: Deps, actor: Actor, input: ReturnInput): Promise<RecordedMovement> {
  const weightMg = gToMg(input.weightG)
  const r = await record(
    deps,
    actor,
    {
      kind: 'returned',
      alloyId: input.alloyId,
      weightMg,
      form: input.form,
      jobBagId: input.jobBagId,
      operationId: input.operationId ?? null,
      personId: input.personId,
      reason: input.reason,
      clientId: input.clientId ?? null,
    },
    'return',
    async (tx) => {
      await requireBag(tx, actor.workshopId, input.jobBagId)
      await requireAlloy(tx, actor.workshopId, input.alloyId, 'alloyId', false)
      await requirePerson(tx, actor.workshopId, input.personId)
      await requireStep(tx, input.jobBagId, input.operationId)
      const t = await bagTotals(tx, input.jobBagId, input.alloyId)
      if (t.returned + weightMg > t.issued && !input.reason) {
        throw invalid(
          'reason',
          `returns would come to ${mgToG(t.returned + weightMg)} g, more than the ${mgToG(t.issued)} g issued to this job bag; say why (e.g. the customer's own metal was not weighed in)`,
        )
      }
    },
  )
  return { replayed: r.replayed, movement: await movementById(deps.db, actor.workshopId, r.row.id) }
}

export async function purchaseMetal(deps: Deps, actor: Actor, input: PurchaseInput): Promise<RecordedMovement> {
  const r = await record(
    deps,
    actor,
    {
      kind: 'bought',
      alloyId: input.alloyId,
      weightMg: gToMg(input.weightG),
      costMinor: input.costMinor ?? null,
      reason: input.reason,
      clientId: input.clientId ?? null,
    },
    'buy',
    async (tx) => {
      await requireAlloy(tx, actor.workshopId, input.alloyId, 'alloyId', false)
    },
  )
  return { replayed: r.replayed, movement: await movementById(deps.db, actor.workshopId, r.row.id) }
}

export async function adjustStock(deps: Deps, actor: Actor, input: AdjustmentInput): Promise<RecordedMovement> {
  const r = await record(
    deps,
    actor,
    {
      kind: 'adjusted',
      alloyId: input.alloyId,
      weightMg: gToMg(input.weightG),
      reason: input.reason,
      clientId: input.clientId ?? null,
    },
    'adjust',
    async (tx) => {
      await requireAlloy(tx, actor.workshopId, input.alloyId, 'alloyId', false)
    },
  )
  return { replayed: r.replayed, movement: await movementById(deps.db, actor.workshopId, r.row.id) }
}

/** A correction: a new row of the same kind carrying the difference to the right weight, naming the row, who and why. */
export async function correctMovement(deps: Deps, actor: Actor, id: number, input: CorrectionInput): Promise<RecordedCorrection> {
  const [orig] = await deps.db
    .select()
    .from(metalMovements)
    .where(and(eq(metalMovements.id, id), eq(metalMovements.workshopId, actor.workshopId)))
  if (!orig) throw notFound('Metal entry')
  if (orig.correctsId !== null) throw invalid('id', `is a correction; correct the original entry (${orig.correctsId}) instead`)
  if (orig.kind === 'adjusted') throw invalid('id', 'is a stock adjustment; record another adjustment instead')
  const r = await record(
    deps,
    actor,
    {
      kind: orig.kind,
      alloyId: orig.alloyId,
      weightMg: 0,
      source: orig.source,
      form: orig.form,
      jobBagId: orig.jobBagId,
      operationId: orig.operationId,
      personId: orig.personId,
      refiningLotId: orig.refiningLotId,
      costMinor: null,
      correctsId: orig.id,
      reason: input.reason,
      clientId: input.clientId ?? null,
    },
    'correct',
    async (tx) => {
      if (orig.refiningLotId !== null && orig.kind === 'to-refining') {
        const [lot] = await tx.select({ status: refiningLots.status }).from(refiningLots).where(eq(refiningLots.id, orig.refiningLotId))
        if (lot && lot.status !== 'open')
          throw new AppError({ code: 'conflict', message: `The refining lot has been ${lot.status}; its contents can no longer be corrected` })
      }
      const [{ effective }] = (await tx
        .select({ effective: sql<number>`coalesce(sum(${metalMovements.weightMg}), 0)::int` })
        .from(metalMovements)
        .where(sql`${metalMovements.id} = ${orig.id} or ${metalMovements.correctsId} = ${orig.id}`)) as [{ effective: number }]
      const delta = gToMg(input.weightG) - effective
      if (delta === 0) throw invalid('weightG', `is the weight already recorded (${mgToG(effective)} g)`)
      return { weightMg: delta }
    },
  )
  return { replayed: r.replayed, correctionId: r.row.id, movement: await movementById(deps.db, actor.workshopId, orig.id) }
}

async function movementById(db: Tx, workshopId: number, id: number): Promise<MetalMovement> {
  const rows = await joinedRows(db, and(eq(metalMovements.workshopId, workshopId), sql`(${metalMovements.id} = ${id} or ${metalMovements.correctsId} = ${id})`))
  const m = toMovements(rows)[0]
  if (!m) throw notFound('Metal entry')
  return m
}

export async function listMovements(db: Db, actor: Actor, q: MovementQuery): Promise<MetalMovement[]> {
  const where = [eq(metalMovements.workshopId, actor.workshopId)]
  if (q.jobBagId) where.push(eq(metalMovements.jobBagId, q.jobBagId))
  if (q.alloyId) where.push(eq(metalMovements.alloyId, q.alloyId))
  if (q.refiningLotId) where.push(eq(metalMovements.refiningLotId, q.refiningLotId))
  if (q.personId) where.push(eq(metalMovements.personId, q.personId))
  const all = toMovements(await joinedRows(db, and(...where)))
  return all.slice(-q.limit)
}

export async function jobBagMetal(db: Db, actor: Actor, jobBagId: number): Promise<JobBagMetal> {
  const [bag] = await db
    .select()
    .from(jobBags)
    .where(and(eq(jobBags.id, jobBagId), eq(jobBags.workshopId, actor.workshopId)))
  if (!bag) throw notFound('Job bag')
  const rows = await joinedRows(db, and(eq(metalMovements.workshopId, actor.workshopId), eq(metalMovements.jobBagId, jobBagId)))
  const tolerances = new Map((await listTolerances(db, actor.workshopId)).map((t) => [t.kindId, t]))
  const ops = await db
    .select({
      id: operations.id,
      name: operations.name,
      seq: operations.seq,
      kindId: operations.kindId,
      status: operations.status,
      kindCode: operationKinds.code,
      kindName: operationKinds.name,
    })
    .from(operations)
    .innerJoin(operationKinds, eq(operationKinds.id, operations.kindId))
    .where(eq(operations.jobBagId, jobBagId))
    .orderBy(asc(operations.seq))
  // Steps, people and alloys are made of what was weighed out and back; the piece leaving with its order is no one's step.
  const weighed = rows.filter((r) => r.m.kind === 'issued' || r.m.kind === 'returned')
  const group = <K>(key: (r: Joined) => K) => {
    const m = new Map<K, Joined[]>()
    for (const r of weighed) m.set(key(r), [...(m.get(key(r)) ?? []), r])
    return m
  }
  const bySteps = [...group((r) => r.m.operationId)]
    .map(([opId, rs]) => {
      const op = ops.find((o) => o.id === opId)
      const tol = op ? (tolerances.get(op.kindId)?.tolerancePct ?? FALLBACK_LOSS_TOLERANCE_PCT) : null
      const f = lossFigures(rs)
      const stillAtBench = atBench(f, op?.status)
      return {
        operationId: opId,
        name: op?.name ?? 'Not tied to a step',
        kindId: op?.kindId ?? null,
        kind: op?.kindName ?? null,
        tolerancePct: tol,
        overTolerance: !stillAtBench && over(f, tol),
        atBench: stillAtBench,
        ...f,
        seq: op?.seq ?? 1e9,
      }
    })
    .sort((a, b) => a.seq - b.seq)
    .map(({ seq: _s, ...s }) => s)
  const byPerson = [...group((r) => r.m.personId)]
    .map(([personId, rs]) => ({ personId, name: rs[0]!.personName ?? 'No one named', ...lossFigures(rs) }))
    .sort((a, b) => a.name.localeCompare(b.name))
  const movements = toMovements(rows)
  // The bag and each alloy count the piece once, however many steps weighed it out and back (see bagLossFigures).
  const byAlloy = [...group((r) => r.m.alloyId)].map(([alloyId, rs]) => ({
    alloyId,
    name: rs[0]!.alloyName,
    fineness: rs[0]!.fineness,
    ...bagLossFigures(
      rs,
      movements.filter((m) => m.alloyId === alloyId),
    ),
  }))
  // The piece's weight is the last weighing of it as a piece (after corrections).
  const lastPiece = movements.filter((m) => m.kind === 'returned' && m.form === 'piece').at(-1)
  const alloyOfPiece = lastPiece ? (await db.select().from(alloys).where(eq(alloys.id, lastPiece.alloyId)))[0] : undefined
  const metal: AlloyMetal | null = alloyOfPiece?.metal ?? PIECE_METAL_ALLOY[(bag.params as { metal?: string } | null)?.metal ?? '']?.metal ?? null
  const pieceG = lastPiece ? mgToG(lastPiece.effectiveMg) : null
  // Work on the customer's own piece (a repair, a resize) is on a piece hallmarked when it was made: the trade does not mark it
  // again for a repair (common practice, no published source), so its weight asks for no hallmark.
  const customersPiece = worksOnCustomersPiece({ kind: bag.routingKind }, bag.params as { resizeFrom?: unknown; resizeTo?: unknown } | null)
  const needed = !customersPiece && metal !== null && pieceG !== null && needsHallmark(metal, pieceG)
  const routingHasHallmarking = ops.some((o) => o.kindCode === 'hallmarking' && o.status !== 'skipped')
  const thresholdG = metal ? HALLMARK_THRESHOLD_G[metal] : null
  return {
    jobBagId,
    number: bag.number,
    piece: bag.piece,
    total: bagLossFigures(weighed, movements),
    overTolerance: bySteps.some((s) => s.overTolerance),
    byAlloy,
    bySteps,
    byPerson,
    hallmark: {
      metal,
      pieceG,
      thresholdG,
      needed,
      customersPiece,
      routingHasHallmarking,
      warning:
        needed && !routingHasHallmarking
          ? `The piece weighs ${pieceG} g, at or above the ${thresholdG} g below which ${metal} need not be hallmarked: it must be hallmarked, and its routing has no hallmarking step.`
          : null,
    },
    movements,
    toleranceNote: TOLERANCE_NOTE,
  }
}
