// Orders and their job bags: numbering, routing steps copied into operations, and the order list (with each order's forecast).
import { and, asc, count, desc, eq, ilike, inArray, or, sql } from 'drizzle-orm'
import type { ListQuery, Page } from '../../shared/schemas/common'
import { orderDateProblems, type OrderInput, type OrderSummary, type OrderUpdate } from '../../shared/schemas/order'
import type { QuotedStone } from '../../shared/schemas/quote'
import { routingStepMinutes } from '../../shared/domain/estimate'
import { storedVatTerms, type StoredVatTerms } from '../../shared/domain/vat'
import type { Db, Trx } from '../db/client'
import { auditLog, customers, jobBags, operations, orders, routingSteps, routings, workshops } from '../db/schema/index'
import { AppError, invalid, notFound, staleVersion } from '../errors/app-error'
import type { Actor, Deps } from '../lib/route'
import { dayjs } from '../lib/time'
import { audit } from './audit'
import { sendReadyNotice } from './mail'
import { requireCustomerStonesBack } from './stones'
import { deliverOrderMetal, handBackCustomersPieces, heldCustomersPieces } from './metal'
import { listForecasts } from './order-forecast'
import { requireOwned, updateVersioned } from './versioned'
import { LOCK } from '../lib/locks'

/** ILIKE pattern for "contains", with the user's % and _ taken literally. */
const containing = (text: string) => `%${text.replace(/[\\%_]/g, '\\$&')}%`

const bagCount = sql<number>`(select count(*)::int from ${jobBags} where ${jobBags.orderId} = ${orders.id})`

export async function listOrders(
  { db, cache }: Pick<Deps, 'db' | 'cache'>,
  workshopId: number,
  q: ListQuery & { status?: string | string[] },
): Promise<Page<OrderSummary>> {
  const statuses = q.status === undefined ? [] : Array.isArray(q.status) ? q.status : [q.status]
  const like = q.q ? containing(q.q) : null
  const where = and(
    eq(orders.workshopId, workshopId),
    statuses.length ? inArray(orders.status, statuses) : undefined,
    like ? or(ilike(orders.number, like), ilike(orders.title, like), ilike(customers.name, like)) : undefined,
  )
  const sortCol = q.sort === 'number' ? orders.number : q.sort === 'priority' ? orders.priority : q.sort === 'customer' ? customers.name : orders.dueDate
  const [total] = await db.select({ n: count() }).from(orders).innerJoin(customers, eq(customers.id, orders.customerId)).where(where)
  const items = await db
    .select({
      id: orders.id,
      number: orders.number,
      customerId: orders.customerId,
      customerName: customers.name,
      title: orders.title,
      dueDate: orders.dueDate,
      promisedDate: orders.promisedDate,
      priority: orders.priority,
      status: orders.status,
      priceQuotedMinor: orders.priceQuotedMinor,
      currency: workshops.currency,
      jobBags: bagCount,
      version: orders.version,
    })
    .from(orders)
    .innerJoin(customers, eq(customers.id, orders.customerId))
    .innerJoin(workshops, eq(workshops.id, orders.workshopId))
    .where(where)
    .orderBy(q.order === 'desc' ? desc(sortCol) : asc(sortCol), asc(orders.id))
    .limit(q.pageSize)
    .offset((q.page - 1) * q.pageSize)
  const expected = await listForecasts({ db, cache }, workshopId, items)
  return { items: items.map((o) => ({ ...o, expected: expected.get(o.id) ?? null })), total: total?.n ?? 0, page: q.page, pageSize: q.pageSize }
}

/** The customer's own pieces an order holds in the workshop (what cancelling it hands back). */
export async function orderCustomersPieces(db: Db, workshopId: number, id: number) {
  await requireOwned(db, orders, 'Order', id, workshopId)
  return heldCustomersPieces(db, workshopId, id)
}

export async function getOrder(db: Db, workshopId: number, id: number) {
  const o = await requireOwned(db, orders, 'Order', id, workshopId)
  const [c] = await db.select({ name: customers.name, reference: customers.reference }).from(customers).where(eq(customers.id, o.customerId))
  const [w] = await db.select({ currency: workshops.currency }).from(workshops).where(eq(workshops.id, workshopId))
  const bags = await db.select().from(jobBags).where(eq(jobBags.orderId, id)).orderBy(asc(jobBags.number))
  const ops = bags.length
    ? await db
        .select()
        .from(operations)
        .where(
          inArray(
            operations.jobBagId,
            bags.map((b) => b.id),
          ),
        )
        .orderBy(asc(operations.seq))
    : []
  return {
    ...o,
    currency: w?.currency ?? 'GBP',
    customerName: c?.name ?? '',
    customerReference: c?.reference ?? '',
    jobBags: bags.map((b) => ({ ...b, operations: ops.filter((op) => op.jobBagId === b.id) })),
  }
}

