// A piece's stone list, stones counted out to the setter and back (with corrections and who and why), a customer's own stones
// handed back at collection, and the setting steps' planned minutes kept in step with the stone list.
import { and, asc, eq, inArray, like, sql } from 'drizzle-orm'
import { FINISHED_OPERATION } from '../../shared/domain/status'
import { routingStepMinutes } from '../../shared/domain/estimate'
import {
  STONE_ROLE_LABELS,
  canEstimateCarat,
  caratFromDiameter,
  caratFromDiameterAndDepth,
  countsOf,
  emptyCounts,
  reconcile,
  roundCarat,
  stoneLineWords,
  stoneListStepMinutes,
  toHandBack,
  type Reconciliation,
  type StoneMovementKind,
} from '../../shared/domain/stones'
import type {
  JobBagStones,
  StoneCheckBackInput,
  StoneCorrectionInput,
  StoneLineInput,
  StoneLineOut,
  StoneLineState,
  StoneLineUpdate,
  StoneMovementInput,
} from '../../shared/schemas/stone'
import type { PieceParams } from '../../shared/schemas/order'
import type { Tx } from '../db/client'
import {
  estimateChanges,
  jobBags,
  jobBagStones,
  operationKinds,
  operations,
  orders,
  people,
  routings,
  stoneMovements,
  routingSteps,
  users,
} from '../db/schema/index'
import { AppError, invalid, notFound, staleVersion } from '../errors/app-error'
import type { Actor, Deps } from '../lib/route'
import { audit } from './audit'

type Line = typeof jobBagStones.$inferSelect
interface Changed {
  operations: { id: number; version: number; status: string }[]
}

const HELD = ['claimed', 'running', 'paused']
const finished = (s: string) => (FINISHED_OPERATION as readonly string[]).includes(s)

async function bagOf(tx: Tx, workshopId: number, jobBagId: number) {
  const [b] = await tx
    .select()
    .from(jobBags)
    .where(and(eq(jobBags.id, jobBagId), eq(jobBags.workshopId, workshopId)))
  if (!b) throw notFound('Job bag')
  return b
}

/** The line with its job bag, locked so counts on one line are written one at a time. */
async function lockLine(tx: Tx, workshopId: number, lineId: number) {
  const [row] = await tx
    .select({ line: jobBagStones, bag: jobBags })
    .from(jobBagStones)
    .innerJoin(jobBags, eq(jobBags.id, jobBagStones.jobBagId))
    .where(and(eq(jobBagStones.id, lineId), eq(jobBags.workshopId, workshopId)))
    .for('update', { of: jobBagStones })
  if (!row) throw notFound('Stone line')
  return row
}

/** Carats of one stone: as entered, or estimated from the size (and depth) for a round stone; null when neither. */
function caratOf(
  shape: string,
  stone: string,
  sizeMm: number,
  entered: number | null | undefined,
  depthMm: number | null | undefined,
): { caratEach: number | null; caratEstimated: boolean } {
  if (entered !== null && entered !== undefined) return { caratEach: entered, caratEstimated: false }
  if (!canEstimateCarat(shape, stone)) return { caratEach: null, caratEstimated: false }
  const ct = depthMm ? caratFromDiameterAndDepth(sizeMm, depthMm) : caratFromDiameter(sizeMm)
  return { caratEach: roundCarat(ct), caratEstimated: true }
}

// ---------------------------------------------------------------------------------------------------------------
// Reading

async function settingOps(tx: Tx, jobBagId: number) {
  return tx
    .select({ id: operations.id, status: operations.status })
    .from(operations)
    .innerJoin(operationKinds, eq(operationKinds.id, operations.kindId))
    .where(and(eq(operations.jobBagId, jobBagId), eq(operationKinds.code, 'setting')))
}

function stateOf(r: Reconciliation, settingOpen: boolean): StoneLineState {
  if (r.issued === 0 && r.accounted === 0) return 'none-issued'
  if (r.difference === 0) return 'balanced'
  if (r.difference > 0 && settingOpen) return 'with-setter'
  return 'mismatch'
}

