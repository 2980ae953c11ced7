// The owner's figures: estimated against actual hours by kind, person, routing, order and month; drill-down; job costing; CSV.
import { and, asc, eq, sql } from 'drizzle-orm'
import type {
  BiasTrend,
  ComparisonRow,
  ComparisonTable,
  CostingRow,
  CostingTable,
  DrillDown,
  Grouping,
  InsightFilter,
  ScatterPoint,
  StepCost,
} from '../../shared/schemas/insights'
import type { Db } from '../db/client'
import { customers, jobBags, operationCosts, operationKinds, operations, orders, routings, routingStepCosts, routingSteps, workshops } from '../db/schema/index'
import { notFound } from '../errors/app-error'
import type { Actor, Deps } from '../lib/route'
import { dayjs } from '../lib/time'
import { COSTING_NOTE, METAL_AS_ESTIMATED_WORDS, margin, marginCaveat, type Missing } from '../../shared/domain/costing'
import { minorToDecimal } from '../../shared/domain/currency'
import { ratioBelieved } from '../../shared/domain/estimate'
import { atActual, costOrders } from './costing'
import { audit } from './audit'
import { finishedOperations, workshopZone, type FinishedOperation } from './estimates'

const r2 = (n: number) => Math.round(n * 100) / 100
const r1 = (n: number) => Math.round(n * 10) / 10

type Timed = Pick<FinishedOperation, 'estimateMinutes' | 'actualMinutes'>
/** Whether an operation's actual ÷ estimate is believed (shared/domain/estimate.ts); the others are left out of every error figure. */
export const believed = (o: Timed): boolean => ratioBelieved(o.actualMinutes / o.estimateMinutes)

/**
 * One row of figures from a group of finished operations (minutes summed first, hours rounded last). Operations whose actual ÷ estimate
 * lies outside the believed band are left out of every figure — count, hours, bias and MAPE alike — and counted in `leftOut`.
 */
export function comparisonRow(key: string, label: string, all: readonly Timed[]): ComparisonRow {
  const ops = all.filter(believed)
  const est = ops.reduce((s, o) => s + o.estimateMinutes, 0)
  const act = ops.reduce((s, o) => s + o.actualMinutes, 0)
  const bias = act - est
  const ape = ops.filter((o) => o.actualMinutes > 0).map((o) => Math.abs(o.actualMinutes - o.estimateMinutes) / o.actualMinutes)
  return {
    key,
    label,
    n: ops.length,
    estimateHours: r2(est / 60),
    actualHours: r2(act / 60),
    biasHours: r2(bias / 60),
    biasPct: est > 0 ? r1((bias / est) * 100) : null,
    direction: Math.abs(bias) < 0.05 ? 'even' : bias > 0 ? 'over' : 'under',
    mapePct: ape.length ? r1((ape.reduce((s, x) => s + x, 0) / ape.length) * 100) : null,
    leftOut: all.length - ops.length,
  }
}

const groupKey: Record<Grouping, (o: FinishedOperation) => { key: string; label: string }> = {
  kind: (o) => ({ key: String(o.kindId), label: o.kindName }),
  person: (o) => ({ key: String(o.personId), label: o.personName }),
  routing: (o) => ({ key: String(o.routingId ?? 0), label: o.routingName ?? 'No routing' }),
  order: (o) => ({ key: String(o.orderId), label: `${o.orderNumber} ${o.orderTitle}` }),
  month: (o) => ({ key: o.month, label: o.month }),
}

export async function comparison(db: Db, workshopId: number, groupBy: Grouping, filter: InsightFilter): Promise<ComparisonTable> {
  const ops = await finishedOperations(db, workshopId, filter)
  const groups = new Map<string, { label: string; ops: FinishedOperation[] }>()
  for (const o of ops) {
    const { key, label } = groupKey[groupBy](o)
    const g = groups.get(key) ?? { label, ops: [] }
    g.ops.push(o)
    groups.set(key, g)
  }
  const rows = [...groups.entries()].map(([key, g]) => comparisonRow(key, g.label, g.ops))
  rows.sort(groupBy === 'month' ? (a, b) => a.key.localeCompare(b.key) : (a, b) => b.actualHours - a.actualHours || a.label.localeCompare(b.label))
  return { groupBy, filter: cleanFilter(filter), rows, total: comparisonRow('total', 'Total', ops) }
}

