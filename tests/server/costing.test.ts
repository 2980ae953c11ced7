// Costing API against real PostgreSQL: the estimate for a piece not yet ordered, the same figure on the order taken from it, and the
// order's actual cost from the metal ledger, stone counts, invoiced outside work and time records (hand-worked in the comments).
import { asc, eq, sql } from 'drizzle-orm'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import * as s from '../../server/db/schema/index'
import { createTestApp, signedIn, type Agent, type TestApp } from '../setup/app'
import { addMetalMovement, addStoneLine, alloyIdByCode, finishedStep, firstCustomerId, jobBagOfOrder, stepIdsByKey } from '../setup/fixtures'
import { expectFieldError } from './helpers'

let t: TestApp
let owner: Agent
let sales: Agent
let routingId: number
let alloyId: number
let customerId: number
const hourlyRate = (minor: number) => t.db.update(s.people).set({ hourlyRateMinor: minor })

beforeAll(async () => {
  t = await createTestApp()
  owner = await signedIn(t.app, 'owner')
  sales = await signedIn(t.app, 'sales')
  const manager = await signedIn(t.app, 'manager')
  const kinds = Object.fromEntries((await owner.get('/api/operation-kinds')).body.map((k: { code: string; id: number }) => [k.code, k.id]))
  // Everyone at 32.00 an hour (3,200 p), so the average rate (used before anyone is planned) is 32.00.
  await hourlyRate(3200)
  const routing = await manager.post('/api/routings', {
    code: 'costing-fixture',
    name: 'Fixture: fabricate and hallmark',
    description: 'Hand-worked costing fixture.',
    steps: [
      { key: 'make', kindId: kinds.sawing, name: 'Make', baseMinutes: 210 },
      { key: 'hallmark', kindId: kinds.hallmarking, name: 'Hallmark', baseMinutes: 0, leadDays: 3, after: ['make'] },
    ],
  })
  expect(routing.status).toBe(201)
  routingId = routing.body.id
  expect((await owner.put(`/api/insights/routings/${routingId}/outside-cost`, { stepKey: 'hallmark', outsideCostMinor: 4500 })).status).toBe(200)
  alloyId = await alloyIdByCode(t.db, 'au750y')
  customerId = await firstCustomerId(t.db)
  // Today's 18 ct price 6,000 p/g; 25 days ago it was 5,234 p/g (the seeded change 12 days ago and today's come later).
  await t.db.insert(s.alloyPrices).values([
    { alloyId, pricePerGramMinor: 6000, effectiveOn: sql`current_date` },
    { alloyId, pricePerGramMinor: 5234, effectiveOn: sql`current_date - 25` },
  ])
})
afterAll(async () => {
  await t?.close()
})

const piece = { routingId: 0, piece: 'Fixture ring', params: { metal: 'gold-18ct', metalWeightG: 6.2 } }