export async function getStones(db: Tx, workshopId: number, jobBagId: number): Promise<JobBagStones> {
  const bag = await bagOf(db, workshopId, jobBagId)
  const quantity = (bag.params as PieceParams).quantity ?? 1
  const lines = await db.select().from(jobBagStones).where(eq(jobBagStones.jobBagId, jobBagId)).orderBy(asc(jobBagStones.id))
  const moves = lines.length
    ? await db
        .select({ m: stoneMovements, personName: people.name, by: users.name })
        .from(stoneMovements)
        .leftJoin(people, eq(people.id, stoneMovements.personId))
        .leftJoin(users, eq(users.id, stoneMovements.recordedBy))
        .where(
          inArray(
            stoneMovements.stoneLineId,
            lines.map((l) => l.id),
          ),
        )
        .orderBy(asc(stoneMovements.id))
    : []
  const setting = await settingOps(db, jobBagId)
  const settingOpen = setting.some((o) => !finished(o.status))
  const settingRunning = setting.some((o) => HELD.includes(o.status))
  const correctedIds = new Set(moves.map((x) => x.m.correctsId).filter((x): x is number => x !== null))
  const out: StoneLineOut[] = lines.map((l) => {
    const mine = moves.filter((x) => x.m.stoneLineId === l.id)
    const r = reconcile(countsOf(mine.map((x) => x.m)))
    const handBack = l.customerOwned ? Math.max(0, toHandBack(l.count * quantity, r) - r.checkedBack) : 0
    return {
      id: l.id,
      jobBagId: l.jobBagId,
      role: l.role,
      stone: l.stone,
      shape: l.shape,
      sizeMm: l.sizeMm,
      depthMm: l.depthMm,
      count: l.count,
      caratEach: l.caratEach,
      caratEstimated: l.caratEstimated,
      quality: l.quality,
      customerOwned: l.customerOwned,
      customerId: l.customerId,
      costEachMinor: l.costEachMinor,
      version: l.version,
      reconciliation: r,
      state: stateOf(r, settingOpen),
      handBackOutstanding: handBack,
      movements: mine.map(({ m, personName, by }) => ({
        id: m.id,
        kind: m.kind as StoneMovementKind,
        count: m.count,
        personName,
        operationId: m.operationId,
        correctsId: m.correctsId,
        reason: m.reason,
        recordedBy: by,
        recordedAt: new Date(m.recordedAt).toISOString(),
        corrected: correctedIds.has(m.id),
      })),
    }
  })
  const sum = out.reduce((c, l) => {
    for (const k of ['issued', 'set', 'returned', 'broken', 'lost', 'checkedBack'] as const) c[k] += l.reconciliation[k]
    return c
  }, emptyCounts())
  const customer = out.filter((l) => l.customerOwned)
  const problems: string[] = []
  for (const l of customer) {
    const what = stoneLineWords(l)
    if (l.reconciliation.difference !== 0)
      problems.push(
        `${what}: ${l.reconciliation.difference > 0 ? `${l.reconciliation.difference} not counted back from the setter` : `${-l.reconciliation.difference} more counted back than given out`}`,
      )
    if (l.reconciliation.broken + l.reconciliation.lost > 0)
      problems.push(`${what}: ${l.reconciliation.broken} broken, ${l.reconciliation.lost} lost — tell the customer`)
  }
  return {
    jobBagId,
    quantity,
    settingRunning,
    lines: out,
    totals: {
      ...reconcile(sum),
      lines: out.length,
      stonesPerPiece: out.reduce((s, l) => s + l.count, 0),
      caratsPerPiece: Math.round(out.reduce((s, l) => s + (l.caratEach ?? 0) * l.count, 0) * 1000) / 1000,
    },
    customerStones: {
      lines: customer.length,
      reconciled: customer.every((l) => l.reconciliation.difference === 0),
      handedBack: customer.every((l) => l.reconciliation.difference === 0 && l.handBackOutstanding === 0),
      problems,
    },
  }
}