const cleanFilter = (f: InsightFilter): InsightFilter =>
  Object.fromEntries(Object.entries({ from: f.from, to: f.to, routingId: f.routingId }).filter(([, v]) => v !== undefined))

export async function scatter(db: Db, workshopId: number, filter: InsightFilter): Promise<ScatterPoint[]> {
  const ops = await finishedOperations(db, workshopId, filter)
  return ops.map((o) => ({
    operationId: o.id,
    kindId: o.kindId,
    kind: o.kindName,
    estimateMinutes: o.estimateMinutes,
    actualMinutes: o.actualMinutes,
    finishedAt: o.finishedAt,
  }))
}

/** Bias % by kind for each month that has finished work (operations outside the believed band left out, and counted). */
export async function biasTrend(db: Db, workshopId: number, filter: InsightFilter): Promise<BiasTrend> {
  const all = await finishedOperations(db, workshopId, filter)
  const ops = all.filter(believed)
  const months = [...new Set(ops.map((o) => o.month))].sort()
  const kinds = [...new Map(ops.map((o) => [o.kindId, { kindId: o.kindId, kind: o.kindName, color: o.kindColor }])).values()].sort((a, b) =>
    a.kind.localeCompare(b.kind),
  )
  return {
    months,
    series: kinds.map((k) => {
      const cells = months.map((m) =>
        comparisonRow(
          m,
          m,
          ops.filter((o) => o.kindId === k.kindId && o.month === m),
        ),
      )
      return { ...k, biasPct: cells.map((c) => (c.n ? c.biasPct : null)), n: cells.map((c) => c.n) }
    }),
    leftOut: all.length - ops.length,
  }
}

/** The operations behind one row, with their time records (after corrections). */
export async function drillDown(db: Db, workshopId: number, groupBy: Grouping, key: string, filter: InsightFilter): Promise<DrillDown> {
  const ops = (await finishedOperations(db, workshopId, filter)).filter((o) => groupKey[groupBy](o).key === key)
  if (!ops.length) throw notFound('Row')
  return {
    groupBy,
    key,
    label: groupKey[groupBy](ops[0]!).label,
    operations: ops.map((o) => ({
      operationId: o.id,
      orderNumber: o.orderNumber,
      jobBagNumber: o.jobBagNumber,
      piece: o.piece,
      step: o.name,
      kind: o.kindName,
      personName: o.personName,
      finishedAt: o.finishedAt,
      estimateMinutes: o.estimateMinutes,
      estimateSource: o.estimateSource,
      actualMinutes: o.actualMinutes,
      leftOut: !believed(o),
      records: o.records.map((r) => ({
        timeRecordId: r.id,
        personName: r.personName,
        startedAt: r.startedAt,
        endedAt: r.endedAt,
        minutes: r.minutes,
        voided: r.voided,
        corrected: r.corrections.length > 0,
        endReason: r.endReason,
      })),
    })),
  }
}

// ---------------------------------------------------------------------------------------------------------------
// Job costing

/**
 * Each complete order (every operation done or skipped, the last finished in the date range) costed at estimate and at actual by
 * services/costing.ts (metal, stones, outside work, labour in minor units), against the price quoted; figures go out in major units.
 */
