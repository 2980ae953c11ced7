// Customers: searchable list with open-order counts; references are generated (C-0001).
import { and, asc, count, desc, eq, ilike, or, sql } from 'drizzle-orm'
import type { CustomerInput } from '../../shared/schemas/customer'
import type { ListQuery } from '../../shared/schemas/common'
import type { Db } from '../db/client'
import { customers, orders } from '../db/schema/index'
import type { Actor, Deps } from '../lib/route'
import { audit } from './audit'
import { requireOwned, updateVersioned } from './versioned'

/** ILIKE pattern for "contains", with the user's % and _ taken literally. */
const containing = (text: string) => `%${text.replace(/[\\%_]/g, '\\$&')}%`

const openCount = sql<number>`(select count(*)::int from ${orders} where ${orders.customerId} = ${customers.id} and ${orders.status} not in ('collected','cancelled'))`

export async function listCustomers(db: Db, workshopId: number, q: ListQuery) {
  const like = q.q ? containing(q.q) : null
  const where = and(eq(customers.workshopId, workshopId), like ? or(ilike(customers.name, like), ilike(customers.email, like), ilike(customers.reference, like)) : undefined)
  const sortCol = q.sort === 'reference' ? customers.reference : q.sort === 'email' ? customers.email : customers.name
  const [total] = await db.select({ n: count() }).from(customers).where(where)
  const items = await db.select({ id: customers.id, reference: customers.reference, name: customers.name, email: customers.email, phone: customers.phone, notes: customers.notes, version: customers.version, openOrders: openCount })
    .from(customers).where(where).orderBy(q.order === 'desc' ? desc(sortCol) : asc(sortCol), asc(customers.id)).limit(q.pageSize).offset((q.page - 1) * q.pageSize)
  return { items, total: total?.n ?? 0, page: q.page, pageSize: q.pageSize }
}

export async function getCustomer(db: Db, workshopId: number, id: number) {
  return requireOwned(db, customers, 'Customer', id, workshopId)
}

export async function createCustomer({ db, realtime }: Deps, actor: Actor, input: CustomerInput) {
  const c = await db.transaction(async (tx) => {
    // Serialise reference numbering per workshop.
    await tx.execute(sql`select pg_advisory_xact_lock(1001, ${actor.workshopId})`)
    const [{ n } = { n: 0 }] = await tx.select({ n: count() }).from(customers).where(eq(customers.workshopId, actor.workshopId))
    const reference = `C-${String(n + 1).padStart(4, '0')}`
    const [c] = await tx.insert(customers).values({ workshopId: actor.workshopId, reference, ...input }).returning()
    await audit(tx, actor, 'create', 'customer', c!.id, { reference })
    return c!
  })
  realtime.emit(actor.workshopId, 'masterdata:changed', { entity: 'customer', id: c.id })
  return c
}

export async function updateCustomer({ db, realtime }: Deps, actor: Actor, id: number, input: Partial<CustomerInput> & { version: number }) {
  const { version, ...values } = input
  const c = await db.transaction(async (tx) => {
    const c = await updateVersioned(tx, customers, 'Customer', { id, workshopId: actor.workshopId, version, values })
    await audit(tx, actor, 'update', 'customer', id, values)
    return c
  })
  realtime.emit(actor.workshopId, 'masterdata:changed', { entity: 'customer', id })
  return c
}
