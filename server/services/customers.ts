// Customers: searchable list with open-order counts; references are generated (C-0001).
import { and, asc, count, desc, eq, ilike, inArray, notInArray, or, sql } from 'drizzle-orm'
import type { Customer, CustomerInput } from '../../shared/schemas/customer'
import type { ListQuery, Page } from '../../shared/schemas/common'
import type { Db } from '../db/client'
import { customers, orders } from '../db/schema/index'
import type { Actor, Deps } from '../lib/route'
import { audit } from './audit'
import { requireOwned, updateVersioned } from './versioned'
import { LOCK } from '../lib/locks'

/** ILIKE pattern for "contains", with the user's % and _ taken literally. */
const containing = (text: string) => `%${text.replace(/[\\%_]/g, '\\$&')}%`

/** Orders still in the workshop's hands (not collected, not cancelled), per customer of the page. */
async function openOrderCounts(db: Db, workshopId: number, customerIds: number[]): Promise<Map<number, number>> {
  if (!customerIds.length) return new Map()
  // A grouped query rather than a correlated sub-query: Drizzle leaves columns unqualified in a one-table select, so
  // "orders.customer_id = customers.id" inside the sub-query would bind both sides to orders.
  const rows = await db
    .select({ customerId: orders.customerId, n: count() })
    .from(orders)
    .where(and(eq(orders.workshopId, workshopId), inArray(orders.customerId, customerIds), notInArray(orders.status, ['collected', 'cancelled'])))
    .groupBy(orders.customerId)
  return new Map(rows.map((r) => [r.customerId, r.n]))
}

export async function listCustomers(db: Db, workshopId: number, q: ListQuery): Promise<Page<Customer>> {
  const like = q.q ? containing(q.q) : null
  const where = and(
    eq(customers.workshopId, workshopId),
    like ? or(ilike(customers.name, like), ilike(customers.email, like), ilike(customers.reference, like)) : undefined,
  )
  const sortCol = q.sort === 'reference' ? customers.reference : q.sort === 'email' ? customers.email : customers.name
  const [total] = await db.select({ n: count() }).from(customers).where(where)
  const rows = await db
    .select({
      id: customers.id,
      reference: customers.reference,
      name: customers.name,
      email: customers.email,
      phone: customers.phone,
      notes: customers.notes,
      version: customers.version,
    })
    .from(customers)
    .where(where)
    .orderBy(q.order === 'desc' ? desc(sortCol) : asc(sortCol), asc(customers.id))
    .limit(q.pageSize)
    .offset((q.page - 1) * q.pageSize)
  const open = await openOrderCounts(
    db,
    workshopId,
    rows.map((r) => r.id),
  )
  const items = rows.map((r) => ({ ...r, openOrders: open.get(r.id) ?? 0 }))
  return { items, total: total?.n ?? 0, page: q.page, pageSize: q.pageSize }
}

/** One customer row with its open-order count, as the list gives it. */
async function withOpenOrders<T extends { id: number }>(db: Db, workshopId: number, c: T) {
  return { ...c, openOrders: (await openOrderCounts(db, workshopId, [c.id])).get(c.id) ?? 0 }
}

export async function getCustomer(db: Db, workshopId: number, id: number): Promise<Customer> {
  return withOpenOrders(db, workshopId, await requireOwned(db, customers, 'Customer', id, workshopId))
}

export async function createCustomer({ db, realtime }: Deps, actor: Actor, input: CustomerInput) {
  const c = await db.transaction(async (tx) => {
    // Serialise reference numbering per workshop.
    await tx.execute(sql`select pg_advisory_xact_lock(${LOCK.customerNumbers}, ${actor.workshopId})`)
    const [{ n } = { n: 0 }] = await tx.select({ n: count() }).from(customers).where(eq(customers.workshopId, actor.workshopId))
    const reference = `C-${String(n + 1).padStart(4, '0')}`
    const [c] = await tx
      .insert(customers)
      .values({ workshopId: actor.workshopId, reference, ...input })
      .returning()
    await audit(tx, actor, 'create', 'customer', c!.id, { reference })
    return c!
  })
  realtime.emit(actor.workshopId, 'masterdata:changed', { entity: 'customer', id: c.id })
  return withOpenOrders(db, actor.workshopId, c)
}

export async function updateCustomer({ db, realtime }: Deps, actor: Actor, id: number, input: Partial<CustomerInput> & { version: number }) {
  const { version, ...values } = input
  const c = await db.transaction(async (tx) => {
    const c = await updateVersioned(tx, customers, 'Customer', { id, workshopId: actor.workshopId, version, values })
    await audit(tx, actor, 'update', 'customer', id, values)
    return c
  })
  realtime.emit(actor.workshopId, 'masterdata:changed', { entity: 'customer', id })
  return withOpenOrders(db, actor.workshopId, c)
}
