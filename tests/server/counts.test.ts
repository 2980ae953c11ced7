// Counts shown in lists (a customer's open orders, an order's job bags, a job bag's steps done) against orders made in the test and counted by hand.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { and, count, eq, notInArray } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { createTestApp, signedIn, type Agent, type TestApp } from '../setup/app'

let t: TestApp
let sales: Agent
let manager: Agent
let routing: Record<string, { id: number; steps: unknown[] }>
beforeAll(async () => {
  t = await createTestApp()
  sales = await signedIn(t.app, 'sales')
  manager = await signedIn(t.app, 'manager')
  routing = Object.fromEntries((await manager.get('/api/routings')).body.map((x: { code: string }) => [x.code, x]))
})
afterAll(async () => {
  await t?.close()
})

const newCustomer = async (name: string) => {
  const r = await sales.post('/api/customers', { name, email: `${name.split(' ')[0]!.toLowerCase()}@example.test` })
  expect(r.status).toBe(201)
  return r.body.id as number
}
const takeOrder = async (customerId: number, pieces = 1) => {
  const r = await sales.post('/api/orders', {
    customerId,
    title: 'Count check',
    dueDate: '2031-03-14',
    pieces: Array.from({ length: pieces }, (_, i) => ({ routingId: routing['ring-resize']!.id, piece: `Resize ${i + 1}` })),
  })
  expect(r.status, JSON.stringify(r.body)).toBe(201)
  return r.body as { id: number; version: number; jobBags: { id: number; operations: { id: number; version: number }[] }[] }
}
const setStatus = async (o: { id: number }, status: string) => {
  const now = (await sales.get(`/api/orders/${o.id}`)).body
  const r = await sales.patch(`/api/orders/${o.id}`, { status, version: now.version })
  expect(r.status, JSON.stringify(r.body)).toBe(200)
}

describe('counts in lists', () => {
  it('when a customer has four orders of which one is collected and one cancelled, then the list and the customer say 2 open', async () => {
    const id = await newCustomer('Wynn Castellane')
    const other = await newCustomer('Oriel Pashby')
    const orders = [await takeOrder(id), await takeOrder(id), await takeOrder(id), await takeOrder(id), await takeOrder(other)]
    await setStatus(orders[2]!, 'collected')
    await setStatus(orders[3]!, 'cancelled')
    // Hand-worked: Wynn 4 orders − 1 collected − 1 cancelled = 2 open; Oriel 1 open; a new customer 0.
    const fresh = await newCustomer('Ansel Brookmire')
    const list = (await sales.get('/api/customers?q=e&pageSize=100')).body.items as { id: number; openOrders: number }[]
    const open = Object.fromEntries(list.map((c) => [c.id, c.openOrders]))
    expect([open[id], open[other], open[fresh]]).toEqual([2, 1, 0])
    expect((await sales.get(`/api/customers/${id}`)).body.openOrders).toBe(2)
  })

  it('when the seeded customers are listed, then each open-order count equals the orders counted straight from the database', async () => {
    const list = (await sales.get('/api/customers?pageSize=100')).body.items as { id: number; openOrders: number }[]
    const rows = await t.db
      .select({ id: s.customers.id, n: count(s.orders.id) })
      .from(s.customers)
      .leftJoin(s.orders, and(eq(s.orders.customerId, s.customers.id), notInArray(s.orders.status, ['collected', 'cancelled'])))
      .groupBy(s.customers.id)
    const want = Object.fromEntries(rows.map((r) => [r.id, r.n]))
    expect(Object.fromEntries(list.map((c) => [c.id, c.openOrders]))).toEqual(Object.fromEntries(list.map((c) => [c.id, want[c.id]])))
    // The seed has 30 open orders over 16 customers, so some customer has more than none.
    expect(list.some((c) => c.openOrders > 0)).toBe(true)
  })

  it('when an order has three pieces, then the order list says 3 job bags', async () => {
    const id = await newCustomer('Tamsin Velloway')
    const o = await takeOrder(id, 3)
    const list = (await sales.get('/api/orders?q=Tamsin')).body.items as { id: number; jobBags: number }[]
    expect(list.find((x) => x.id === o.id)?.jobBags).toBe(3)
  })

  it('when one step of a job bag is skipped, then the job bag list says 1 of 4 finished', async () => {
    // Ring resize (seed.ts): cut, solder, file, polish = 4 steps.
    const id = await newCustomer('Rafe Dunmallow')
    const o = await takeOrder(id)
    const bag = o.jobBags[0]!
    const op = bag.operations.at(-1)!
    const skip = await manager.post(`/api/job-bags/${bag.id}/operations/${op.id}/skip`, { reason: 'Customer will polish it themselves', version: op.version })
    expect(skip.status, JSON.stringify(skip.body)).toBeLessThan(300)
    const rows = (await manager.get(`/api/job-bags?orderId=${o.id}`)).body as { id: number; operations: number; finished: number }[]
    expect(rows.find((r) => r.id === bag.id)).toMatchObject({ operations: 4, finished: 1 })
  })
})