/** The customer's own stones, for the job ticket: "1 × 6.5 mm round diamond, 1.00 ct est." */
export async function customerStoneWords(db: Tx, jobBagId: number): Promise<string[]> {
  const lines = await db
    .select()
    .from(jobBagStones)
    .where(and(eq(jobBagStones.jobBagId, jobBagId), eq(jobBagStones.customerOwned, true)))
    .orderBy(asc(jobBagStones.id))
  return lines.map(stoneLineWords)
}

/** Every line of the stone list for the job ticket, its role first: "Centre: 1 × 6.5 mm round diamond, 3.9 mm deep, 0.98 ct est." */
export async function stoneListWords(db: Tx, jobBagId: number): Promise<string[]> {
  const lines = await db.select().from(jobBagStones).where(eq(jobBagStones.jobBagId, jobBagId)).orderBy(asc(jobBagStones.id))
  return lines.map((l) => `${STONE_ROLE_LABELS[l.role]}: ${stoneLineWords(l)}`)
}

/**
 * An order may not be marked ready while a customer's own stones are not all counted back from the setter, nor collected
 * before they are handed back; the refusal names what is missing.
 */
export async function requireCustomerStonesBack(tx: Tx, workshopId: number, orderId: number, to: string) {
  if (to !== 'ready' && to !== 'collected') return
  const bags = await tx
    .select({ id: jobBags.id, number: jobBags.number })
    .from(jobBags)
    .where(and(eq(jobBags.orderId, orderId), eq(jobBags.workshopId, workshopId)))
  const missing: string[] = []
  for (const b of bags) {
    const s = await getStones(tx, workshopId, b.id)
    if (!s.customerStones.lines) continue
    if (!s.customerStones.reconciled) missing.push(`${b.number}: the customer's stones are not all counted back from the setter`)
    else if (to === 'collected' && !s.customerStones.handedBack) {
      const n = s.lines.reduce((x, l) => x + l.handBackOutstanding, 0)
      missing.push(`${b.number}: ${n} of the customer's stones not yet handed back`)
    }
  }
  if (missing.length)
    throw new AppError({ code: 'unprocessable', message: `The order cannot be marked ${to}: ${missing.join('; ')}`, fields: { status: missing.join('; ') } })
}

// ---------------------------------------------------------------------------------------------------------------
// Setting estimates follow the stone list

/**
 * Recomputes the planned minutes of this bag's steps that count stones (their routing step has per-stone minutes) and that
 * nobody has started, from the stone list (or the piece's stone figures when the list is empty). A manager's own figure
 * (override or three-point) is left alone. Each change is kept like any other estimate change.
 */
export async function recomputeStoneSteps(tx: Tx, actor: Actor, jobBagId: number, why: string): Promise<Changed['operations']> {
  const [bag] = await tx.select().from(jobBags).where(eq(jobBags.id, jobBagId))
  if (!bag?.routingId) return []
  const [t] = await tx.select().from(routings).where(eq(routings.id, bag.routingId))
  if (!t) return []
  const steps = (await tx.select().from(routingSteps).where(eq(routingSteps.routingId, t.id))).filter((s) => s.perStoneMinutes > 0 && s.leadDays === 0)
  if (!steps.length) return []
  const lines = await tx
    .select({ sizeMm: jobBagStones.sizeMm, count: jobBagStones.count, role: jobBagStones.role })
    .from(jobBagStones)
    .where(eq(jobBagStones.jobBagId, jobBagId))
  const params = bag.params as PieceParams
  const ops = await tx
    .select()
    .from(operations)
    .where(
      and(
        eq(operations.jobBagId, jobBagId),
        inArray(
          operations.key,
          steps.map((s) => s.key),
        ),
        inArray(operations.status, ['pending', 'ready', 'claimed']),
      ),
    )
  const changed: Changed['operations'] = []
  for (const op of ops) {
    if (op.estimateSource === 'override' || op.estimateSource === 'three-point') continue
    const step = steps.find((s) => s.key === op.key)!
    const minutes = lines.length ? stoneListStepMinutes(step, t, params, lines) : routingStepMinutes(step, t, params)
    if (minutes === op.estimateMinutes) continue
    const [u] = await tx
      .update(operations)
      .set({ estimateMinutes: minutes, estimateSource: 'routing', version: sql`${operations.version} + 1` })
      .where(eq(operations.id, op.id))
      .returning()
    await tx.insert(estimateChanges).values({
      workshopId: actor.workshopId,
      operationId: op.id,
      fromMinutes: op.estimateMinutes,
      toMinutes: minutes,
      fromSource: op.estimateSource,
      reason: why,
      changedBy: actor.userId,
    })
    await audit(tx, actor, 'update-step', 'operation', op.id, {
      jobBagId,
      changes: { estimateMinutes: { from: op.estimateMinutes, to: minutes } },
      reason: why,
    })
    changed.push({ id: u!.id, version: u!.version, status: u!.status })
  }
  return changed
}