export async function costing(db: Db, workshopId: number, filter: InsightFilter): Promise<CostingTable> {
  const tz = await workshopZone(db, workshopId)
  const [w] = await db.select({ currency: workshops.currency }).from(workshops).where(eq(workshops.id, workshopId))
  const currency = w?.currency ?? 'GBP'
  const rows = await db
    .select({ op: operations, bag: jobBags, order: orders, customerName: customers.name })
    .from(operations)
    .innerJoin(jobBags, eq(jobBags.id, operations.jobBagId))
    .innerJoin(orders, eq(orders.id, jobBags.orderId))
    .innerJoin(customers, eq(customers.id, orders.customerId))
    .where(eq(jobBags.workshopId, workshopId))
  const byOrder = new Map<number, typeof rows>()
  for (const r of rows) byOrder.set(r.order.id, [...(byOrder.get(r.order.id) ?? []), r])
  const complete = [...byOrder.values()].filter(
    (ops) => ops.every((r) => r.op.status === 'done' || r.op.status === 'skipped') && ops.some((r) => r.op.finishedAt),
  )
  const finishedOn = (ops: typeof rows) =>
    dayjs(
      ops
        .map((r) => r.op.finishedAt)
        .filter(Boolean)
        .sort()
        .at(-1)!,
    )
      .tz(tz)
      .format('YYYY-MM-DD')
  const chosen = complete.filter((ops) => {
    const day = finishedOn(ops)
    if (filter.from && day < filter.from) return false
    if (filter.to && day > filter.to) return false
    if (filter.routingId && !ops.some((r) => r.bag.routingId === filter.routingId)) return false
    return true
  })
  const costed = await costOrders(
    db,
    workshopId,
    chosen.map((ops) => ops[0]!.order.id),
  )
  // Amounts stay in integer minor units of the workshop's currency.
  const M = (minor: number) => minor
  const out: CostingRow[] = chosen
    .map((ops) => {
      const order = ops[0]!.order
      const c = costed.get(order.id)!
      const e = c.estimate
      const a = atActual(c)
      return {
        orderId: order.id,
        orderNumber: order.number,
        title: order.title,
        customerName: ops[0]!.customerName,
        finishedOn: finishedOn(ops),
        priceQuotedMinor: M(c.priceMinor),
        estimateHours: r2(c.estimateMinutes / 60),
        actualHours: r2(c.actualMinutes / 60),
        metalAtEstimateMinor: M(e.cost.metalMinor),
        metalAtActualMinor: a.notWeighed ? null : M(a.cost.metalMinor),
        metalAsEstimatedMinor: M(a.metalAsEstimatedMinor),
        stonesAtEstimateMinor: M(e.cost.stonesMinor),
        stonesAtActualMinor: M(a.cost.stonesMinor),
        labourAtEstimateMinor: M(e.cost.labourMinor),
        labourAtActualMinor: M(a.cost.labourMinor),
        outsideAtEstimateMinor: M(e.cost.outsideMinor),
        outsideAtActualMinor: M(a.cost.outsideMinor),
        costAtEstimateMinor: M(e.cost.totalMinor),
        costAtActualMinor: M(a.totalMinor),
        marginAtEstimateMinor: M(e.marginMinor),
        marginAtActualMinor: M(a.marginMinor),
        marginPctAtEstimate: e.marginPct,
        marginPctAtActual: a.marginPct,
        customerMetalLossG: c.customerMetalLossG,
        outsideSteps: c.outsideSteps,
        outsideUncosted: c.outsideUncosted,
        caveatAtEstimate: e.caveat,
        caveatAtActual: a.caveat,
      }
    })
    .sort((a, b) => b.finishedOn.localeCompare(a.finishedOn) || a.orderNumber.localeCompare(b.orderNumber))

  // Totals are summed in minor units.
  const all = [...costed.values()]
  const sumMinor = (f: (c: (typeof all)[number]) => number) => all.reduce((s, c) => s + f(c), 0)
  const price = sumMinor((c) => c.priceMinor)
  const est = sumMinor((c) => c.estimate.cost.totalMinor)
  const act = sumMinor((c) => atActual(c).totalMinor)
  const mEst = margin(price, est),
    mAct = margin(price, act)
  const missingEst = all.flatMap((c) => c.estimate.missing),
    missingAct = all.flatMap((c) => atActual(c).missing)
  return {
    filter: cleanFilter(filter),
    currency,
    rows: out,
    total: {
      orders: out.length,
      priceQuotedMinor: M(price),
      estimateHours: r2(sumMinor((c) => c.estimateMinutes) / 60),
      actualHours: r2(sumMinor((c) => c.actualMinutes) / 60),
      metalAtEstimateMinor: M(sumMinor((c) => c.estimate.cost.metalMinor)),
      metalAtActualMinor: M(sumMinor((c) => c.actual.cost.metalMinor)),
      metalAsEstimatedMinor: M(sumMinor((c) => atActual(c).metalAsEstimatedMinor)),
      metalAsEstimatedOrders: all.filter((c) => atActual(c).asEstimated).length,
      stonesAtEstimateMinor: M(sumMinor((c) => c.estimate.cost.stonesMinor)),
      stonesAtActualMinor: M(sumMinor((c) => c.actual.cost.stonesMinor)),
      labourAtEstimateMinor: M(sumMinor((c) => c.estimate.cost.labourMinor)),
      labourAtActualMinor: M(sumMinor((c) => c.actual.cost.labourMinor)),
      outsideAtEstimateMinor: M(sumMinor((c) => c.estimate.cost.outsideMinor)),
      outsideAtActualMinor: M(sumMinor((c) => c.actual.cost.outsideMinor)),
      costAtEstimateMinor: M(est),
      costAtActualMinor: M(act),
      marginAtEstimateMinor: M(mEst.marginMinor),
      marginAtActualMinor: M(mAct.marginMinor),
      marginPctAtEstimate: mEst.marginPct,
      marginPctAtActual: mAct.marginPct,
      customerMetalLossG: Math.round(all.reduce((s, c) => s + c.customerMetalLossG * 1000, 0)) / 1000,
      outsideSteps: all.reduce((s, c) => s + c.outsideSteps, 0),
      outsideUncosted: all.reduce((s, c) => s + c.outsideUncosted, 0),
      caveatAtEstimate: totalCaveat(missingEst, out.length),
      caveatAtActual: totalCaveat(missingAct, out.length, METAL_AS_ESTIMATED_WORDS),
    },
    note: COSTING_NOTE,
  }
}

