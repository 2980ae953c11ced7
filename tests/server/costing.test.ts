// Costing API against real PostgreSQL: the estimate for a piece not yet ordered, the same figure on the order taken from it, and the
// order's actual cost from the metal ledger, stone counts, invoiced outside work and time records (hand-worked in the comments).
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { createTestApp, signedIn, type Agent, type TestApp } from '../setup/app'
import { expectFieldError } from './helpers'

let t: TestApp
let owner: Agent
let sales: Agent
let templateId: number
let alloyId: number
let customerId: number
const q = (sql: string, args: unknown[] = []) => t.pool.query(sql, args)

beforeAll(async () => {
  t = await createTestApp()
  owner = await signedIn(t.app, 'owner')
  sales = await signedIn(t.app, 'sales')
  const manager = await signedIn(t.app, 'manager')
  const kinds = Object.fromEntries((await owner.get('/api/operation-kinds')).body.map((k: { code: string; id: number }) => [k.code, k.id]))
  // Everyone at 32.00 an hour (3,200 p), so the average rate (used before anyone is planned) is 32.00.
  await q(`update people set hourly_rate_minor = 3200`)
  const tpl = await manager.post('/api/templates', {
    code: 'costing-fixture',
    name: 'Fixture: fabricate and hallmark',
    description: 'Hand-worked costing fixture.',
    steps: [
      { key: 'make', kindId: kinds.sawing, name: 'Make', baseMinutes: 210 },
      { key: 'hallmark', kindId: kinds.hallmarking, name: 'Hallmark', baseMinutes: 0, leadDays: 3, after: ['make'] },
    ],
  })
  expect(tpl.status).toBe(201)
  templateId = tpl.body.id
  expect((await owner.put(`/api/insights/templates/${templateId}/outside-cost`, { stepKey: 'hallmark', outsideCostMinor: 4500 })).status).toBe(200)
  alloyId = (await q(`select id from alloys where code = 'au750y'`)).rows[0].id
  customerId = (await q(`select min(id) as id from customers`)).rows[0].id
  // Today's 18 ct price 6,000 p/g; 25 days ago it was 5,234 p/g (the seeded change 12 days ago and today's come later).
  await q(`insert into alloy_prices (alloy_id, price_per_gram_minor, effective_on) values ($1, 6000, current_date), ($1, 5234, current_date - 25)`, [alloyId])
})
afterAll(async () => {
  await t?.close()
})

const piece = { templateId: 0, piece: 'Fixture ring', params: { metal: 'gold-18ct', metalWeightG: 6.2 } }

