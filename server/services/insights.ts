// The owner's figures: estimated against actual hours by kind, person, routing, order and month; drill-down; job costing; CSV.
import { and, asc, eq, inArray, sql } from 'drizzle-orm'
import type {
  BiasTrend, ComparisonRow, ComparisonTable, CostingRow, CostingTable, DrillDown, Grouping, InsightFilter, ScatterPoint,
} from '../../shared/schemas/insights'
import type { Db } from '../db/client'
import { customers, jobBags, operationCosts, operationKinds, operations, orders, people, routingTemplates, templateStepCosts, templateSteps } from '../db/schema/index'
import { notFound } from '../errors/app-error'
import type { Actor, Deps } from '../lib/route'
import { dayjs } from '../lib/time'
import { COSTING_NOTE, marginCaveat } from '../../shared/domain/costing'
import { audit } from './audit'
import { actualMinutes, finishedOperations, workshopZone, type FinishedOperation } from './estimates'

const r2 = (n: number) => Math.round(n * 100) / 100
const r1 = (n: number) => Math.round(n * 10) / 10

/** One row of figures from a group of finished operations (minutes summed first, hours rounded last). */
export function comparisonRow(key: string, label: string, ops: readonly Pick<FinishedOperation, 'estimateMinutes' | 'actualMinutes'>[]): ComparisonRow {
  const est = ops.reduce((s, o) => s + o.estimateMinutes, 0)
  const act = ops.reduce((s, o) => s + o.actualMinutes, 0)
  const bias = act - est
  const ape = ops.filter((o) => o.actualMinutes > 0).map((o) => Math.abs(o.actualMinutes - o.estimateMinutes) / o.actualMinutes)
  return {
    key, label, n: ops.length,
    estimateHours: r2(est / 60), actualHours: r2(act / 60), biasHours: r2(bias / 60),
    biasPct: est > 0 ? r1((bias / est) * 100) : null,
    direction: Math.abs(bias) < 0.05 ? 'even' : bias > 0 ? 'over' : 'under',
    mapePct: ape.length ? r1((ape.reduce((s, x) => s + x, 0) / ape.length) * 100) : null,
  }
}