/** Over several orders: what is missing from some of them ("on some orders: …"), else that all four are counted. */
function totalCaveat(missing: Missing[], orders: number, words: Partial<Record<Missing, string>> = {}): string {
  if (!missing.length || orders === 0) return marginCaveat([])
  return `on some orders: ${marginCaveat(missing, words)}`
}

/** Every outside-work step of the workshop's routings with its expected cost per unit (null: not set). */
export async function listStepCosts(db: Db, workshopId: number): Promise<StepCost[]> {
  const rows = await db
    .select({
      routingId: routings.id,
      routingName: routings.name,
      stepKey: routingSteps.key,
      stepName: routingSteps.name,
      leadDays: routingSteps.leadDays,
      outsideCostMinor: routingStepCosts.outsideCostMinor,
      currency: workshops.currency,
    })
    .from(routingSteps)
    .innerJoin(routings, eq(routings.id, routingSteps.routingId))
    .innerJoin(workshops, eq(workshops.id, routings.workshopId))
    .innerJoin(operationKinds, eq(operationKinds.id, routingSteps.kindId))
    .leftJoin(routingStepCosts, and(eq(routingStepCosts.routingId, routingSteps.routingId), eq(routingStepCosts.stepKey, routingSteps.key)))
    .where(and(eq(routings.workshopId, workshopId), sql`(${routingSteps.leadDays} > 0 or ${operationKinds.outside})`))
    .orderBy(asc(routings.name), asc(routingSteps.seq))
  return rows.map((r) => ({ ...r, outsideCostMinor: r.outsideCostMinor ?? null }))
}