// ---------------------------------------------------------------------------------------------------------------
// Writing

async function write<T>(deps: Deps, actor: Actor, fn: (tx: Tx) => Promise<{ jobBagId: number; ops?: Changed['operations']; value?: T }>) {
  const out = await deps.db.transaction(async (tx) => fn(tx))
  for (const o of out.ops ?? []) deps.realtime.emit(actor.workshopId, 'operation:changed', { id: o.id, version: o.version, status: o.status })
  const [b] = await deps.db.select({ version: jobBags.version, status: jobBags.status }).from(jobBags).where(eq(jobBags.id, out.jobBagId))
  deps.realtime.emit(actor.workshopId, 'jobBag:changed', { id: out.jobBagId, version: b?.version, status: b?.status })
  return getStones(deps.db, actor.workshopId, out.jobBagId)
}

const lineDetails = (
  l: Pick<Line, 'role' | 'stone' | 'shape' | 'sizeMm' | 'depthMm' | 'count' | 'caratEach' | 'caratEstimated' | 'customerOwned' | 'costEachMinor' | 'quality'>,
) => ({
  role: l.role,
  stone: l.stone,
  shape: l.shape,
  sizeMm: l.sizeMm,
  depthMm: l.depthMm,
  count: l.count,
  caratEach: l.caratEach,
  caratEstimated: l.caratEstimated,
  customerOwned: l.customerOwned,
  costEachMinor: l.costEachMinor,
  quality: l.quality,
})

function requireOpen(bag: { status: string; number: string }) {
  if (bag.status === 'complete' || bag.status === 'cancelled')
    throw new AppError({ code: 'unprocessable', message: `Job bag ${bag.number} is ${bag.status}; its stone list can no longer change` })
}

export function addLine(deps: Deps, actor: Actor, jobBagId: number, input: StoneLineInput) {
  return write(deps, actor, async (tx) => {
    const bag = await bagOf(tx, actor.workshopId, jobBagId)
    requireOpen(bag)
    const [o] = await tx.select({ customerId: orders.customerId }).from(orders).where(eq(orders.id, bag.orderId))
    const ct = caratOf(input.shape, input.stone, input.sizeMm, input.caratEach, input.depthMm)
    const [l] = await tx
      .insert(jobBagStones)
      .values({
        jobBagId,
        role: input.role,
        stone: input.stone,
        shape: input.shape,
        sizeMm: input.sizeMm,
        depthMm: input.depthMm,
        count: input.count,
        ...ct,
        quality: input.quality,
        customerOwned: input.customerOwned,
        customerId: input.customerOwned ? o!.customerId : null,
        costEachMinor: input.customerOwned ? null : input.costEachMinor,
      })
      .returning()
    await audit(tx, actor, 'add-stones', 'job-bag', jobBagId, { stoneLineId: l!.id, ...lineDetails(l!) })
    const ops = await recomputeStoneSteps(tx, actor, jobBagId, `Stone list: added ${stoneLineWords(l!)}`)
    return { jobBagId, ops }
  })
}