/** The workshop's day now (YYYY-MM-DD), in its time zone. */
export async function workshopDay(db: Db | Trx, workshopId: number, now = new Date()): Promise<string> {
  const [w] = await db.select({ timeZone: workshops.timeZone }).from(workshops).where(eq(workshops.id, workshopId))
  return dayjs(now)
    .tz(w?.timeZone ?? 'Europe/London')
    .format('YYYY-MM-DD')
}

/**
 * 400 naming each date an order may not be given today (the rule the order dialog checks too): a new order's due and
 * promised dates are today or later; a change checks only the dates it changes, so an order gone past its due day still edits.
 */
export async function refusePastDates(
  db: Db | Trx,
  workshopId: number,
  dates: { dueDate?: string; promisedDate?: string | null },
  before?: { dueDate: string; promisedDate: string | null },
) {
  const fields = orderDateProblems(dates, await workshopDay(db, workshopId), before) as Record<string, string>
  if (Object.keys(fields).length)
    throw new AppError({
      code: 'validation',
      message: Object.entries(fields)
        .map(([f, why]) => `${f}: ${why}`)
        .join('; '),
      fields,
    })
}

/** A piece as an order is taken with it: as the order form sends it, or made from a quote with the quote's stone rows. */
export type TakenPiece = OrderInput['pieces'][number] & { quotedStones?: QuotedStone[] }
/** An order as it is taken: the order form's, the promise check's, or one made from a quote (its piece keeps the quoted stones). */
export type TakenOrder = Omit<OrderInput, 'pieces'> & { pieces: TakenPiece[] }

/** Adds one job bag with its routing's steps as operations (inside the caller's transaction). */
export async function addJobBag(tx: Trx, workshopId: number, orderId: number, orderNumber: string, index: number, piece: TakenPiece) {
  const [t] = await tx
    .select()
    .from(routings)
    .where(and(eq(routings.id, piece.routingId), eq(routings.workshopId, workshopId)))
  if (!t) throw invalid(`pieces.${index}.routingId`, 'is not a routing of this workshop')
  const steps = await tx.select().from(routingSteps).where(eq(routingSteps.routingId, t.id)).orderBy(asc(routingSteps.seq))
  const [bag] = await tx
    .insert(jobBags)
    .values({
      workshopId,
      orderId,
      number: `${orderNumber}-${index + 1}`,
      piece: piece.piece,
      routingId: t.id,
      routingKind: t.kind,
      params: piece.params,
      quotedStones: piece.quotedStones?.length ? piece.quotedStones : null,
    })
    .returning()
  await tx.insert(operations).values(
    steps.map((s) => ({
      jobBagId: bag!.id,
      seq: s.seq,
      key: s.key,
      kindId: s.kindId,
      name: s.name,
      requiredLevel: s.requiredLevel,
      estimateMinutes: s.leadDays > 0 ? 0 : routingStepMinutes(s, t, piece.params),
      estimateSource: 'routing',
      waitAfterMinutes: s.waitAfterMinutes,
      leadDays: s.leadDays,
      after: s.after,
      status: s.after.length ? 'pending' : 'ready',
    })),
  )
  return bag!
}

/**
 * Takes an order. `within`, when given, runs inside the same transaction after the job bags are written (taking an order
 * from a promise books its steps there), and its answer is returned beside the order. The order keeps the VAT terms it is made
 * under: `vat` when given (an order made from a quote takes the quote's), else the workshop's as they are now.
 */
export async function takeOrder<T>(
  { db, realtime }: Deps,
  actor: Actor,
  input: TakenOrder,
  within: (tx: Trx, orderId: number) => Promise<T>,
  vat?: StoredVatTerms,
) {
  const id = await db.transaction(async (tx) => {
    const [c] = await tx
      .select({ id: customers.id })
      .from(customers)
      .where(and(eq(customers.id, input.customerId), eq(customers.workshopId, actor.workshopId)))
    if (!c) throw invalid('customerId', 'is not a customer of this workshop')
    await tx.execute(sql`select pg_advisory_xact_lock(${LOCK.orderNumbers}, ${actor.workshopId})`)
    // The year the order is taken in, on the workshop's clock (not its due date's).
    const year = (await workshopDay(tx, actor.workshopId)).slice(2, 4)
    const [{ n } = { n: 0 }] = await tx.select({ n: count() }).from(orders).where(eq(orders.workshopId, actor.workshopId))
    const number = `MG${year}-${String(n + 1).padStart(4, '0')}`
    const { pieces, ...values } = input
    const [w] = await tx.select().from(workshops).where(eq(workshops.id, actor.workshopId))
    const [o] = await tx
      .insert(orders)
      .values({ workshopId: actor.workshopId, number, ...values, ...storedVatTerms(vat ?? w!), depositPct: w!.depositPct })
      .returning()
    for (const [i, p] of pieces.entries()) await addJobBag(tx, actor.workshopId, o!.id, number, i, p)
    await audit(tx, actor, 'create', 'order', o!.id, { number, pieces: pieces.length })
    return { id: o!.id, extra: await within(tx, o!.id) }
  })
  realtime.emit(actor.workshopId, 'order:created', { id: id.id })
  return { order: await getOrder(db, actor.workshopId, id.id), extra: id.extra }
}