describe('estimated cost', () => {
  it('when sales price a piece not yet ordered, then metal, stones, outside work and labour are the hand-worked figures', async () => {
    const r = await sales.post('/api/costing/estimate', {
      priceQuotedMinor: 125_000,
      pieces: [
        {
          ...piece,
          routingId,
          stones: [
            { count: 3, costEachMinor: 12_000 },
            { count: 1, customerOwned: true },
          ],
        },
      ],
    })
    expect(r.status).toBe(200)
    // Metal 6,200 mg × 6,000 p/g (today) = 37,200 p; stones 3 × 12,000 = 36,000 p (the customer's stone free); hallmark 45.00 × 1 = 4,500 p;
    // labour 210 min × 3,200 p/h ÷ 60 = 11,200 p. Total 88,900 p. Margin on 1,250.00: 36,100 p = 28.88 % → 28.9 %.
    expect(r.body.estimate.cost).toEqual({ metalMinor: 37_200, stonesMinor: 36_000, outsideMinor: 4_500, labourMinor: 11_200, totalMinor: 88_900 })
    expect(r.body.estimate).toMatchObject({ marginMinor: 36_100, marginPct: 28.9, missing: [], caveat: 'metal, stones, outside work and labour counted' })
    // At 40 %: 88,900 ÷ 0.6 = 148,166.7 p, up to the whole pound: 1,482.00.
    expect(r.body).toMatchObject({ marginTargetPct: 40, suggestedPriceMinor: 148_200, priceMinor: 125_000 })
    expect(r.body.pieces[0]).toMatchObject({ pricePerGramMinor: 6000, alloyName: '18 ct yellow gold', labourMinutes: 210 })
  })

  it('when two pieces on different routings share a step key, then each piece takes its own routing’s outside cost', async () => {
    const manager = await signedIn(t.app, 'manager')
    const kinds = Object.fromEntries((await owner.get('/api/operation-kinds')).body.map((k: { code: string; id: number }) => [k.code, k.id]))
    const other = await manager.post('/api/routings', {
      code: 'costing-fixture-platinum',
      name: 'Fixture: platinum band, hallmarked',
      description: 'A second routing with a hallmark step of the same key.',
      steps: [
        { key: 'make', kindId: kinds.sawing, name: 'Make', baseMinutes: 60 },
        { key: 'hallmark', kindId: kinds.hallmarking, name: 'Hallmark', baseMinutes: 0, leadDays: 3, after: ['make'] },
      ],
    })
    expect(other.status).toBe(201)
    expect((await owner.put(`/api/insights/routings/${other.body.id}/outside-cost`, { stepKey: 'hallmark', outsideCostMinor: 7000 })).status).toBe(200)
    const r = await sales.post('/api/costing/estimate', {
      pieces: [
        { ...piece, routingId },
        { ...piece, piece: 'Platinum band', routingId: other.body.id, params: { ...piece.params, quantity: 2 } },
      ],
    })
    expect(r.status).toBe(200)
    // The first routing's hallmark costs 45.00 a piece (set above); the second's 70.00 a piece × 2 pieces = 140.00. Both steps are
    // keyed 'hallmark', so a look-up by key alone would give the band 2 × 45.00 = 90.00.
    expect(r.body.pieces.map((x: { cost: { outsideMinor: number } }) => x.cost.outsideMinor)).toEqual([4_500, 14_000])
    expect(r.body.estimate.cost.outsideMinor).toBe(18_500)
  })
  it('when the piece has no weight or stone costs, then the estimate says what is missing', async () => {
    const r = await sales.post('/api/costing/estimate', { pieces: [{ routingId, piece: 'Fixture ring', params: { metal: 'gold-18ct', stoneCount: 4 } }] })
    expect(r.body.estimate.cost).toMatchObject({ metalMinor: 0, stonesMinor: 0 })
    expect(r.body.estimate.caveat).toBe('no metal weight estimated; stone costs not entered')
    // Count × typical cost: 4 × 2,500 p = 10,000 p.
    const typed = await sales.post('/api/costing/estimate', {
      pieces: [{ routingId, piece: 'Fixture ring', params: { metal: 'gold-18ct', stoneCount: 4, stoneCostEachMinor: 2500, metalWeightG: 6.2 } }],
    })
    expect(typed.body.estimate.cost.stonesMinor).toBe(10_000)
  })

  it('when the input is wrong, then the field is named', async () => {
    expectFieldError(await sales.post('/api/costing/estimate', { pieces: [] }), 'pieces')
    expectFieldError(
      await sales.post('/api/costing/estimate', { pieces: [{ ...piece, routingId, params: { metalWeightG: -1 } }] }),
      'pieces.0.params.metalWeightG',
    )
    expectFieldError(await sales.post('/api/costing/estimate', { pieces: [{ ...piece, routingId: 999999 }] }), 'pieces.0.routingId')
    // A price in minor units is a whole number: 1250.5 pence is not an amount.
    expectFieldError(
      await sales.post('/api/costing/estimate', { priceQuotedMinor: 1250.5, pieces: [{ ...piece, routingId }] }),
      'priceQuotedMinor',
      /whole minor units/,
    )
  })
})