export function updateLine(deps: Deps, actor: Actor, lineId: number, input: StoneLineUpdate) {
  return write(deps, actor, async (tx) => {
    const { line, bag } = await lockLine(tx, actor.workshopId, lineId)
    requireOpen(bag)
    if (line.version !== input.version) throw staleVersion('Stone line')
    const next = { ...line, ...Object.fromEntries(Object.entries(input).filter(([k, v]) => v !== undefined && k !== 'version')) } as Line
    const sizeChanged = next.sizeMm !== line.sizeMm || next.shape !== line.shape || next.stone !== line.stone || next.depthMm !== line.depthMm
    const ct =
      input.caratEach !== undefined && input.caratEach !== null
        ? { caratEach: input.caratEach, caratEstimated: false }
        : input.caratEach === null || (line.caratEstimated && sizeChanged) || (line.caratEach === null && sizeChanged)
          ? caratOf(next.shape, next.stone, next.sizeMm, null, next.depthMm)
          : { caratEach: line.caratEach, caratEstimated: line.caratEstimated }
    if (next.customerOwned !== line.customerOwned || next.count < line.count) {
      const [m] = await tx
        .select({ n: sql<number>`count(*)::int` })
        .from(stoneMovements)
        .where(eq(stoneMovements.stoneLineId, lineId))
      if (next.customerOwned !== line.customerOwned && m!.n > 0) throw invalid('customerOwned', 'cannot change once stones of this line have been counted out')
    }
    const [o] = await tx.select({ customerId: orders.customerId }).from(orders).where(eq(orders.id, bag.orderId))
    const [u] = await tx
      .update(jobBagStones)
      .set({
        role: next.role,
        stone: next.stone,
        shape: next.shape,
        sizeMm: next.sizeMm,
        depthMm: next.depthMm,
        count: next.count,
        quality: next.quality,
        ...ct,
        customerOwned: next.customerOwned,
        customerId: next.customerOwned ? o!.customerId : null,
        costEachMinor: next.customerOwned ? null : next.costEachMinor,
        version: sql`${jobBagStones.version} + 1`,
      })
      .where(eq(jobBagStones.id, lineId))
      .returning()
    await audit(tx, actor, 'edit-stones', 'job-bag', bag.id, { stoneLineId: lineId, from: lineDetails(line), to: lineDetails(u!) })
    const ops = await recomputeStoneSteps(tx, actor, bag.id, `Stone list: ${stoneLineWords(line)} became ${stoneLineWords(u!)}`)
    return { jobBagId: bag.id, ops }
  })
}

export function removeLine(deps: Deps, actor: Actor, lineId: number, version: number) {
  return write(deps, actor, async (tx) => {
    const { line, bag } = await lockLine(tx, actor.workshopId, lineId)
    requireOpen(bag)
    if (line.version !== version) throw staleVersion('Stone line')
    const [m] = await tx
      .select({ n: sql<number>`count(*)::int` })
      .from(stoneMovements)
      .where(eq(stoneMovements.stoneLineId, lineId))
    if (m!.n > 0)
      throw new AppError({
        code: 'unprocessable',
        message: `Stones of “${stoneLineWords(line)}” have been counted out; correct the counts instead of removing the line`,
      })
    await tx.delete(jobBagStones).where(eq(jobBagStones.id, lineId))
    await audit(tx, actor, 'remove-stones', 'job-bag', bag.id, { stoneLineId: lineId, ...lineDetails(line) })
    const ops = await recomputeStoneSteps(tx, actor, bag.id, `Stone list: removed ${stoneLineWords(line)}`)
    return { jobBagId: bag.id, ops }
  })
}

/** A replay: the request's rows already exist (same client id on this line). */
async function replayed(tx: Tx, lineId: number, clientKey: string) {
  // A count's rows are "<clientId>.<n>" (client ids carry no dots); a correction or a hand-back is the client id itself.
  const where = clientKey.endsWith('.') ? like(stoneMovements.clientId, `${clientKey.replace(/[\\%_]/g, '\\$&')}%`) : eq(stoneMovements.clientId, clientKey)
  const [m] = await tx.select({ lineId: stoneMovements.stoneLineId }).from(stoneMovements).where(where).limit(1)
  if (!m) return false
  if (m.lineId !== lineId)
    throw new AppError({ code: 'conflict', message: 'This request id was used for another stone line', fields: { clientId: 'is used by another request' } })
  return true
}

