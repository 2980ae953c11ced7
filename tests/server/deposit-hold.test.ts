// "No metal before deposit": with the setting on, a job bag whose order has not paid its deposit stays out of the plan, the board
// and forecast say why, the bench cannot take its forging step; the deposit paid through the provider's webhook releases it.
import { createServer, type Server } from 'node:http'
import type { AddressInfo } from 'node:net'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { startPayFake, TEST_CARDS, type PayFake } from '../../server/dev/pay-fake'
import { dayjs } from '../../server/lib/time'
import { loadPlanningData } from '../../server/planning/problem'
import { waitForRun } from '../../server/planning/runs'
import { WAITING_FOR_DEPOSIT } from '../../shared/domain/deposit-hold'
import { and, eq } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { createTestApp, signedIn, Agent, type TestApp } from '../setup/app'
import { firstCustomerId, firstWorkshopId, routingId as routingOf } from '../setup/fixtures'
import { benchId, makeReady, rid } from './bench-fixtures'

let t: TestApp, fake: PayFake, http: Server
let sales: Agent, owner: Agent, manager: Agent, priya: Agent
let customerId: number, routingId: number, forge: number, workshopId: number
const from = dayjs().tz('Europe/London').startOf('isoWeek').format('YYYY-MM-DD')
const to = dayjs(from).add(27, 'day').format('YYYY-MM-DD')

beforeAll(async () => {
  fake = await startPayFake()
  t = await createTestApp({ PAY_FAKE_URL: fake.url })
  http = createServer(t.app)
  await new Promise<void>((r) => http.listen(0, '127.0.0.1', () => r()))
  fake.webhookUrl = `http://127.0.0.1:${(http.address() as AddressInfo).port}/api/payments/webhook`
  ;[sales, owner, manager] = await Promise.all([signedIn(t.app, 'sales'), signedIn(t.app, 'owner'), signedIn(t.app, 'manager')])
  // Priya forges (level 3 in the demo workshop) at the forge.
  priya = new Agent(t.app)
  expect((await priya.signIn('priya@wrenfield.test')).status).toBe(200)
  customerId = await firstCustomerId(t.db)
  // The bezel ring's routing starts with "Forge band" (forging).
  routingId = await routingOf(t.db, 'bezel-ring')
  forge = await benchId(t, 'Forge & soldering station')
  workshopId = await firstWorkshopId(t.db)
}, 60_000)
afterAll(async () => {
  await new Promise((r) => http?.close(r))
  await fake?.close()
  await t?.close()
})

async function setting(on: boolean) {
  const w = (await owner.get('/api/workshop')).body
  const r = await owner.put('/api/workshop', {
    name: w.name,
    timeZone: w.timeZone,
    weekPattern: w.weekPattern,
    planningLoad: w.planningLoad,
    noMetalBeforeDeposit: on,
    version: w.version,
  })
  expect(r.status, JSON.stringify(r.body)).toBe(200)
  expect(r.body.noMetalBeforeDeposit).toBe(on)
}

/** A quote for a bezel ring accepted by hand (no deposit paid): 800.00 GBP, deposit 30 % = 240.00 (24000 pence). */
async function acceptedUnpaid() {
  const q = await sales.post('/api/quotes', {
    customerId,
    title: 'Bezel ring',
    priceMinor: 80000,
    currency: 'GBP',
    details: { routingId, piece: 'Bezel ring' },
  })
  expect(q.status, JSON.stringify(q.body)).toBe(201)
  const sent = await sales.post(`/api/quotes/${q.body.id}/send`, { version: q.body.version })
  expect(sent.status, JSON.stringify(sent.body)).toBe(200)
  const a = await sales.post(`/api/quotes/${q.body.id}/accept`, { version: sent.body.version })
  expect(a.status, JSON.stringify(a.body)).toBe(200)
  const orderId = a.body.orderId as number
  const bag = (await t.db.select({ id: s.jobBags.id }).from(s.jobBags).where(eq(s.jobBags.orderId, orderId)))[0]!
  const band = (
    await t.db
      .select({ id: s.operations.id })
      .from(s.operations)
      .where(and(eq(s.operations.jobBagId, bag.id), eq(s.operations.key, 'band')))
  )[0]!
  await makeReady(t, band.id)
  expect((await sales.get(`/api/orders/${orderId}/money`)).body).toMatchObject({ depositMinor: 24000, paidMinor: 0, depositPaid: false })
  return { quote: a.body, orderId, bagId: bag.id, bandId: band.id, link: sent.body.links[0] as { url: string } }
}