const groupKey: Record<Grouping, (o: FinishedOperation) => { key: string; label: string }> = {
  kind: (o) => ({ key: String(o.kindId), label: o.kindName }),
  person: (o) => ({ key: String(o.personId), label: o.personName }),
  template: (o) => ({ key: String(o.templateId ?? 0), label: o.templateName ?? 'No routing' }),
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

const cleanFilter = (f: InsightFilter): InsightFilter => Object.fromEntries(Object.entries({ from: f.from, to: f.to, templateId: f.templateId }).filter(([, v]) => v !== undefined))

export async function scatter(db: Db, workshopId: number, filter: InsightFilter): Promise<ScatterPoint[]> {
  const ops = await finishedOperations(db, workshopId, filter)
  return ops.map((o) => ({ operationId: o.id, kindId: o.kindId, kind: o.kindName, estimateMinutes: o.estimateMinutes, actualMinutes: o.actualMinutes, finishedAt: o.finishedAt }))
}

/** Bias % by kind for each month that has finished work. */
export async function biasTrend(db: Db, workshopId: number, filter: InsightFilter): Promise<BiasTrend> {
  const ops = await finishedOperations(db, workshopId, filter)
  const months = [...new Set(ops.map((o) => o.month))].sort()
  const kinds = [...new Map(ops.map((o) => [o.kindId, { kindId: o.kindId, kind: o.kindName, color: o.kindColor }])).values()].sort((a, b) => a.kind.localeCompare(b.kind))
  return {
    months,
    series: kinds.map((k) => {
      const cells = months.map((m) => comparisonRow(m, m, ops.filter((o) => o.kindId === k.kindId && o.month === m)))
      return { ...k, biasPct: cells.map((c) => (c.n ? c.biasPct : null)), n: cells.map((c) => c.n) }
    }),
  }
}

/** The operations behind one row, with their time records (after corrections). */
export async function drillDown(db: Db, workshopId: number, groupBy: Grouping, key: string, filter: InsightFilter): Promise<DrillDown> {
  const ops = (await finishedOperations(db, workshopId, filter)).filter((o) => groupKey[groupBy](o).key === key)
  if (!ops.length) throw notFound('Row')
  return {
    groupBy, key, label: groupKey[groupBy](ops[0]!).label,
    operations: ops.map((o) => ({
      operationId: o.id, orderNumber: o.orderNumber, jobBagNumber: o.jobBagNumber, piece: o.piece, step: o.name, kind: o.kindName, personName: o.personName,
      finishedAt: o.finishedAt, estimateMinutes: o.estimateMinutes, estimateSource: o.estimateSource, actualMinutes: o.actualMinutes,
      records: o.records.map((r) => ({ timeRecordId: r.id, personName: r.personName, startedAt: r.startedAt, endedAt: r.endedAt, minutes: r.minutes, voided: r.voided, corrected: r.corrections.length > 0, endReason: r.endReason })),
    })),
  }
}

// ---------------------------------------------------------------------------------------------------------------
// Job costing

/**
 * Each complete order (every operation done or skipped, the last finished in the date range): labour at estimate
 * (estimate hours × the rate of whoever did the step), labour at actual (each time record × its person's rate),
 * outside work (the template step's figure × quantity at estimate; the invoiced figure when entered, else the estimate),
 * against the price quoted.
 */
export async function costing(db: Db, workshopId: number, filter: InsightFilter): Promise<CostingTable> {
  const tz = await workshopZone(db, workshopId)
  const rows = await db
    .select({ op: operations, bag: jobBags, order: orders, customerName: customers.name, outside: operationKinds.outside })
    .from(operations)
    .innerJoin(jobBags, eq(jobBags.id, operations.jobBagId))
    .innerJoin(orders, eq(orders.id, jobBags.orderId))
    .innerJoin(customers, eq(customers.id, orders.customerId))
    .innerJoin(operationKinds, eq(operationKinds.id, operations.kindId))
    .where(eq(jobBags.workshopId, workshopId))
  const byOrder = new Map<number, typeof rows>()
  for (const r of rows) byOrder.set(r.order.id, [...(byOrder.get(r.order.id) ?? []), r])
  const complete = [...byOrder.values()].filter((ops) => ops.every((r) => r.op.status === 'done' || r.op.status === 'skipped') && ops.some((r) => r.op.finishedAt))
  const finishedOn = (ops: typeof rows) => dayjs(ops.map((r) => r.op.finishedAt).filter(Boolean).sort().at(-1)!).tz(tz).format('YYYY-MM-DD')
  const chosen = complete.filter((ops) => {
    const day = finishedOn(ops)
    if (filter.from && day < filter.from) return false
    if (filter.to && day > filter.to) return false
    if (filter.templateId && !ops.some((r) => r.bag.templateId === filter.templateId)) return false
    return true
  })
  const opIds = chosen.flatMap((ops) => ops.filter((r) => r.op.status === 'done').map((r) => r.op.id))
  const { byOperation, records } = await actualMinutes(db, opIds)
  const staff = await db.select({ id: people.id, rate: people.hourlyRate, active: people.active }).from(people).where(eq(people.workshopId, workshopId))
  const rateOf = new Map(staff.map((p) => [p.id, p.rate]))
  const activeRates = staff.filter((p) => p.active).map((p) => p.rate)
  const averageRate = activeRates.length ? activeRates.reduce((s, x) => s + x, 0) / activeRates.length : 0
  const templateIds = [...new Set(chosen.flatMap((ops) => ops.map((r) => r.bag.templateId).filter((x): x is number => x !== null)))]
  const stepCosts = templateIds.length ? await db.select().from(templateStepCosts).where(inArray(templateStepCosts.templateId, templateIds)) : []
  const opCosts = opIds.length ? await db.select().from(operationCosts).where(inArray(operationCosts.operationId, chosen.flatMap((ops) => ops.map((r) => r.op.id)))) : []

  const out: CostingRow[] = chosen.map((ops) => {
    const order = ops[0]!.order
    let estMin = 0, actMin = 0, labourEst = 0, labourAct = 0, outsideEst = 0, outsideAct = 0, outsideSteps = 0, outsideUncosted = 0
    for (const { op, bag, outside } of ops) {
      if (op.status !== 'done') continue
      const mine = records.filter((r) => r.operationId === op.id)
      const byPerson = new Map<number, number>()
      for (const r of mine) byPerson.set(r.personId, (byPerson.get(r.personId) ?? 0) + r.minutes)
      const main = [...byPerson.entries()].sort((a, b) => b[1] - a[1] || a[0] - b[0])[0]?.[0] ?? op.plannedPersonId
      const rate = main != null ? (rateOf.get(main) ?? averageRate) : averageRate
      const actual = byOperation.get(op.id) ?? 0
      if (!outside && op.leadDays === 0) {
        estMin += op.estimateMinutes
        actMin += actual
        labourEst += (op.estimateMinutes / 60) * rate
        labourAct += mine.reduce((s, r) => s + (r.minutes / 60) * (rateOf.get(r.personId) ?? averageRate), 0)
      }
      const perUnit = stepCosts.find((c) => c.templateId === bag.templateId && c.stepKey === op.key)?.outsideCost ?? null
      const expected = (perUnit ?? 0) * Math.max(1, bag.params.quantity)
      const invoiced = opCosts.find((c) => c.operationId === op.id)?.outsideCost
      if (outside || op.leadDays > 0) {
        outsideSteps++
        if (perUnit === null && (invoiced === null || invoiced === undefined)) outsideUncosted++
      }
      outsideEst += expected
      outsideAct += invoiced ?? expected
    }
    const costEst = labourEst + outsideEst
    const costAct = labourAct + outsideAct
    return {
      orderId: order.id, orderNumber: order.number, title: order.title, customerName: ops[0]!.customerName, finishedOn: finishedOn(ops), priceQuoted: order.priceQuoted,
      estimateHours: r2(estMin / 60), actualHours: r2(actMin / 60),
      labourAtEstimate: r2(labourEst), labourAtActual: r2(labourAct), outsideAtEstimate: r2(outsideEst), outsideAtActual: r2(outsideAct),
      costAtEstimate: r2(costEst), costAtActual: r2(costAct),
      marginAtEstimate: r2(order.priceQuoted - costEst), marginAtActual: r2(order.priceQuoted - costAct),
      marginPctAtEstimate: order.priceQuoted > 0 ? r1(((order.priceQuoted - costEst) / order.priceQuoted) * 100) : null,
      marginPctAtActual: order.priceQuoted > 0 ? r1(((order.priceQuoted - costAct) / order.priceQuoted) * 100) : null,
      outsideSteps, outsideUncosted, marginCaveat: marginCaveat({ outsideSteps, outsideUncosted }),
    }
  }).sort((a, b) => b.finishedOn.localeCompare(a.finishedOn) || a.orderNumber.localeCompare(b.orderNumber))

  const sum = (f: (r: CostingRow) => number) => r2(out.reduce((s, r) => s + f(r), 0))
  const price = sum((r) => r.priceQuoted)
  const costEst = sum((r) => r.costAtEstimate)
  const costAct = sum((r) => r.costAtActual)
  return {
    filter: cleanFilter(filter), rows: out,
    total: {
      orders: out.length, priceQuoted: price, estimateHours: sum((r) => r.estimateHours), actualHours: sum((r) => r.actualHours),
      labourAtEstimate: sum((r) => r.labourAtEstimate), labourAtActual: sum((r) => r.labourAtActual),
      outsideAtEstimate: sum((r) => r.outsideAtEstimate), outsideAtActual: sum((r) => r.outsideAtActual),
      costAtEstimate: costEst, costAtActual: costAct, marginAtEstimate: r2(price - costEst), marginAtActual: r2(price - costAct),
      marginPctAtEstimate: price > 0 ? r1(((price - costEst) / price) * 100) : null, marginPctAtActual: price > 0 ? r1(((price - costAct) / price) * 100) : null,
      outsideSteps: out.reduce((s, r) => s + r.outsideSteps, 0), outsideUncosted: out.reduce((s, r) => s + r.outsideUncosted, 0),
      marginCaveat: marginCaveat({ outsideSteps: out.reduce((s, r) => s + r.outsideSteps, 0), outsideUncosted: out.reduce((s, r) => s + r.outsideUncosted, 0) }),
    },
    note: COSTING_NOTE,
  }
}

/** Every outside-work step of the workshop's routings with its expected cost per unit (null: not set). */
export async function listStepCosts(db: Db, workshopId: number) {
  const rows = await db
    .select({ templateId: routingTemplates.id, templateName: routingTemplates.name, stepKey: templateSteps.key, stepName: templateSteps.name, leadDays: templateSteps.leadDays, outsideCost: templateStepCosts.outsideCost })
    .from(templateSteps)
    .innerJoin(routingTemplates, eq(routingTemplates.id, templateSteps.templateId))
    .innerJoin(operationKinds, eq(operationKinds.id, templateSteps.kindId))
    .leftJoin(templateStepCosts, and(eq(templateStepCosts.templateId, templateSteps.templateId), eq(templateStepCosts.stepKey, templateSteps.key)))
    .where(and(eq(routingTemplates.workshopId, workshopId), sql`(${templateSteps.leadDays} > 0 or ${operationKinds.outside})`))
    .orderBy(asc(routingTemplates.name), asc(templateSteps.seq))
  return rows.map((r) => ({ ...r, outsideCost: r.outsideCost ?? null }))
}

/** The owner sets the expected outside cost (per unit) of a template step. */
export async function setStepCost({ db }: Deps, actor: Actor, templateId: number, stepKey: string, outsideCost: number | null) {
  return db.transaction(async (tx) => {
    const [t] = await tx.select({ id: routingTemplates.id }).from(routingTemplates).where(and(eq(routingTemplates.id, templateId), eq(routingTemplates.workshopId, actor.workshopId)))
    if (!t) throw notFound('Routing template')
    await tx.insert(templateStepCosts).values({ templateId, stepKey, outsideCost }).onConflictDoUpdate({ target: [templateStepCosts.templateId, templateStepCosts.stepKey], set: { outsideCost, updatedAt: new Date() } })
    await audit(tx, actor, 'set-outside-cost', 'routing-template', templateId, { stepKey, outsideCost })
    return { templateId, stepKey, outsideCost }
  })
}

/** The owner records what an operation's outside work was invoiced at. */
export async function setOperationCost({ db }: Deps, actor: Actor, operationId: number, outsideCost: number | null) {
  return db.transaction(async (tx) => {
    const [op] = await tx.select({ id: operations.id }).from(operations).innerJoin(jobBags, eq(jobBags.id, operations.jobBagId))
      .where(and(eq(operations.id, operationId), eq(jobBags.workshopId, actor.workshopId)))
    if (!op) throw notFound('Operation')
    await tx.insert(operationCosts).values({ operationId, outsideCost }).onConflictDoUpdate({ target: operationCosts.operationId, set: { outsideCost, updatedAt: new Date() } })
    await audit(tx, actor, 'set-outside-cost', 'operation', operationId, { outsideCost })
    return { operationId, outsideCost }
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
const CSV_NAME: Record<Grouping, string> = { kind: 'kind', person: 'person', template: 'routing', order: 'order', month: 'month' }

export function comparisonCsv(t: ComparisonTable): string {
  const name = CSV_NAME[t.groupBy]
  // A month's key is the month itself: no id column for it. Work without a routing has key 0, no id.
  const withId = t.groupBy !== 'month'
  const header = [name, 'operations', 'estimate_hours', 'actual_hours', 'bias_hours', 'bias_pct', 'direction', 'mape_pct', ...(withId ? [`${name}_id`] : [])]
  const line = (r: ComparisonRow, id: string) => [r.label, r.n, r.estimateHours, r.actualHours, r.biasHours, r.biasPct, r.direction, r.mapePct, ...(withId ? [id] : [])]
  return toCsv(header, [...t.rows.map((r) => line(r, r.key === '0' ? '' : r.key)), line(t.total, '')])
}

/**
 * Job costing as CSV: the margin columns say in their names that they leave metal and stones out, a column beside them
 * says what each row's margin counts, and a last line carries the note (blank cells before it keep the column count).
 */
export function costingCsv(t: CostingTable): string {
  const header = ['order', 'title', 'customer', 'finished_on', 'price_quoted', 'estimate_hours', 'actual_hours', 'labour_at_estimate', 'labour_at_actual',
    'outside_at_estimate', 'outside_at_actual', 'cost_at_estimate', 'cost_at_actual', 'margin_at_estimate_without_metal_and_stones', 'margin_at_actual_without_metal_and_stones',
    'margin_pct_at_estimate_without_metal_and_stones', 'margin_pct_at_actual_without_metal_and_stones', 'margin_counts']
  const rows: unknown[][] = t.rows.map((r) => [r.orderNumber, r.title, r.customerName, r.finishedOn, r.priceQuoted, r.estimateHours, r.actualHours, r.labourAtEstimate, r.labourAtActual,
    r.outsideAtEstimate, r.outsideAtActual, r.costAtEstimate, r.costAtActual, r.marginAtEstimate, r.marginAtActual, r.marginPctAtEstimate, r.marginPctAtActual, r.marginCaveat])
  const x = t.total
  rows.push(['Total', `${x.orders} orders`, '', '', x.priceQuoted, x.estimateHours, x.actualHours, x.labourAtEstimate, x.labourAtActual, x.outsideAtEstimate, x.outsideAtActual,
    x.costAtEstimate, x.costAtActual, x.marginAtEstimate, x.marginAtActual, x.marginPctAtEstimate, x.marginPctAtActual, x.marginCaveat])
  rows.push(['Note', t.note, ...Array<string>(header.length - 2).fill('')])
  return toCsv(header, rows)
}

export function drillCsv(d: DrillDown): string {
  // Names first (order, job bag, piece, step …); the operation's and the record's ids last, for joining.
  const header = ['order', 'job_bag', 'piece', 'step', 'kind', 'person', 'finished_at', 'estimate_minutes', 'estimate_source', 'actual_minutes',
    'record_person', 'started_at', 'ended_at', 'record_minutes', 'voided', 'corrected', 'operation_id', 'time_record_id']
  const rows = d.operations.flatMap((o) => o.records.map((r) => [o.orderNumber, o.jobBagNumber, o.piece, o.step, o.kind, o.personName, o.finishedAt,
    o.estimateMinutes, o.estimateSource, o.actualMinutes, r.personName, r.startedAt, r.endedAt, r.minutes, r.voided ? 'yes' : 'no', r.corrected ? 'yes' : 'no', o.operationId, r.timeRecordId]))
  return toCsv(header, rows)
}

/** A CSV answer the browser saves as a file. */
export function sendCsv(res: import('express').Response, name: string, csv: string): undefined {
  const safe = name.replace(/[^a-z0-9-]+/gi, '-').replace(/^-+|-+$/g, '').toLowerCase() || 'insights'
  res.status(200)
  res.setHeader('Content-Type', 'text/csv; charset=utf-8')
  res.setHeader('Content-Disposition', `attachment; filename="${safe}.csv"`)
  res.setHeader('Cache-Control', 'no-store')
  res.send(csv)
  return undefined
}