/** The owner sets the expected outside cost (per unit, integer minor units) of a routing step. */
export async function setStepCost({ db }: Deps, actor: Actor, routingId: number, stepKey: string, outsideCostMinor: number | null) {
  return db.transaction(async (tx) => {
    const [t] = await tx
      .select({ id: routings.id })
      .from(routings)
      .where(and(eq(routings.id, routingId), eq(routings.workshopId, actor.workshopId)))
    if (!t) throw notFound('Routing')
    await tx
      .insert(routingStepCosts)
      .values({ routingId, stepKey, outsideCostMinor })
      .onConflictDoUpdate({ target: [routingStepCosts.routingId, routingStepCosts.stepKey], set: { outsideCostMinor, updatedAt: new Date() } })
    await audit(tx, actor, 'set-outside-cost', 'routing', routingId, { stepKey, outsideCostMinor })
    return { routingId, stepKey, outsideCostMinor }
  })
}

/** The owner records what an operation's outside work was invoiced at (integer minor units). */
export async function setOperationCost({ db }: Deps, actor: Actor, operationId: number, outsideCostMinor: number | null) {
  return db.transaction(async (tx) => {
    const [op] = await tx
      .select({ id: operations.id })
      .from(operations)
      .innerJoin(jobBags, eq(jobBags.id, operations.jobBagId))
      .where(and(eq(operations.id, operationId), eq(jobBags.workshopId, actor.workshopId)))
    if (!op) throw notFound('Operation')
    await tx
      .insert(operationCosts)
      .values({ operationId, outsideCostMinor })
      .onConflictDoUpdate({ target: operationCosts.operationId, set: { outsideCostMinor, updatedAt: new Date() } })
    await audit(tx, actor, 'set-outside-cost', 'operation', operationId, { outsideCostMinor })
    return { operationId, outsideCostMinor }
  })
}

// ---------------------------------------------------------------------------------------------------------------
// CSV (RFC 4180: comma separated, CRLF line ends, fields with comma, quote or line break quoted, quotes doubled)