describe('an order costed', () => {
  it('when an order is taken from the same piece, then its cost at estimate is the figure sales saw, and at actual it follows the ledger', async () => {
    const o = await sales.post('/api/orders', {
      customerId,
      title: 'Fixture ring',
      dueDate: '2031-01-31',
      priceQuotedMinor: 125_000,
      pieces: [{ ...piece, routingId }],
    })
    expect(o.status).toBe(201)
    const bag = await jobBagOfOrder(t.db, o.body.id)
    const ops = await stepIdsByKey(t.db, { jobBagId: bag })
    // The stone list: 3 stones at 120.00 each, counted out 4, 3 set and 1 broken; and one of the customer's own, set.
    await addStoneLine(t.db, { jobBagId: bag, role: 'side', sizeMm: 2, count: 3, costEachMinor: 12000 }, [
      { kind: 'issued', count: 4 },
      { kind: 'set', count: 3 },
      { kind: 'broken', count: 1 },
    ])
    await addStoneLine(t.db, { jobBagId: bag, role: 'centre', sizeMm: 6, count: 1, customerOwned: true, customerId }, [
      { kind: 'issued', count: 1 },
      { kind: 'set', count: 1 },
    ])
    const before = await sales.get(`/api/orders/${o.body.id}/costing`)
    expect(before.status).toBe(200)
    // Same as the estimate above: 37,200 + 36,000 + 4,500 + 11,200 = 88,900 p.
    expect(before.body.estimate.cost.totalMinor).toBe(88_900)
    // Nothing weighed yet: the metal counts as estimated (6.2 g × 6,000 p/g = 37,200 p), never as free, and the words say so, as in
    // the owner's job costing. With the stones counted so far (4 × 12,000 = 48,000 p): 85,200 p.
    expect(before.body.actual.cost).toEqual({ metalMinor: 37_200, stonesMinor: 48_000, outsideMinor: 0, labourMinor: 0, totalMinor: 85_200 })
    expect(before.body.metalAsEstimatedMinor).toBe(37_200)
    expect(before.body.actual.caveat).toBe('no metal weighed: metal counted as estimated')

    // The work: 6.35 g of 18 ct issued 20 days ago (price then 5,234 p/g), the piece back at 6.20 g: 0.15 g lost.
    const personId = (await t.db.select({ id: s.people.id }).from(s.people).orderBy(asc(s.people.id)).limit(1))[0]!.id
    const make = { alloyId, jobBagId: bag, operationId: ops.make, personId }
    await addMetalMovement(t.db, {
      ...make,
      kind: 'issued',
      weightMg: 6350,
      source: 'stock',
      recordedAt: sql`(current_date - 20)::timestamp + interval '10 hours'`,
    })
    await addMetalMovement(t.db, {
      ...make,
      kind: 'returned',
      weightMg: 6200,
      form: 'piece',
      recordedAt: sql`(current_date - 20)::timestamp + interval '14 hours'`,
    })
    // 3.5 h at the bench (32.00/h) and the hallmark invoiced at 45.00.
    await finishedStep(t.db, ops.make!, { finishedAt: sql`now()`, records: [{ personId, start: sql`now() - interval '210 minutes'`, end: sql`now()` }] })
    await finishedStep(t.db, ops.hallmark!, { finishedAt: sql`now()` })
    expect((await owner.put(`/api/insights/operations/${ops.hallmark}/outside-cost`, { outsideCostMinor: 4500 })).status).toBe(200)

    const after = await owner.get(`/api/orders/${o.body.id}/costing`)
    // Metal 6,200 × 5,234 / 1,000 = 32,450.8 → 32,451 p + loss 150 × 5,234 / 1,000 = 785.1 → 785 p = 33,236 p; stones 4 × 12,000 = 48,000 p;
    // outside 4,500 p; labour 210 × 3,200 / 60 = 11,200 p. Total 96,936 p; margin 125,000 − 96,936 = 28,064 p = 22.45 % → 22.5 %.
    expect(after.body.actual.cost).toEqual({ metalMinor: 33_236, stonesMinor: 48_000, outsideMinor: 4_500, labourMinor: 11_200, totalMinor: 96_936 })
    expect(after.body.actual).toMatchObject({ marginMinor: 28_064, marginPct: 22.5, caveat: 'metal, stones, outside work and labour counted' })
    expect(after.body.metalAsEstimatedMinor).toBe(0)
    // The owner's table shows the same figures, in minor units of the workshop's currency.
    const table = await owner.get(`/api/insights/costing?routingId=${routingId}`)
    expect(table.body.currency).toBe('GBP')
    expect(table.body.rows).toEqual([
      expect.objectContaining({
        orderId: o.body.id,
        costAtEstimateMinor: 88_900,
        costAtActualMinor: 96_936,
        marginAtActualMinor: 28_064,
        marginPctAtActual: 22.5,
        metalAtActualMinor: 33_236,
      }),
    ])
  })

  it('when one of two pieces was never weighed, then the order counts its metal as estimated with the same figure and words as the owner’s job costing', async () => {
    const o = await sales.post('/api/orders', {
      customerId,
      title: 'Two fixture rings',
      dueDate: '2031-01-31',
      priceQuotedMinor: 200_000,
      pieces: [
        { ...piece, routingId, piece: 'Fixture ring A' },
        { routingId, piece: 'Fixture ring B', params: { metal: 'gold-18ct', metalWeightG: 4 } },
      ],
    })
    expect(o.status).toBe(201)
    const bags = (await t.db.select({ id: s.jobBags.id }).from(s.jobBags).where(eq(s.jobBags.orderId, o.body.id)).orderBy(asc(s.jobBags.id))).map((b) => b.id)
    expect(bags).toHaveLength(2)
    // Ring A weighed: 6.35 g of 18 ct issued 20 days ago (5,234 p/g then), the piece back at 6.20 g. Ring B: nothing ever weighed.
    await addMetalMovement(t.db, {
      alloyId,
      jobBagId: bags[0]!,
      kind: 'issued',
      weightMg: 6350,
      source: 'stock',
      recordedAt: sql`(current_date - 20)::timestamp + interval '10 hours'`,
    })
    await addMetalMovement(t.db, {
      alloyId,
      jobBagId: bags[0]!,
      kind: 'returned',
      weightMg: 6200,
      form: 'piece',
      recordedAt: sql`(current_date - 20)::timestamp + interval '14 hours'`,
    })
    // Every step finished (no time recorded, so no labour at actual); each hallmark at its expected 45.00.
    for (const jobBagId of bags) {
      const ops = await stepIdsByKey(t.db, { jobBagId })
      await finishedStep(t.db, ops.make!, { finishedAt: sql`now()` })
      await finishedStep(t.db, ops.hallmark!, { finishedAt: sql`now()` })
    }

    const r = await owner.get(`/api/orders/${o.body.id}/costing`)
    expect(r.status).toBe(200)
    // Hand-worked: ring A's metal 6,200 × 5,234 / 1,000 = 32,450.8 → 32,451 p + loss 150 × 5,234 / 1,000 = 785.1 → 785 p = 33,236 p;
    // ring B never weighed counts its estimate at today's price, 4.0 g × 6,000 p/g = 24,000 p (not 0). Metal 33,236 + 24,000 = 57,236 p;
    // outside 2 × 4,500 = 9,000 p; no stones, no labour recorded. Total 66,236 p; margin 200,000 − 66,236 = 133,764 p
    // = 66.882 % → 66.9 %.
    expect(r.body.actual.cost).toEqual({ metalMinor: 57_236, stonesMinor: 0, outsideMinor: 9_000, labourMinor: 0, totalMinor: 66_236 })
    expect(r.body.metalAsEstimatedMinor).toBe(24_000)
    expect(r.body.actual).toMatchObject({
      marginMinor: 133_764,
      marginPct: 66.9,
      missing: ['some-metal-weighed'],
      caveat: 'metal weighed on some pieces only: the others counted as estimated',
    })
    // The owner's job costing: the same cost, margin and words for this order (its weighed metal and the part as estimated apart).
    const table = await owner.get(`/api/insights/costing?routingId=${routingId}`)
    expect(table.body.rows.find((x: { orderId: number }) => x.orderId === o.body.id)).toMatchObject({
      metalAtActualMinor: 33_236,
      metalAsEstimatedMinor: 24_000,
      costAtActualMinor: 66_236,
      marginAtActualMinor: 133_764,
      marginPctAtActual: 66.9,
      caveatAtActual: 'metal weighed on some pieces only: the others counted as estimated',
    })
  })

  it('when the metal was the customer’s own, then it costs nothing and its loss is shown', async () => {
    const o = await sales.post('/api/orders', {
      customerId,
      title: 'Remade from old gold',
      dueDate: '2031-01-31',
      priceQuotedMinor: 40_000,
      pieces: [{ ...piece, routingId }],
    })
    const jobBagId = await jobBagOfOrder(t.db, o.body.id)
    await addMetalMovement(t.db, { alloyId, jobBagId, kind: 'issued', weightMg: 8000, source: 'customer', recordedAt: sql`now() - interval '1 day'` })
    await addMetalMovement(t.db, { alloyId, jobBagId, kind: 'returned', weightMg: 6200, form: 'piece', recordedAt: sql`now()` })
    await addMetalMovement(t.db, { alloyId, jobBagId, kind: 'returned', weightMg: 1650, form: 'scrap', recordedAt: sql`now()` })
    const r = await owner.get(`/api/orders/${o.body.id}/costing`)
    // 8.00 g issued − 6.20 piece − 1.65 scrap = 0.15 g lost, all of it the customer's: metal 0 p.
    expect(r.body.actual.cost.metalMinor).toBe(0)
    expect(r.body.customerMetalLossG).toBe(0.15)
  })

  it('when a new ring is made from the customer’s own old gold, then neither the estimate nor the actual charges their metal, and the owner’s table agrees', async () => {
    const o = await sales.post('/api/orders', {
      customerId,
      title: 'New ring from the customer’s old gold',
      dueDate: '2031-01-31',
      priceQuotedMinor: 60_000,
      pieces: [{ ...piece, routingId }],
    })
    expect(o.status).toBe(201)
    const jobBagId = await jobBagOfOrder(t.db, o.body.id)
    // Before anything is weighed nobody knows whose metal it will be: 6.2 g × 6,000 p/g = 37,200 p at estimate, and at actual as estimated.
    const before = await owner.get(`/api/orders/${o.body.id}/costing`)
    expect([before.body.estimate.cost.metalMinor, before.body.actual.cost.metalMinor]).toEqual([37_200, 37_200])
    // The customer's 8.000 g of old gold weighed out as theirs; the ring back at 6.200 g with 1.650 g of scrap: 0.150 g lost.
    await addMetalMovement(t.db, { alloyId, jobBagId, kind: 'issued', weightMg: 8000, source: 'customer', recordedAt: sql`now()` })
    await addMetalMovement(t.db, { alloyId, jobBagId, kind: 'returned', weightMg: 6200, form: 'piece', recordedAt: sql`now()` })
    await addMetalMovement(t.db, { alloyId, jobBagId, kind: 'returned', weightMg: 1650, form: 'scrap', recordedAt: sql`now()` })
    const r = await owner.get(`/api/orders/${o.body.id}/costing`)
    // The 6.2 g estimated is all covered by the 8.000 g they brought in: 0 p at estimate; at actual 6.200 g in the ring and 0.150 g
    // lost, all of it theirs: 0 p. Labour 210 min × 3,200 p/h ÷ 60 = 11,200 p and the hallmark's 4,500 p at estimate.
    expect(r.body.estimate.cost).toEqual({ metalMinor: 0, stonesMinor: 0, outsideMinor: 4_500, labourMinor: 11_200, totalMinor: 15_700 })
    expect(r.body.actual.cost.metalMinor).toBe(0)
    expect(r.body.pieces[0]).toMatchObject({
      customersPiece: false,
      metalNote: 'made from the customer’s own metal (8 g brought in): 6.2 g of the estimate not charged',
    })
    expect(r.body.customersMetalCaveat).toBe('the loss of the customer’s own metal is not in the estimate: it shows at actual once their piece is weighed')
    expect(r.body.customerMetalLossG).toBe(0.15)
    // Every step finished: the owner's job costing has the same metal on both sides.
    const ops = await stepIdsByKey(t.db, { jobBagId })
    await finishedStep(t.db, ops.make!, { finishedAt: sql`now()` })
    await finishedStep(t.db, ops.hallmark!, { finishedAt: sql`now()` })
    const table = await owner.get(`/api/insights/costing?routingId=${routingId}`)
    expect(table.body.rows.find((x: { orderId: number }) => x.orderId === o.body.id)).toMatchObject({ metalAtEstimateMinor: 0, metalAtActualMinor: 0 })
  })

  it('when the customer’s 3.000 g of gold and 3.000 g of stock make a ring weighed out again as theirs for polishing, then both sides charge only what stock gave', async () => {
    const o = await sales.post('/api/orders', {
      customerId,
      title: 'Ring of their gold and ours',
      dueDate: '2031-01-31',
      priceQuotedMinor: 60_000,
      pieces: [{ routingId, piece: 'Fixture ring', params: { metal: 'gold-18ct', metalWeightG: 5.8 } }],
    })
    expect(o.status).toBe(201)
    const jobBagId = await jobBagOfOrder(t.db, o.body.id)
    const at = (seconds: number) => sql`now() + make_interval(secs => ${seconds})`
    // Making: 3.000 g of the customer's and 3.000 g of stock out; the ring back at 5.800 g and 0.120 g of scrap (0.080 g lost).
    await addMetalMovement(t.db, { alloyId, jobBagId, kind: 'issued', weightMg: 3000, source: 'customer', recordedAt: at(0) })
    await addMetalMovement(t.db, { alloyId, jobBagId, kind: 'issued', weightMg: 3000, source: 'stock', recordedAt: at(1) })
    await addMetalMovement(t.db, { alloyId, jobBagId, kind: 'returned', weightMg: 5800, form: 'piece', recordedAt: at(2) })
    await addMetalMovement(t.db, { alloyId, jobBagId, kind: 'returned', weightMg: 120, form: 'scrap', recordedAt: at(3) })
    // Polishing: the ring out again, marked as the customer's as the bench is offered it, back at 5.760 g and 0.010 g of lemel.
    await addMetalMovement(t.db, { alloyId, jobBagId, kind: 'issued', weightMg: 5800, source: 'customer', recordedAt: at(4) })
    await addMetalMovement(t.db, { alloyId, jobBagId, kind: 'returned', weightMg: 5760, form: 'piece', recordedAt: at(5) })
    await addMetalMovement(t.db, { alloyId, jobBagId, kind: 'returned', weightMg: 10, form: 'lemel', recordedAt: at(6) })
    const r = await owner.get(`/api/orders/${o.body.id}/costing`)
    // The customer brought in 3.000 g (the ring out again is the same metal, not 5.800 g more of theirs). At estimate: 5.800 − 3.000
    // = 2.800 g × 6,000 p/g = 16,800 p. At actual: issued 11.800 g, returned 11.690 g, 0.110 g lost; the ring 5.760 g. Their 3.000 g
    // covers the ring first: 2.760 g of it and the 0.110 g lost are stock's, 2,760 × 6,000 / 1,000 = 16,560 p + 110 × 6 = 660 p
    // = 17,220 p.
    expect(r.body.estimate.cost.metalMinor).toBe(16_800)
    expect(r.body.actual.cost.metalMinor).toBe(17_220)
    expect(r.body.pieces[0].metalNote).toBe('made from the customer’s own metal (3 g brought in): 3 g of the estimate not charged')
    expect(r.body.customerMetalLossG).toBe(0)
  })

  it('when nothing of an order has been worked yet, then its costing says no work is recorded, and once a step is finished it says there is', async () => {
    const o = await sales.post('/api/orders', {
      customerId,
      title: 'Untouched ring',
      dueDate: '2031-01-31',
      priceQuotedMinor: 90_000,
      pieces: [{ ...piece, routingId }],
    })
    expect(o.status).toBe(201)
    const fresh = await owner.get(`/api/orders/${o.body.id}/costing`)
    expect(fresh.status).toBe(200)
    // No step finished, no metal weighed, no stones counted: the actual side holds only the estimate's metal standing in.
    expect(fresh.body.workRecorded).toBe(false)
    expect(fresh.body.actual.cost).toMatchObject({ labourMinor: 0, outsideMinor: 0 })
    const ops = await stepIdsByKey(t.db, { jobBagId: await jobBagOfOrder(t.db, o.body.id) })
    await finishedStep(t.db, ops.make!, { finishedAt: sql`now()` })
    expect((await owner.get(`/api/orders/${o.body.id}/costing`)).body.workRecorded).toBe(true)
  })

  it('when the bench asks for an order’s costing, then it is refused', async () => {
    const bench = await signedIn(t.app, 'bench')
    const id = (await t.db.select({ id: s.orders.id }).from(s.orders).orderBy(asc(s.orders.id)).limit(1))[0]!.id
    expect((await bench.get(`/api/orders/${id}/costing`)).status).toBe(403)
  })
})