describe('estimated cost', () => {
  it('when sales price a piece not yet ordered, then metal, stones, outside work and labour are the hand-worked figures', async () => {
    const r = await sales.post('/api/costing/estimate', {
      priceQuotedMinor: 125_000,
      pieces: [
        {
          ...piece,
          templateId,
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

  it('when the piece has no weight or stone costs, then the estimate says what is missing', async () => {
    const r = await sales.post('/api/costing/estimate', { pieces: [{ templateId, piece: 'Fixture ring', params: { metal: 'gold-18ct', stoneCount: 4 } }] })
    expect(r.body.estimate.cost).toMatchObject({ metalMinor: 0, stonesMinor: 0 })
    expect(r.body.estimate.caveat).toBe('no metal weight estimated; stone costs not entered')
    // Count × typical cost: 4 × 2,500 p = 10,000 p.
    const typed = await sales.post('/api/costing/estimate', {
      pieces: [{ templateId, piece: 'Fixture ring', params: { metal: 'gold-18ct', stoneCount: 4, stoneCostEachMinor: 2500, metalWeightG: 6.2 } }],
    })
    expect(typed.body.estimate.cost.stonesMinor).toBe(10_000)
  })

  it('when the input is wrong, then the field is named', async () => {
    expectFieldError(await sales.post('/api/costing/estimate', { pieces: [] }), 'pieces')
    expectFieldError(
      await sales.post('/api/costing/estimate', { pieces: [{ ...piece, templateId, params: { metalWeightG: -1 } }] }),
      'pieces.0.params.metalWeightG',
    )
    expectFieldError(await sales.post('/api/costing/estimate', { pieces: [{ ...piece, templateId: 999999 }] }), 'pieces.0.templateId')
    // A price in minor units is a whole number: 1250.5 pence is not an amount.
    expectFieldError(
      await sales.post('/api/costing/estimate', { priceQuotedMinor: 1250.5, pieces: [{ ...piece, templateId }] }),
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
      pieces: [{ ...piece, templateId }],
    })
    expect(o.status).toBe(201)
    const bag = (await q(`select id from job_bags where order_id = $1`, [o.body.id])).rows[0].id
    const ops = Object.fromEntries((await q(`select key, id from operations where job_bag_id = $1`, [bag])).rows.map((r) => [r.key, r.id]))
    // The stone list: 3 stones at 120.00 each, counted out 4, 3 set and 1 broken; and one of the customer's own, set.
    const [line] = (
      await q(`insert into job_bag_stones (job_bag_id, role, size_mm, count, cost_each_minor) values ($1, 'side', 2, 3, 12000) returning id`, [bag])
    ).rows
    const [own] = (
      await q(`insert into job_bag_stones (job_bag_id, role, size_mm, count, customer_owned, customer_id) values ($1, 'centre', 6, 1, true, $2) returning id`, [
        bag,
        customerId,
      ])
    ).rows
    await q(
      `insert into stone_movements (stone_line_id, kind, count, recorded_at) values ($1, 'issued', 4, now()), ($1, 'set', 3, now()), ($1, 'broken', 1, now()), ($2, 'issued', 1, now()), ($2, 'set', 1, now())`,
      [line.id, own.id],
    )
    const before = await sales.get(`/api/orders/${o.body.id}/costing`)
    expect(before.status).toBe(200)
    // Same as the estimate above: 37,200 + 36,000 + 4,500 + 11,200 = 88,900 p.
    expect(before.body.estimate.cost.totalMinor).toBe(88_900)
    expect(before.body.actual.caveat).toBe('no metal weighed yet')

    // The work: 6.35 g of 18 ct issued 20 days ago (price then 5,234 p/g), the piece back at 6.20 g: 0.15 g lost.
    const personId = (await q(`select min(id) as id from people`)).rows[0].id
    await q(
      `insert into metal_movements (workshop_id, alloy_id, kind, weight_mg, source, job_bag_id, operation_id, person_id, recorded_at)
      select workshop_id, $1, 'issued', 6350, 'stock', $2, $3, $4, (current_date - 20)::timestamp + interval '10 hours' from job_bags where id = $2`,
      [alloyId, bag, ops.make, personId],
    )
    await q(
      `insert into metal_movements (workshop_id, alloy_id, kind, weight_mg, form, job_bag_id, operation_id, person_id, recorded_at)
      select workshop_id, $1, 'returned', 6200, 'piece', $2, $3, $4, (current_date - 20)::timestamp + interval '14 hours' from job_bags where id = $2`,
      [alloyId, bag, ops.make, personId],
    )
    // 3.5 h at the bench (32.00/h) and the hallmark invoiced at 45.00.
    await q(`update operations set status = 'done', finished_at = now() where job_bag_id = $1`, [bag])
    await q(
      `insert into time_records (operation_id, person_id, started_at, ended_at, end_reason) values ($1, $2, now() - interval '210 minutes', now(), 'finished')`,
      [ops.make, personId],
    )
    expect((await owner.put(`/api/insights/operations/${ops.hallmark}/outside-cost`, { outsideCostMinor: 4500 })).status).toBe(200)

    const after = await owner.get(`/api/orders/${o.body.id}/costing`)
    // Metal 6,200 × 5,234 / 1,000 = 32,450.8 → 32,451 p + loss 150 × 5,234 / 1,000 = 785.1 → 785 p = 33,236 p; stones 4 × 12,000 = 48,000 p;
    // outside 4,500 p; labour 210 × 3,200 / 60 = 11,200 p. Total 96,936 p; margin 125,000 − 96,936 = 28,064 p = 22.45 % → 22.5 %.
    expect(after.body.actual.cost).toEqual({ metalMinor: 33_236, stonesMinor: 48_000, outsideMinor: 4_500, labourMinor: 11_200, totalMinor: 96_936 })
    expect(after.body.actual).toMatchObject({ marginMinor: 28_064, marginPct: 22.5, caveat: 'metal, stones, outside work and labour counted' })
    // The owner's table shows the same figures, in minor units of the workshop's currency.
    const table = await owner.get(`/api/insights/costing?templateId=${templateId}`)
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

  it('when the metal was the customer’s own, then it costs nothing and its loss is shown', async () => {
    const o = await sales.post('/api/orders', {
      customerId,
      title: 'Remade from old gold',
      dueDate: '2031-01-31',
      priceQuotedMinor: 40_000,
      pieces: [{ ...piece, templateId }],
    })
    const bag = (await q(`select id from job_bags where order_id = $1`, [o.body.id])).rows[0].id
    await q(
      `insert into metal_movements (workshop_id, alloy_id, kind, weight_mg, source, job_bag_id, recorded_at) select workshop_id, $1, 'issued', 8000, 'customer', $2, now() - interval '1 day' from job_bags where id = $2`,
      [alloyId, bag],
    )
    await q(
      `insert into metal_movements (workshop_id, alloy_id, kind, weight_mg, form, job_bag_id, recorded_at) select workshop_id, $1, 'returned', 6200, 'piece', $2, now() from job_bags where id = $2`,
      [alloyId, bag],
    )
    await q(
      `insert into metal_movements (workshop_id, alloy_id, kind, weight_mg, form, job_bag_id, recorded_at) select workshop_id, $1, 'returned', 1650, 'scrap', $2, now() from job_bags where id = $2`,
      [alloyId, bag],
    )
    const r = await owner.get(`/api/orders/${o.body.id}/costing`)
    // 8.00 g issued − 6.20 piece − 1.65 scrap = 0.15 g lost, all of it the customer's: metal 0 p.
    expect(r.body.actual.cost.metalMinor).toBe(0)
    expect(r.body.customerMetalLossG).toBe(0.15)
  })

  it('when the bench asks for an order’s costing, then it is refused', async () => {
    const bench = await signedIn(t.app, 'bench')
    const id = (await q(`select min(id) as id from orders`)).rows[0].id
    expect((await bench.get(`/api/orders/${id}/costing`)).status).toBe(403)
  })
})

describe('a workshop pricing in yen', () => {
  it('when the workshop currency has no decimals, then rates, outside costs and prices are whole yen and the suggested price is a whole yen', async () => {
    // ISO 4217: JPY has no minor unit, so 1 minor unit = ¥1. Everyone at ¥3,000 an hour, the hallmark at ¥4,501, brass (not priced), no stones.
    await q(`update workshops set currency = 'JPY'`)
    await q(`update people set hourly_rate_minor = 3000`)
    expect((await owner.put(`/api/insights/templates/${templateId}/outside-cost`, { stepKey: 'hallmark', outsideCostMinor: 4501 })).status).toBe(200)
    const r = await sales.post('/api/costing/estimate', { priceQuotedMinor: 30_000, pieces: [{ templateId, piece: 'Yen ring', params: { metal: 'brass' } }] })
    // Labour ¥10,500 + hallmark ¥4,501 = ¥15,001; at 40 %: 15,001 ÷ 0.6 = 25,001.67 → ¥25,002 (whole yen; rounding to "whole hundreds of minor units" would give ¥25,100).
    expect(r.body).toMatchObject({ currency: 'JPY', priceMinor: 30_000, suggestedPriceMinor: 25_002 })
    expect(r.body.estimate.cost).toMatchObject({ labourMinor: 10_500, outsideMinor: 4_501, totalMinor: 15_001 })
    await q(`update workshops set currency = 'GBP'`)
    await q(`update people set hourly_rate_minor = 3200`)
    await owner.put(`/api/insights/templates/${templateId}/outside-cost`, { stepKey: 'hallmark', outsideCostMinor: 4500 })
  })
})
