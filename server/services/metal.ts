// Metal: alloys and their dated prices, the ledger of issues and returns per job bag (with corrections), loss against the tolerance of
// each kind of work, stock per alloy, refining lots, and the owner's loss figures. Every write is one transaction with its audit row;
// events go out after commit; a write carrying a clientId that was seen before answers the first row instead of writing a second.
import { and, asc, desc, eq, inArray, lte, sql } from 'drizzle-orm'
import {
  DEFAULT_LOSS_TOLERANCE_PCT,
  FALLBACK_LOSS_TOLERANCE_PCT,
  HALLMARK_THRESHOLD_G,
  PIECE_METAL_ALLOY,
  TOLERANCE_NOTE,
  fineMg,
  gToMg,
  isLegalFineness,
  metalLoss,
  mgToG,
  needsHallmark,
  type AlloyMetal,
} from '../../shared/domain/metal'
import {
  finenessMessage,
  type AdjustmentInput,
  type Alloy,
  type AlloyInput,
  type AlloyPrice,
  type AlloyPriceInput,
  type AlloyUpdate,
  type CorrectionInput,
  type IssueInput,
  type JobBagMetal,
  type LossFigures,
  type LossQuery,
  type LossRow,
  type LossTable,
  type MetalMovement,
  type LotItemAdded,
  type MovementQuery,
  type PurchaseInput,
  type RecordedCorrection,
  type RecordedMovement,
  type RefiningItemInput,
  type RefiningLot,
  type RefiningLotInput,
  type RefiningSendInput,
  type RefiningSettleInput,
  type ReturnInput,
  type StockRow,
  type Tolerance,
  type ToleranceInput,
} from '../../shared/schemas/metal'
import type { Db, Tx } from '../db/client'
import { alloyPrices, alloys, jobBags, lossTolerances, metalMovements, operationKinds, operations, people, refiningLots, users } from '../db/schema/index'
import { AppError, invalid, notFound, staleVersion } from '../errors/app-error'
import type { Actor, Deps } from '../lib/route'
import { dayjs } from '../lib/time'
import { audit } from './audit'
import { workshopZone } from './estimates'
import { isUniqueViolation, requireOwned, updateVersioned } from './versioned'
import { LOCK } from '../lib/locks'

type MovementRow = typeof metalMovements.$inferSelect
const PRICE_ROLES = new Set(['owner', 'manager'])
const r1 = (n: number) => Math.round(n * 10) / 10
/** One lock per workshop for metal writes, so the checks (returns against issues, lot status) see a settled ledger. */
const lockMetal = (tx: Tx, workshopId: number) => tx.execute(sql`select pg_advisory_xact_lock(${LOCK.metalLedger}, ${workshopId})`)
const today = async (db: Tx, workshopId: number) =>
  dayjs()
    .tz(await workshopZone(db, workshopId))
    .format('YYYY-MM-DD')

// ---------------------------------------------------------------------------------------------------------------
// Alloys and prices