describe('a repair on the customer’s own piece', () => {
  let repairId: number
  let newPieceId: number
  beforeAll(async () => {
    const manager = await signedIn(t.app, 'manager')
    const kinds = Object.fromEntries((await owner.get('/api/operation-kinds')).body.map((k: { code: string; id: number }) => [k.code, k.id]))
    // One bench step of 30 min on both routings; only the routing's kind differs.
    const steps = [{ key: 'retip', kindId: kinds.soldering, name: 'Retip a claw', baseMinutes: 30 }]
    const repair = await manager.post('/api/routings', { code: 'costing-retip', name: 'Fixture: retip', description: 'Repair fixture.', kind: 'repair', steps })
    const fresh = await manager.post('/api/routings', {
      code: 'costing-new',
      name: 'Fixture: new piece',
      description: 'New piece fixture.',
      kind: 'piece',
      steps,
    })
    expect([repair.status, fresh.status]).toEqual([201, 201])
    repairId = repair.body.id
    newPieceId = fresh.body.id
  })
  const added = { piece: 'Customer’s ring, one claw retipped', params: { metal: 'gold-18ct', metalWeightG: 0.4 } }
  const NOTE = 'customer’s own piece: not charged; metal added 0.4 g'
  const LOSS_CAVEAT = 'the loss of the customer’s own metal is not in the estimate: it shows at actual once their piece is weighed'

  it('when 0.4 g of 18 ct is entered on a repair, then only that metal added is charged and the piece and the estimate say so', async () => {
    const r = await sales.post('/api/costing/estimate', { pieces: [{ ...added, routingId: repairId }] })
    expect(r.status).toBe(200)
    // Metal added 400 mg × 6,000 p/g (today's 18 ct price, set above) ÷ 1,000 = 2,400 p; labour 30 min × 3,200 p/h ÷ 60 = 1,600 p. Total 4,000 p.
    expect(r.body.estimate.cost).toEqual({ metalMinor: 2_400, stonesMinor: 0, outsideMinor: 0, labourMinor: 1_600, totalMinor: 4_000 })
    expect(r.body.pieces[0]).toMatchObject({ customersPiece: true, metalNote: NOTE, metalWeightG: 0.4, pricePerGramMinor: 6000 })
    // The loss of their metal is no cost the margin leaves out: the caveat beside it is unchanged, and the loss is said apart.
    expect(r.body.estimate.caveat).toBe('metal, stones, outside work and labour counted')
    expect(r.body.customersMetalCaveat).toBe(LOSS_CAVEAT)
  })

  it('when the same weight is entered on a new-piece routing, then it is charged as before with no note', async () => {
    const r = await sales.post('/api/costing/estimate', { pieces: [{ ...added, piece: 'New claw setting', routingId: newPieceId }] })
    // 400 mg × 6,000 p/g ÷ 1,000 = 2,400 p, as on the repair: the weight is charged either way, only its meaning differs.
    expect(r.body.estimate.cost.metalMinor).toBe(2_400)
    expect(r.body.pieces[0]).toMatchObject({ customersPiece: false, metalNote: null })
    expect(r.body.customersMetalCaveat).toBeNull()
  })

  it('when a resize is recorded on a new-piece routing, then the piece is the customer’s and the added metal is counted per piece', async () => {
    const resize = { resizeFrom: { scale: 'uk', value: 'L' }, resizeTo: { scale: 'uk', value: 'N' } }
    const r = await sales.post('/api/costing/estimate', {
      pieces: [{ ...added, piece: 'Two rings sized up', routingId: newPieceId, params: { ...added.params, ...resize, quantity: 2 } }],
    })
    // 2 pieces × 400 mg = 800 mg × 6,000 p/g ÷ 1,000 = 4,800 p.
    expect(r.body.estimate.cost.metalMinor).toBe(4_800)
    expect(r.body.pieces[0]).toMatchObject({ customersPiece: true, metalNote: 'customer’s own piece: not charged; metal added 0.4 g a piece × 2' })
  })

  it('when an order is taken for the repair, then its costing counts the same metal added with the same note as the dialog did', async () => {
    const o = await sales.post('/api/orders', {
      customerId,
      title: 'Claw retip',
      dueDate: '2031-01-31',
      priceQuotedMinor: 9_000,
      pieces: [{ ...added, routingId: repairId }],
    })
    expect(o.status).toBe(201)
    const r = await owner.get(`/api/orders/${o.body.id}/costing`)
    expect(r.status).toBe(200)
    // As the estimate above: 2,400 p metal added + 1,600 p labour = 4,000 p.
    expect(r.body.estimate.cost).toEqual({ metalMinor: 2_400, stonesMinor: 0, outsideMinor: 0, labourMinor: 1_600, totalMinor: 4_000 })
    expect(r.body.pieces[0]).toMatchObject({ customersPiece: true, metalNote: NOTE })
    expect(r.body.customersMetalCaveat).toBe(LOSS_CAVEAT)
  })
})