export async function recordCounts(deps: Deps, actor: Actor, lineId: number, input: StoneMovementInput) {
  try {
    return await write(deps, actor, async (tx) => {
      const { line, bag } = await lockLine(tx, actor.workshopId, lineId)
      if (await replayed(tx, lineId, `${input.clientId}.`)) return { jobBagId: bag.id }
      if (input.operationId !== null) {
        const [op] = await tx
          .select({ id: operations.id })
          .from(operations)
          .where(and(eq(operations.id, input.operationId), eq(operations.jobBagId, bag.id)))
        if (!op) throw invalid('operationId', 'is not a step of this job bag')
      }
      if (input.personId !== null) {
        const [p] = await tx
          .select({ id: people.id })
          .from(people)
          .where(and(eq(people.id, input.personId), eq(people.workshopId, actor.workshopId)))
        if (!p) throw invalid('personId', 'is not a person of this workshop')
      }
      const kinds = input.entries.map((e) => e.kind)
      const dup = kinds.findIndex((k, i) => kinds.indexOf(k) !== i)
      if (dup >= 0) throw invalid(`entries.${dup}.kind`, 'is counted twice in one go')
      const before = reconcile(
        countsOf(
          await tx.select({ kind: stoneMovements.kind, count: stoneMovements.count }).from(stoneMovements).where(eq(stoneMovements.stoneLineId, lineId)),
        ),
      )
      const after = reconcile(
        countsOf([
          ...Object.entries(before)
            .filter(([k]) => ['issued', 'set', 'returned', 'broken', 'lost'].includes(k))
            .map(([kind, count]) => ({ kind, count: count as number })),
          ...input.entries,
        ]),
      )
      const quantity = (bag.params as PieceParams).quantity ?? 1
      const issuedAt = input.entries.findIndex((e) => e.kind === 'issued')
      if (line.customerOwned && issuedAt >= 0 && after.issued > line.count * quantity)
        throw invalid(
          `entries.${issuedAt}.count`,
          `only ${line.count * quantity} of the customer's stones are on the list (${before.issued} already given out)`,
        )
      if (after.difference < 0 && !input.reason) {
        const at = input.entries.findIndex((e) => e.kind !== 'issued')
        throw invalid(
          `entries.${Math.max(0, at)}.count`,
          `counts back ${after.accounted} but only ${after.issued} were given out (${before.difference} still with the setter); say why in reason to record it anyway`,
        )
      }
      const personId = input.personId ?? actor.personId
      const now = new Date().toISOString()
      const rows = await tx
        .insert(stoneMovements)
        .values(
          input.entries.map((e, i) => ({
            stoneLineId: lineId,
            kind: e.kind,
            count: e.count,
            personId,
            operationId: input.operationId,
            reason: input.reason,
            recordedBy: actor.userId,
            recordedAt: now,
            clientId: `${input.clientId}.${i}`,
          })),
        )
        .returning({ id: stoneMovements.id })
      await audit(tx, actor, 'count-stones', 'job-bag', bag.id, {
        stoneLineId: lineId,
        line: stoneLineWords(line),
        entries: input.entries,
        movementIds: rows.map((r) => r.id),
        personId,
        operationId: input.operationId,
        reason: input.reason,
        difference: after.difference,
      })
      return { jobBagId: bag.id }
    })
  } catch (err) {
    // Two copies of one request at once: the second finds the first's rows.
    if ((err as { code?: string }).code === '23505') {
      const [m] = await deps.db
        .select({ jobBagId: jobBagStones.jobBagId })
        .from(stoneMovements)
        .innerJoin(jobBagStones, eq(jobBagStones.id, stoneMovements.stoneLineId))
        .where(eq(stoneMovements.clientId, `${input.clientId}.0`))
      if (m) return getStones(deps.db, actor.workshopId, m.jobBagId)
    }
    throw err
  }
}

