// The deposit an order asks stays what it was when the order was taken: changing the workshop's default deposit % later applies
// to orders taken from then on, never to those already taken (their customers were told a figure); a cancelled order asks for
// nothing more. Figures worked by hand.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { createTestApp, signedIn, type Agent, type TestApp } from '../setup/app'

let t: TestApp
let sales: Agent, owner: Agent, manager: Agent
let customerId: number
let routingId: number

beforeAll(async () => {
  t = await createTestApp()
  ;[sales, owner, manager] = await Promise.all([signedIn(t.app, 'sales'), signedIn(t.app, 'owner'), signedIn(t.app, 'manager')])
  customerId = (await sales.get('/api/customers?q=Emrys')).body.items[0].id
  routingId = (await manager.get('/api/routings')).body.find((x: { code: string }) => x.code === 'bezel-ring').id
})
afterAll(async () => {
  await t?.close()
})

/** The workshop's default deposit % set as the settings page sends it (the settings as they are, with the change on top). */
async function defaultDeposit(pct: number) {
  const { id: _id, publicUrlSuggestion: _s, ...rest } = (await owner.get('/api/workshop')).body
  const r = await owner.put('/api/workshop', { ...rest, depositPct: pct })
  expect(r.status, JSON.stringify(r.body)).toBe(200)
}
async function takeOrder(priceQuotedMinor: number): Promise<number> {
  const r = await sales.post('/api/orders', {
    customerId,
    title: 'Garnet bezel ring',
    dueDate: '2031-06-20',
    priceQuotedMinor,
    pieces: [{ routingId, piece: 'Garnet bezel ring', params: { stoneCount: 1, stoneSizeMm: 7 } }],
  })
  expect(r.status, JSON.stringify(r.body)).toBe(201)
  return r.body.id
}
const money = async (orderId: number) => (await sales.get(`/api/orders/${orderId}/money`)).body

describe('an order’s deposit', () => {
  it('when the default deposit goes from 30 % to 40 % after an order of £1,270.00 is taken, then that order still asks £381.00 and a new one asks 40 %', async () => {
    await defaultDeposit(30)
    const before = await takeOrder(127_000)
    // 30 % of £1,270.00 = £381.00.
    expect(await money(before)).toMatchObject({ priceMinor: 127_000, depositMinor: 38_100 })
    await defaultDeposit(40)
    expect(await money(before)).toMatchObject({ priceMinor: 127_000, depositMinor: 38_100 })
    // Taken after the change: 40 % of £665.00 = £266.00.
    const after = await takeOrder(66_500)
    expect(await money(after)).toMatchObject({ priceMinor: 66_500, depositMinor: 26_600 })
  })

  it('when an order of £500.00 with nothing paid is cancelled, then its money asks for nothing: £0.00 owed and no deposit owed', async () => {
    await defaultDeposit(30)
    const id = await takeOrder(50_000)
    // Before: the whole £500.00 owed, its 30 % deposit (£150.00) not paid.
    expect(await money(id)).toMatchObject({ owedMinor: 50_000, depositMinor: 15_000, depositPaid: false })
    const { version } = (await sales.get(`/api/orders/${id}`)).body
    const r = await sales.patch(`/api/orders/${id}`, { status: 'cancelled', version })
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    expect(await money(id)).toMatchObject({ owedMinor: 0, paidMinor: 0, cancelled: true })
  })
})