describe('a quote’s piece', () => {
  const quote = (details: Record<string, unknown>) =>
    sales.post('/api/quotes', {
      customerId,
      title: 'Fixture pendant',
      priceMinor: 125_000,
      currency: 'GBP',
      details: { routingId, piece: 'Fixture pendant', ...details },
    })

  it('when a quote names 18 ct gold and 5.00 g a piece, then the order made from it carries both and its estimated cost counts the metal', async () => {
    // The metal chosen on the quote; the piece's parameters give only the weight.
    const q = await quote({ metal: 'gold-18ct', params: { metalWeightG: 5 } })
    expect(q.status, JSON.stringify(q.body)).toBe(201)
    expect(q.body.details.params).toMatchObject({ metal: 'gold-18ct', metalWeightG: 5 })
    const a = await sales.post(`/api/quotes/${q.body.id}/accept`, { version: q.body.version })
    expect(a.status, JSON.stringify(a.body)).toBe(200)
    const [bag] = await t.db.select({ params: s.jobBags.params }).from(s.jobBags).where(eq(s.jobBags.orderId, a.body.orderId))
    expect(bag!.params).toMatchObject({ metal: 'gold-18ct', metalWeightG: 5 })
    const c = await sales.get(`/api/orders/${a.body.orderId}/costing`)
    expect(c.status).toBe(200)
    // Metal 5,000 mg × 6,000 p/g (today's 18 ct) ÷ 1,000 = 30,000 p; labour 210 min × 3,200 p/h ÷ 60 = 11,200 p; hallmark 4,500 p;
    // no stones. Total 45,700 p. At 40 %: 45,700 ÷ 0.6 = 76,166.7 p, up to the whole pound: 762.00. On 1,250.00: 79,300 p = 63.44 % → 63.4 %.
    expect(c.body.estimate.cost).toEqual({ metalMinor: 30_000, stonesMinor: 0, outsideMinor: 4_500, labourMinor: 11_200, totalMinor: 45_700 })
    expect(c.body.estimate).toMatchObject({ marginMinor: 79_300, marginPct: 63.4, missing: [] })
    expect(c.body.suggestedPriceMinor).toBe(76_200)
    // The quote dialog's estimate of the same piece gives the same figures.
    const e = await sales.post('/api/costing/estimate', {
      priceQuotedMinor: 125_000,
      pieces: [{ routingId, piece: 'Fixture pendant', params: { metal: 'gold-18ct', metalWeightG: 5 } }],
    })
    expect(e.body.estimate.cost.totalMinor).toBe(45_700)
    expect(e.body).toMatchObject({ suggestedPriceMinor: 76_200, estimate: { marginMinor: 79_300, marginPct: 63.4 } })
  })

  it('when a quote’s stone rows carry what one stone costs, then the order made from it counts those stones at those costs, as the quote’s estimate did, until its piece has a stone list', async () => {
    const q = await quote({
      metal: 'gold-18ct',
      params: { metalWeightG: 5 },
      stones: [
        { description: 'round diamonds of 1.5 mm', count: 18, carats: 0.25, costEachMinor: 4_567 },
        { description: 'oval sapphire, 7 × 5 mm', count: 1, caratEach: 0.9, costEachMinor: 32_000 },
        // A row with no count is words for the customer only: neither estimate counts it.
        { description: 'engraved inside: initials', costEachMinor: 1_000 },
      ],
    })
    expect(q.status, JSON.stringify(q.body)).toBe(201)
    const a = await sales.post(`/api/quotes/${q.body.id}/accept`, { version: q.body.version })
    expect(a.status, JSON.stringify(a.body)).toBe(200)
    // Stones 18 × 4,567 p = 82,206 p and 1 × 32,000 p: 114,206 p. With the metal 30,000 p, hallmark 4,500 p and labour 11,200 p
    // (as above): 159,906 p in all, leaving 125,000 − 159,906 = −34,906 p on the price.
    const c = await sales.get(`/api/orders/${a.body.orderId}/costing`)
    expect(c.status).toBe(200)
    expect(c.body.estimate.cost).toEqual({ metalMinor: 30_000, stonesMinor: 114_206, outsideMinor: 4_500, labourMinor: 11_200, totalMinor: 159_906 })
    expect(c.body.estimate).toMatchObject({ marginMinor: -34_906, missing: [] })
    // Nothing counted yet: the actual side's stones stand in at the same figure.
    expect(c.body.actual.cost.stonesMinor).toBe(114_206)
    // The quote dialog's estimate of the same piece (its stone rows with a count as the piece's stones) gives the same figures.
    const e = await sales.post('/api/costing/estimate', {
      priceQuotedMinor: 125_000,
      pieces: [
        {
          routingId,
          piece: 'Fixture pendant',
          params: { metal: 'gold-18ct', metalWeightG: 5 },
          stones: [
            { count: 18, costEachMinor: 4_567 },
            { count: 1, costEachMinor: 32_000 },
          ],
        },
      ],
    })
    expect(e.body.estimate.cost).toEqual(c.body.estimate.cost)

    // The piece's own stone list, once there is one, is what the estimate counts: 18 × 5,000 p = 90,000 p.
    const bagId = await jobBagOfOrder(t.db, a.body.orderId)
    await addStoneLine(t.db, { jobBagId: bagId, role: 'pave', sizeMm: 1.5, count: 18, costEachMinor: 5_000 })
    expect((await sales.get(`/api/orders/${a.body.orderId}/costing`)).body.estimate.cost.stonesMinor).toBe(90_000)
  })

  it('when a quote’s stone row has a count but no cost, then the order made from it says stone costs are missing, as the quote’s estimate does', async () => {
    const q = await quote({ metal: 'gold-18ct', params: { metalWeightG: 5 }, stones: [{ description: 'round diamonds of 2 mm', count: 4 }] })
    expect(q.status, JSON.stringify(q.body)).toBe(201)
    const a = await sales.post(`/api/quotes/${q.body.id}/accept`, { version: q.body.version })
    expect(a.status, JSON.stringify(a.body)).toBe(200)
    const c = await sales.get(`/api/orders/${a.body.orderId}/costing`)
    expect(c.body.estimate.cost.stonesMinor).toBe(0)
    expect(c.body.estimate.missing).toEqual(['stone-costs'])
    const e = await sales.post('/api/costing/estimate', {
      pieces: [{ routingId, piece: 'Fixture pendant', params: { metal: 'gold-18ct', metalWeightG: 5 }, stones: [{ count: 4 }] }],
    })
    expect(e.body.estimate.missing).toEqual(['stone-costs'])
  })

  it('when the live plan books the order made from a quote onto a dearer setter, then its labour at estimate is still the quote’s: minutes × the average rate', async () => {
    // Six people: five at 32.00 an hour and one at 50.00, so the average rate is (5 × 3,200 + 5,000) ÷ 6 = 3,500 p an hour.
    const ppl = await t.db.select({ id: s.people.id }).from(s.people).where(eq(s.people.active, true)).orderBy(asc(s.people.id))
    expect(ppl.length).toBe(6)
    const dear = ppl[0]!.id
    await t.db.update(s.people).set({ hourlyRateMinor: 5000 }).where(eq(s.people.id, dear))
    const q = await quote({ metal: 'gold-18ct', params: { metalWeightG: 5 } })
    expect(q.status, JSON.stringify(q.body)).toBe(201)
    const a = await sales.post(`/api/quotes/${q.body.id}/accept`, { version: q.body.version })
    expect(a.status, JSON.stringify(a.body)).toBe(200)
    // The plan puts the 210-minute step on the person at 50.00 (as booking the quote into the live plan, or a later plan, may).
    const ops = await stepIdsByKey(t.db, { jobBagId: await jobBagOfOrder(t.db, a.body.orderId) })
    await t.db.update(s.operations).set({ plannedPersonId: dear }).where(eq(s.operations.id, ops.make!))
    // Labour 210 min × 3,500 p ÷ 60 = 12,250 p (not 210 × 5,000 ÷ 60 = 17,500 p): with the metal 30,000 p and the hallmark 4,500 p, 46,750 p.
    const e = await sales.post('/api/costing/estimate', {
      priceQuotedMinor: 125_000,
      pieces: [{ routingId, piece: 'Fixture pendant', params: { metal: 'gold-18ct', metalWeightG: 5 } }],
    })
    expect(e.body.estimate.cost).toEqual({ metalMinor: 30_000, stonesMinor: 0, outsideMinor: 4_500, labourMinor: 12_250, totalMinor: 46_750 })
    const c = await sales.get(`/api/orders/${a.body.orderId}/costing`)
    expect(c.body.estimate.cost).toEqual({ metalMinor: 30_000, stonesMinor: 0, outsideMinor: 4_500, labourMinor: 12_250, totalMinor: 46_750 })
    await hourlyRate(3200)
  })

  it('when a quote’s metal weight is negative, absurd or its alloy unknown, or it names two metals, then 400 naming the field and nothing is kept', async () => {
    const before = (await t.db.select({ id: s.quotes.id }).from(s.quotes)).length
    expectFieldError(await quote({ params: { metal: 'gold-18ct', metalWeightG: -2 } }), 'details.params.metalWeightG', /more than 0 g/)
    expectFieldError(await quote({ params: { metal: 'gold-18ct', metalWeightG: 25_000 } }), 'details.params.metalWeightG', /at most 5000 g/)
    expectFieldError(await quote({ params: { metal: 'gold-24ct', metalWeightG: 5 } }), 'details.params.metal', /listed metals/)
    expectFieldError(await quote({ metal: 'gold-18ct', params: { metal: 'silver-925', metalWeightG: 5 } }), 'details.params.metal', /the metal the quote names/)
    expect((await t.db.select({ id: s.quotes.id }).from(s.quotes)).length).toBe(before)
  })
})