export function csvCell(v: unknown): string {
  if (v === null || v === undefined) return ''
  let s = typeof v === 'number' ? (Number.isFinite(v) ? String(v) : '') : String(v)
  // A text cell starting like a formula is opened as text by spreadsheets (common practice against CSV injection).
  if (typeof v === 'string' && /^[=+\-@\t\r]/.test(s)) s = `'${s}`
  return /[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s
}

export function toCsv(header: string[], rows: unknown[][]): string {
  return [header, ...rows].map((r) => r.map(csvCell).join(',')).join('\r\n') + '\r\n'
}

/** The first column of a comparison CSV names the row (what a person reads first); ids come last, for joining. */
const CSV_NAME: Record<Grouping, string> = { kind: 'kind', person: 'person', routing: 'routing', order: 'order', month: 'month' }

export function comparisonCsv(t: ComparisonTable): string {
  const name = CSV_NAME[t.groupBy]
  // A month's key is the month itself: no id column for it. Work without a routing has key 0, no id.
  const withId = t.groupBy !== 'month'
  // left_out: finished operations of the row left out of its figures (actual ÷ estimate outside the believed band).
  const header = [
    name,
    'operations',
    'estimate_hours',
    'actual_hours',
    'bias_hours',
    'bias_pct',
    'direction',
    'mape_pct',
    'left_out',
    ...(withId ? [`${name}_id`] : []),
  ]
  const line = (r: ComparisonRow, id: string) => [
    r.label,
    r.n,
    r.estimateHours,
    r.actualHours,
    r.biasHours,
    r.biasPct,
    r.direction,
    r.mapePct,
    r.leftOut,
    ...(withId ? [id] : []),
  ]
  return toCsv(header, [...t.rows.map((r) => line(r, r.key === '0' ? '' : r.key)), line(t.total, '')])
}

/**
 * Job costing as CSV: price, hours, each part of the cost at estimate and at actual (metal weighed, and metal counted as estimated
 * where nothing was weighed), cost, margins, and beside each margin what it
 * could not count; a last line carries the note (blank cells before it keep the column count). Amounts in major units of the table's currency.
 */
export function costingCsv(t: CostingTable): string {
  const header = [
    'order',
    'title',
    'customer',
    'finished_on',
    'price_quoted',
    'estimate_hours',
    'actual_hours',
    'metal_at_estimate',
    'stones_at_estimate',
    'outside_at_estimate',
    'labour_at_estimate',
    'cost_at_estimate',
    'margin_at_estimate',
    'margin_pct_at_estimate',
    'not_counted_at_estimate',
    'metal_at_actual',
    'metal_as_estimated_at_actual',
    'stones_at_actual',
    'outside_at_actual',
    'labour_at_actual',
    'cost_at_actual',
    'margin_at_actual',
    'margin_pct_at_actual',
    'not_counted_at_actual',
    'customer_metal_lost_g',
  ]
  // Major units with the currency's own decimals (ISO 4217), written from the integer minor units digit by digit.
  const $ = (minor: number) => minorToDecimal(minor, t.currency)
  const line = (r: Omit<CostingRow, 'orderId' | 'orderNumber' | 'title' | 'customerName' | 'finishedOn'>) => [
    $(r.priceQuotedMinor),
    r.estimateHours,
    r.actualHours,
    $(r.metalAtEstimateMinor),
    $(r.stonesAtEstimateMinor),
    $(r.outsideAtEstimateMinor),
    $(r.labourAtEstimateMinor),
    $(r.costAtEstimateMinor),
    $(r.marginAtEstimateMinor),
    r.marginPctAtEstimate,
    r.caveatAtEstimate,
    // Blank: nothing weighed on the order (its metal counted as estimated in the next column).
    r.metalAtActualMinor === null ? '' : $(r.metalAtActualMinor),
    $(r.metalAsEstimatedMinor),
    $(r.stonesAtActualMinor),
    $(r.outsideAtActualMinor),
    $(r.labourAtActualMinor),
    $(r.costAtActualMinor),
    $(r.marginAtActualMinor),
    r.marginPctAtActual,
    r.caveatAtActual,
    r.customerMetalLossG,
  ]
  const rows: unknown[][] = t.rows.map((r) => [r.orderNumber, r.title, r.customerName, r.finishedOn, ...line(r)])
  rows.push(['Total', `${t.total.orders} orders`, '', '', ...line(t.total)])
  rows.push(['Note', t.note, ...Array<string>(header.length - 2).fill('')])
  return toCsv(header, rows)
}

export function drillCsv(d: DrillDown): string {
  // Names first (order, job bag, piece, step …); the operation's and the record's ids last, for joining.
  const header = [
    'order',
    'job_bag',
    'piece',
    'step',
    'kind',
    'person',
    'finished_at',
    'estimate_minutes',
    'estimate_source',
    'actual_minutes',
    'left_out',
    'record_person',
    'started_at',
    'ended_at',
    'record_minutes',
    'voided',
    'corrected',
    'operation_id',
    'time_record_id',
  ]
  const rows = d.operations.flatMap((o) =>
    o.records.map((r) => [
      o.orderNumber,
      o.jobBagNumber,
      o.piece,
      o.step,
      o.kind,
      o.personName,
      o.finishedAt,
      o.estimateMinutes,
      o.estimateSource,
      o.actualMinutes,
      o.leftOut ? 'yes' : 'no',
      r.personName,
      r.startedAt,
      r.endedAt,
      r.minutes,
      r.voided ? 'yes' : 'no',
      r.corrected ? 'yes' : 'no',
      o.operationId,
      r.timeRecordId,
    ]),
  )
  return toCsv(header, rows)
}

/** A CSV answer the browser saves as a file. */
export function sendCsv(res: import('express').Response, name: string, csv: string): undefined {
  const safe =
    name
      .replace(/[^a-z0-9-]+/gi, '-')
      .replace(/^-+|-+$/g, '')
      .toLowerCase() || 'insights'
  res.status(200)
  res.setHeader('Content-Type', 'text/csv; charset=utf-8')
  res.setHeader('Content-Disposition', `attachment; filename="${safe}.csv"`)
  res.setHeader('Cache-Control', 'no-store')
  res.send(csv)
  return undefined
}