export function correctMovement(deps: Deps, actor: Actor, movementId: number, input: StoneCorrectionInput) {
  return write(deps, actor, async (tx) => {
    const [found] = await tx
      .select({ m: stoneMovements })
      .from(stoneMovements)
      .innerJoin(jobBagStones, eq(jobBagStones.id, stoneMovements.stoneLineId))
      .innerJoin(jobBags, eq(jobBags.id, jobBagStones.jobBagId))
      .where(and(eq(stoneMovements.id, movementId), eq(jobBags.workshopId, actor.workshopId)))
    if (!found) throw notFound('Stone count')
    const { line, bag } = await lockLine(tx, actor.workshopId, found.m.stoneLineId)
    if (await replayed(tx, line.id, input.clientId)) return { jobBagId: bag.id }
    if (found.m.correctsId !== null) throw invalid('id', 'is itself a correction; correct the count it corrects')
    const all = await tx.select().from(stoneMovements).where(eq(stoneMovements.stoneLineId, line.id))
    const current = found.m.count + all.filter((x) => x.correctsId === movementId).reduce((s, x) => s + x.count, 0)
    const delta = input.count - current
    if (delta === 0) throw invalid('count', `is what the count already says (${current})`)
    const after = countsOf([...all, { kind: found.m.kind, count: delta }])
    const key = found.m.kind === 'checked-back' ? 'checkedBack' : found.m.kind
    if ((after as unknown as Record<string, number>)[key]! < 0) throw invalid('count', 'would leave fewer than none of this kind')
    const [row] = await tx
      .insert(stoneMovements)
      .values({
        stoneLineId: line.id,
        kind: found.m.kind,
        count: delta,
        personId: found.m.personId,
        operationId: found.m.operationId,
        correctsId: movementId,
        reason: input.reason,
        recordedBy: actor.userId,
        recordedAt: new Date().toISOString(),
        clientId: input.clientId,
      })
      .returning({ id: stoneMovements.id })
    await audit(tx, actor, 'correct-stones', 'job-bag', bag.id, {
      stoneLineId: line.id,
      line: stoneLineWords(line),
      movementId,
      kind: found.m.kind,
      from: current,
      to: input.count,
      correctionId: row!.id,
      reason: input.reason,
      difference: reconcile(after).difference,
    })
    return { jobBagId: bag.id }
  })
}

export function checkBack(deps: Deps, actor: Actor, lineId: number, input: StoneCheckBackInput) {
  return write(deps, actor, async (tx) => {
    const { line, bag } = await lockLine(tx, actor.workshopId, lineId)
    if (await replayed(tx, lineId, input.clientId)) return { jobBagId: bag.id }
    if (!line.customerOwned) throw invalid('count', 'only the customer’s own stones are handed back')
    const r = reconcile(
      countsOf(await tx.select({ kind: stoneMovements.kind, count: stoneMovements.count }).from(stoneMovements).where(eq(stoneMovements.stoneLineId, lineId))),
    )
    if (r.difference !== 0)
      throw invalid(
        'count',
        `the setter's count does not add up yet (${r.difference > 0 ? `${r.difference} not counted back` : `${-r.difference} too many counted back`}); settle it first`,
      )
    const quantity = (bag.params as PieceParams).quantity ?? 1
    const left = toHandBack(line.count * quantity, r) - r.checkedBack
    if (input.count > left) throw invalid('count', `only ${left} of the customer's stones are still to hand back`)
    await tx.insert(stoneMovements).values({
      stoneLineId: lineId,
      kind: 'checked-back',
      count: input.count,
      personId: actor.personId,
      reason: input.reason,
      recordedBy: actor.userId,
      recordedAt: new Date().toISOString(),
      clientId: input.clientId,
    })
    await audit(tx, actor, 'hand-back-stones', 'job-bag', bag.id, {
      stoneLineId: lineId,
      line: stoneLineWords(line),
      count: input.count,
      left: left - input.count,
    })
    return { jobBagId: bag.id }
  })
}