describe('a workshop pricing in yen', () => {
  it('when the workshop currency has no decimals, then rates, outside costs and prices are whole yen and the suggested price is a whole yen', async () => {
    // ISO 4217: JPY has no minor unit, so 1 minor unit = ¥1. Everyone at ¥3,000 an hour, the hallmark at ¥4,501, brass (not priced), no stones.
    await t.db.update(s.workshops).set({ currency: 'JPY' })
    await hourlyRate(3000)
    expect((await owner.put(`/api/insights/routings/${routingId}/outside-cost`, { stepKey: 'hallmark', outsideCostMinor: 4501 })).status).toBe(200)
    const r = await sales.post('/api/costing/estimate', { priceQuotedMinor: 30_000, pieces: [{ routingId, piece: 'Yen ring', params: { metal: 'brass' } }] })
    // Labour ¥10,500 + hallmark ¥4,501 = ¥15,001; at 40 %: 15,001 ÷ 0.6 = 25,001.67 → ¥25,002 (whole yen; rounding to "whole hundreds of minor units" would give ¥25,100).
    expect(r.body).toMatchObject({ currency: 'JPY', priceMinor: 30_000, suggestedPriceMinor: 25_002 })
    expect(r.body.estimate.cost).toMatchObject({ labourMinor: 10_500, outsideMinor: 4_501, totalMinor: 15_001 })
    await t.db.update(s.workshops).set({ currency: 'GBP' })
    await hourlyRate(3200)
    await owner.put(`/api/insights/routings/${routingId}/outside-cost`, { stepKey: 'hallmark', outsideCostMinor: 4500 })
  })
})