/** The price in force on a day for each alloy (latest effective date on or before it). */
async function currentPrices(db: Tx, alloyIds: number[], day: string): Promise<Map<number, { pricePerGramMinor: number; effectiveOn: string }>> {
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

// ---------------------------------------------------------------------------------------------------------------
// The ledger

async function requireAlloy(tx: Tx, workshopId: number, alloyId: number, field = 'alloyId', mustBeActive = true) {
  const [a] = await tx
    .select()
    .from(alloys)
    .where(and(eq(alloys.id, alloyId), eq(alloys.workshopId, workshopId)))
  if (!a) throw invalid(field, 'is not an alloy of this workshop')
  if (mustBeActive && !a.active) throw invalid(field, `${a.name} is switched off; switch it on in the alloy list first`)
  return a
}
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

type NewMovement = Omit<typeof metalMovements.$inferInsert, 'id' | 'workshopId' | 'recordedBy' | 'recordedAt' | 'createdAt'>

/**
 * Writes one ledger row (or, for a clientId seen before in this workshop, finds the first one): lock, checks, insert, audit, then
 * the event after commit. Returns the row and whether it was a replay.
 */
async function record(
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

// ---------------------------------------------------------------------------------------------------------------
// Reading the ledger

interface Joined {
  m: MovementRow
  alloyName: string
  fineness: number
  opName: string | null
  kindId: number | null
  personName: string | null
  recordedBy: string | null
}

async function joinedRows(db: Tx, where: ReturnType<typeof and>): Promise<Joined[]> {
  return db
    .select({
      m: metalMovements,
      alloyName: alloys.name,
      fineness: alloys.fineness,
      opName: operations.name,
      kindId: operations.kindId,
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

const iso = (v: unknown) => new Date(v as string).toISOString()

/** Original rows with their corrections folded in (effective weight), newest last. */
function toMovements(rows: Joined[]): MetalMovement[] {
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

/** Figures from ledger rows (corrections included as their signed differences). */
export function lossFigures(rows: readonly Pick<Joined, 'm' | 'fineness'>[]): LossFigures {
  let issued = 0,
    fromCustomer = 0,
    piece = 0,
    scrap = 0,
    lemel = 0,
    fine = 0
  for (const { m, fineness } of rows) {
    if (m.kind === 'issued') {
      issued += m.weightMg
      if (m.source === 'customer') fromCustomer += m.weightMg
      fine += (m.weightMg * fineness) / 1000
    } else if (m.kind === 'returned') {
      if (m.form === 'piece') piece += m.weightMg
      else if (m.form === 'scrap') scrap += m.weightMg
      else lemel += m.weightMg
      fine -= (m.weightMg * fineness) / 1000
    }
  }
  const l = metalLoss(issued, { pieceMg: piece, scrapMg: scrap, lemelMg: lemel })
  const lossFineMg = Math.round(fine)
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

const over = (f: LossFigures, tol: number | null) => tol !== null && f.issuedMg > 0 && f.lossPct !== null && f.lossPct > tol

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
  const group = <K>(key: (r: Joined) => K) => {
    const m = new Map<K, Joined[]>()
    for (const r of rows) m.set(key(r), [...(m.get(key(r)) ?? []), r])
    return m
  }
  const bySteps = [...group((r) => r.m.operationId)]
    .map(([opId, rs]) => {
      const op = ops.find((o) => o.id === opId)
      const tol = op ? (tolerances.get(op.kindId)?.tolerancePct ?? FALLBACK_LOSS_TOLERANCE_PCT) : null
      const f = lossFigures(rs)
      return {
        operationId: opId,
        name: op?.name ?? 'Not tied to a step',
        kindId: op?.kindId ?? null,
        kind: op?.kindName ?? null,
        tolerancePct: tol,
        overTolerance: over(f, tol),
        ...f,
        seq: op?.seq ?? 1e9,
      }
    })
    .sort((a, b) => a.seq - b.seq)
    .map(({ seq: _s, ...s }) => s)
  const byPerson = [...group((r) => r.m.personId)]
    .map(([personId, rs]) => ({ personId, name: rs[0]!.personName ?? 'No one named', ...lossFigures(rs) }))
    .sort((a, b) => a.name.localeCompare(b.name))
  const byAlloy = [...group((r) => r.m.alloyId)].map(([alloyId, rs]) => ({ alloyId, name: rs[0]!.alloyName, fineness: rs[0]!.fineness, ...lossFigures(rs) }))
  const movements = toMovements(rows)
  // The piece's weight is the last weighing of it as a piece (after corrections).
  const lastPiece = movements.filter((m) => m.kind === 'returned' && m.form === 'piece').at(-1)
  const alloyOfPiece = lastPiece ? (await db.select().from(alloys).where(eq(alloys.id, lastPiece.alloyId)))[0] : undefined
  const metal: AlloyMetal | null = alloyOfPiece?.metal ?? PIECE_METAL_ALLOY[(bag.params as { metal?: string } | null)?.metal ?? '']?.metal ?? null
  const pieceG = lastPiece ? mgToG(lastPiece.effectiveMg) : null
  const needed = metal !== null && pieceG !== null && needsHallmark(metal, pieceG)
  const routingHasHallmarking = ops.some((o) => o.kindCode === 'hallmarking' && o.status !== 'skipped')
  const thresholdG = metal ? HALLMARK_THRESHOLD_G[metal] : null
  return {
    jobBagId,
    number: bag.number,
    piece: bag.piece,
    total: lossFigures(rows),
    overTolerance: bySteps.some((s) => s.overTolerance),
    byAlloy,
    bySteps,
    byPerson,
    hallmark: {
      metal,
      pieceG,
      thresholdG,
      needed,
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
  for (const rs of units.values()) {
    const last = rs.at(-1)!
    const month = dayjs(iso(last.m.recordedAt)).tz(tz).format('YYYY-MM')
    const day = dayjs(iso(last.m.recordedAt)).tz(tz).format('YYYY-MM-DD')
    if ((q.from && day < q.from) || (q.to && day > q.to)) continue
    const kind = last.kindId !== null ? tolerances.get(last.kindId) : undefined
    const f = lossFigures(rs)
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
    toleranceNote: TOLERANCE_NOTE,
  }
}

// ---------------------------------------------------------------------------------------------------------------
// Stock

export async function stock(db: Db, workshopId: number): Promise<StockRow[]> {
  const list = await db.select().from(alloys).where(eq(alloys.workshopId, workshopId)).orderBy(asc(alloys.metal), asc(alloys.fineness), asc(alloys.name))
  const sums = await db
    .select({
      alloyId: metalMovements.alloyId,
      kind: metalMovements.kind,
      source: metalMovements.source,
      mg: sql<number>`sum(${metalMovements.weightMg})::bigint`,
    })
    .from(metalMovements)
    .where(eq(metalMovements.workshopId, workshopId))
    .groupBy(metalMovements.alloyId, metalMovements.kind, metalMovements.source)
  const prices = await currentPrices(
    db,
    list.map((a) => a.id),
    await today(db, workshopId),
  )
  return list.map((a) => {
    const s = (kind: string, source?: string) =>
      sums.filter((x) => x.alloyId === a.id && x.kind === kind && (source === undefined || x.source === source)).reduce((t, x) => t + Number(x.mg), 0)
    const boughtMg = s('bought'),
      fromCustomerMg = s('issued', 'customer'),
      issuedMg = s('issued'),
      returnedMg = s('returned')
    const toRefiningMg = s('to-refining'),
      fromRefiningMg = s('from-refining'),
      adjustedMg = s('adjusted'),
      deliveredMg = s('delivered')
    const balanceMg = boughtMg + fromCustomerMg - issuedMg + returnedMg - toRefiningMg + fromRefiningMg + adjustedMg - deliveredMg
    const p = prices.get(a.id)
    const fine = fineMg(balanceMg, a.fineness)
    return {
      alloyId: a.id,
      code: a.code,
      name: a.name,
      metal: a.metal,
      fineness: a.fineness,
      boughtMg,
      fromCustomerMg,
      issuedMg,
      returnedMg,
      toRefiningMg,
      fromRefiningMg,
      adjustedMg,
      deliveredMg,
      balanceMg,
      balanceG: mgToG(balanceMg),
      fineMg: fine,
      fineG: mgToG(fine),
      pricePerGramMinor: p?.pricePerGramMinor ?? null,
      priceOn: p?.effectiveOn ?? null,
      valueMinor: p ? Math.round((balanceMg * p.pricePerGramMinor) / 1000) : null,
    }
  })
}

// ---------------------------------------------------------------------------------------------------------------
// Refining lots

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

// ---------------------------------------------------------------------------------------------------------------
// Finished pieces leave stock

/**
 * When an order is collected its pieces leave the workshop: for each job bag and alloy whose last weighing (issue or
 * return, corrections applied) was the piece coming back, that weight leaves stock as a 'delivered' row. A piece last
 * seen going out to the bench, or a bag already delivered, writes nothing. Runs inside the order's own transaction.
 */
export async function deliverOrderMetal(tx: Tx, actor: Actor, orderId: number): Promise<number> {
  const rows = await tx
    .select({ m: metalMovements })
    .from(metalMovements)
    .innerJoin(jobBags, eq(jobBags.id, metalMovements.jobBagId))
    .where(
      and(eq(jobBags.orderId, orderId), eq(metalMovements.workshopId, actor.workshopId), inArray(metalMovements.kind, ['issued', 'returned', 'delivered'])),
    )
    .orderBy(asc(metalMovements.recordedAt), asc(metalMovements.id))
  const effective = new Map<number, number>()
  for (const { m } of rows) effective.set(m.correctsId ?? m.id, (effective.get(m.correctsId ?? m.id) ?? 0) + m.weightMg)
  const last = new Map<string, typeof metalMovements.$inferSelect>()
  const delivered = new Set<string>()
  for (const { m } of rows) {
    const key = `${m.jobBagId}:${m.alloyId}`
    if (m.kind === 'delivered') {
      delivered.add(key)
      continue
    }
    if (m.correctsId !== null || (effective.get(m.id) ?? 0) === 0) continue
    last.set(key, m)
  }
  let written = 0
  const at = new Date().toISOString()
  for (const [key, m] of last) {
    if (delivered.has(key) || m.kind !== 'returned' || m.form !== 'piece') continue
    const weightMg = effective.get(m.id) ?? 0
    if (weightMg <= 0) continue
    const [row] = await tx
      .insert(metalMovements)
      .values({
        workshopId: actor.workshopId,
        alloyId: m.alloyId,
        kind: 'delivered',
        weightMg,
        jobBagId: m.jobBagId,
        personId: null,
        operationId: null,
        reason: 'collected with its order',
        recordedBy: actor.userId,
        recordedAt: at,
      })
      .returning({ id: metalMovements.id })
    await audit(tx, actor, 'deliver', 'metal-movement', row!.id, { orderId, jobBagId: m.jobBagId, alloyId: m.alloyId, weightMg })
    written++
  }
  return written
}