export async function createOrder(deps: Deps, actor: Actor, input: OrderInput) {
  await refusePastDates(deps.db, actor.workshopId, input)
  return (await takeOrder(deps, actor, input, async () => null)).order
}

/**
 * The office's change of an order, made on the version it read, as it stands on the order now. Work at a bench moves an open
 * order in work and back by itself (`syncOrderStatus`), each move a new version audited with its number; when such moves are
 * all that happened since, nobody else touched what the office edits, so its change goes onto the order as it is now: a
 * status it left as it read it stays as the bench made it, and a status it changed stands unless the bench moved it too
 * (then both changed the one field, a real clash). Any other change since (another edit) is refused as a stale version.
 */
async function onCurrentVersion(
  tx: Trx,
  orderId: number,
  stored: { status: string; version: number },
  read: number,
  values: Omit<OrderUpdate, 'version'>,
): Promise<{ version: number; values: Omit<OrderUpdate, 'version'> }> {
  if (read === stored.version) return { version: read, values }
  const moves =
    read < stored.version
      ? await tx
          .select({ details: auditLog.details })
          .from(auditLog)
          .where(
            and(
              eq(auditLog.entity, 'order'),
              eq(auditLog.entityId, orderId),
              eq(auditLog.action, 'status'),
              sql`(${auditLog.details}->>'version')::int > ${read}`,
              sql`(${auditLog.details}->>'version')::int <= ${stored.version}`,
            ),
          )
          .orderBy(asc(auditLog.id))
      : []
  const versions = new Set(moves.map((m) => Number(m.details.version)))
  if (versions.size !== stored.version - read || moves.length !== versions.size) throw staleVersion('Order')
  const statusRead = String(moves[0]!.details.from)
  const { status, ...rest } = values
  if (status === undefined || status === statusRead) return { version: stored.version, values: rest }
  if (stored.status !== statusRead) throw staleVersion('Order')
  return { version: stored.version, values: { ...rest, status } }
}

export async function updateOrder(deps: Deps, actor: Actor, id: number, input: OrderUpdate) {
  const { db, realtime } = deps
  const { version: read, handBack, ...asSent } = input
  let becameReady = false
  let handedBack: Awaited<ReturnType<typeof handBackCustomersPieces>> = []
  const o = await db.transaction(async (tx) => {
    // Locked first, so a bench moving the order's status waits for this change rather than slipping in under it.
    const [stored] = await tx
      .select({ status: orders.status, dueDate: orders.dueDate, promisedDate: orders.promisedDate, version: orders.version })
      .from(orders)
      .where(and(eq(orders.id, id), eq(orders.workshopId, actor.workshopId)))
      .for('update')
    if (!stored) throw notFound('Order')
    const { version, values } = await onCurrentVersion(tx, id, stored, read, asSent)
    const cancelled = (values.status ?? stored.status) === 'cancelled'
    if (handBack && !cancelled) throw invalid('handBack', 'is recorded only with the order cancelled')
    if (values.status) await requireCustomerStonesBack(tx, actor.workshopId, id, values.status)
    if (values.dueDate !== undefined || values.promisedDate !== undefined) await refusePastDates(tx, actor.workshopId, values, stored)
    const o = await updateVersioned(tx, orders, 'Order', { id, workshopId: actor.workshopId, version, values: { ...values, updatedAt: new Date() } })
    await audit(tx, actor, 'update', 'order', id, values)
    // Collected: the finished pieces' metal leaves stock with them.
    if (values.status === 'collected') await deliverOrderMetal(tx, actor, id)
    // Cancelled: the customer's own pieces go back to them, at the weights handed over (else as held). A cancelled order can
    // hand back later too, a piece that was still at the bench when it was cancelled.
    if (cancelled && (stored.status !== 'cancelled' || handBack)) handedBack = await handBackCustomersPieces(tx, actor, id, handBack)
    becameReady = values.status === 'ready' && stored.status !== 'ready'
    // With the job queue the notice is queued in this transaction: it goes out if and only if the change commits.
    if (becameReady && deps.jobs) await sendReadyNotice({ ...deps, db: tx as unknown as Db }, actor.workshopId, id)
    return o
  })
  realtime.emit(actor.workshopId, 'order:updated', { id, version: o.version })
  for (const m of handedBack)
    realtime.emit(actor.workshopId, 'metal:recorded', { id: m.id, kind: m.kind, alloyId: m.alloyId, jobBagId: m.jobBagId, refiningLotId: null })
  // Without a queue (scripts): sent after commit; the outcome is kept in the outbox and never undoes the change.
  if (becameReady && !deps.jobs) await sendReadyNotice(deps, actor.workshopId, id).catch((err) => console.error('[mail] ready notice:', (err as Error).message))
  return getOrder(db, actor.workshopId, id)
}