const inProblem = async (bagId: number) => (await loadPlanningData(t.db, workshopId, new Date())).problem.jobs.some((j) => j.id === String(bagId))
const boardJob = async (bagId: number) =>
  ((await manager.get(`/api/board?from=${from}&to=${to}`)).body.jobs as { jobBagId: number; state: string; reason: string | null }[]).find(
    (j) => j.jobBagId === bagId,
  )
const nextIds = async () => {
  const r = await priya.get(`/api/bench/next?benchId=${forge}`)
  expect(r.status, JSON.stringify(r.body)).toBe(200)
  return (r.body.items as { id: number }[]).map((x) => x.id)
}
async function draftAssignments() {
  const r = await manager.post('/api/plans/runs', { timeLimitSeconds: 1 })
  expect(r.status, JSON.stringify(r.body)).toBe(202)
  const done = await waitForRun(t.db, r.body.id)
  expect(done?.status, JSON.stringify(done)).toBe('done')
  const [p] = await t.db.select({ assignments: s.planVersions.assignments }).from(s.planVersions).where(eq(s.planVersions.id, done!.planId!))
  return p!.assignments as Record<string, { start: string }>
}

describe('no metal before the deposit', () => {
  it('when the setting is off, then an order without its deposit is planned and its forging step is offered at the forge', async () => {
    await setting(false)
    const o = await acceptedUnpaid()
    expect(await inProblem(o.bagId)).toBe(true)
    expect((await boardJob(o.bagId))?.reason).not.toBe(WAITING_FOR_DEPOSIT)
    expect(await nextIds()).toContain(o.bandId)
  })

  it('when the setting is on, then the bag is left out of the plan, the board and forecast say it waits for the deposit, and the forge cannot take the step', async () => {
    await setting(true)
    const o = await acceptedUnpaid()
    expect(await inProblem(o.bagId)).toBe(false)
    expect(await boardJob(o.bagId)).toMatchObject({ state: 'unplanned', reason: 'waiting for the deposit', expectedCompletion: null })
    const f = await sales.get(`/api/orders/${o.orderId}/forecast`)
    expect(f.status).toBe(200)
    expect(f.body.jobBags[0]).toMatchObject({ state: 'unplanned', expectedCompletion: null })
    expect(f.body.jobBags[0].why).toContain('waiting for the deposit')
    // A re-plan gives none of the bag's steps a time.
    const ops = await t.db.select({ id: s.operations.id }).from(s.operations).where(eq(s.operations.jobBagId, o.bagId))
    const held = await draftAssignments()
    expect(ops.filter((x) => held[String(x.id)])).toEqual([])
    // The bench neither sees nor takes the forging step, and is told why.
    expect(await nextIds()).not.toContain(o.bandId)
    const refused = await priya.post(`/api/bench/operations/${o.bandId}/claim`, { requestId: rid(), benchId: forge })
    expect(refused.status, JSON.stringify(refused.body)).toBe(422)
    expect(refused.body.error).toContain('waiting for the deposit')
    expect(refused.body.details).toMatchObject({ reason: 'waiting for the deposit' })

    // The customer pays the 240.00 deposit on the provider's page; the signed webhook books it.
    const paid = await fake.pay(o.link.url.split('/pay/')[1]!, TEST_CARDS.paid)
    expect(paid.delivery?.status, paid.delivery?.body).toBe(200)
    expect((await sales.get(`/api/orders/${o.orderId}/money`)).body).toMatchObject({ paidMinor: 24000, depositPaid: true })
    expect(await inProblem(o.bagId)).toBe(true)
    expect((await boardJob(o.bagId))?.reason).not.toBe(WAITING_FOR_DEPOSIT)
    const released = await draftAssignments()
    expect(released[String(o.bandId)]).toBeDefined()
    expect(await nextIds()).toContain(o.bandId)
    const claimed = await priya.post(`/api/bench/operations/${o.bandId}/claim`, { requestId: rid(), benchId: forge })
    expect(claimed.status, JSON.stringify(claimed.body)).toBe(200)
  })

  it('when the forging step was taken before the setting came on, then the bag stays planned (the metal is already committed)', async () => {
    await setting(false)
    const o = await acceptedUnpaid()
    expect((await priya.post(`/api/bench/operations/${o.bandId}/claim`, { requestId: rid(), benchId: forge })).status).toBe(200)
    await setting(true)
    expect(await inProblem(o.bagId)).toBe(true)
    expect((await boardJob(o.bagId))?.reason).not.toBe(WAITING_FOR_DEPOSIT)
  })
})
