// The migration that moved stored amounts from reals in major units to integer minor units, run on a database holding the old
// columns: each amount converted by its workshop currency's ISO 4217 minor unit, read exactly from the stored float, the reals dropped.
import pg from 'pg'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { databaseBefore, type BeforeMigration } from '../setup/migrations'

// Raw SQL throughout on purpose: the rows are written in the columns as they stood before the migration under test, which the schema no longer has.
const TARGET = '0012_materials-in-minor-units'
let m: BeforeMigration
let db: pg.Client

beforeAll(async () => {
  // The schema as it stood before: every migration up to the one under test.
  m = await databaseBefore(TARGET)
  db = m.db
  const week = JSON.stringify([{ weekday: 1, start: '09:00', end: '17:00' }])
  // Three workshops: pounds (2 decimals), yen (0) and Bahraini dinars (3), ISO 4217.
  for (const [i, currency] of [
    [1, 'GBP'],
    [2, 'JPY'],
    [3, 'BHD'],
  ] as const) {
    await db.query(`insert into workshops (id, name, week_pattern, currency) overriding system value values ($1, $2, $3::jsonb, $4)`, [
      i,
      `W${i}`,
      week,
      currency,
    ])
    await db.query(`insert into customers (id, workshop_id, reference, name) overriding system value values ($1, $1, 'C-1', 'Customer')`, [i])
    await db.query(
      `insert into operation_kinds (id, workshop_id, code, name, outside) overriding system value values ($1, $1, 'hallmarking', 'Hallmarking', true)`,
      [i],
    )
    await db.query(`insert into routing_templates (id, workshop_id, code, name) overriding system value values ($1, $1, 't', 'T')`, [i])
  }
  const order = (id: number, w: number, price: number) =>
    db.query(
      `insert into orders (id, workshop_id, number, customer_id, title, due_date, price_quoted) overriding system value values ($1, $2, $3, $2, 'x', '2030-01-01', $4)`,
      [id, w, `O-${id}`, price],
    )
  await order(11, 1, 1234.56)
  await order(12, 1, 99999.99)
  await order(13, 1, 0.125)
  await order(21, 2, 150000)
  await order(31, 3, 12.345)
  const person = (w: number, rate: number) => db.query(`insert into people (workshop_id, name, hourly_rate) values ($1, 'P', $2)`, [w, rate])
  await person(1, 32.5)
  await person(2, 3000)
  await person(3, 4.125)
  await db.query(
    `insert into template_step_costs (template_id, step_key, outside_cost) values (1, 'hallmark', 2.8), (1, 'cast', null), (2, 'hallmark', 450), (3, 'hallmark', 1.75)`,
  )
  for (const w of [1, 2, 3]) {
    await db.query(
      `insert into job_bags (id, workshop_id, order_id, number, piece, params) overriding system value values ($1, $1, $2, 'B', 'p', '{}'::jsonb)`,
      [w, w === 1 ? 11 : w === 2 ? 21 : 31],
    )
    await db.query(
      `insert into operations (id, job_bag_id, seq, key, kind_id, name, estimate_minutes) overriding system value values ($1, $1, 0, 'hallmark', $1, 'Hallmark', 0)`,
      [w],
    )
  }
  await db.query(`insert into operation_costs (operation_id, outside_cost) values (1, 0.1), (2, 500), (3, 2.5)`)
  await m.runTarget()
})
afterAll(async () => {
  await m?.close()
})

describe('amounts to minor units', () => {
  it('when the old prices are converted, then each becomes whole minor units of its workshop currency', async () => {
    const { rows } = await db.query(`select id, price_quoted_minor from orders order by id`)
    // Hand-worked. GBP × 100: 1234.56 → 123,456; 99,999.99 (a real holds 99999.9921875) → 9,999,999; 0.125 (exact in binary) → 12.5 → 13,
    // half away from zero. JPY × 1: ¥150,000 → 150,000. BHD × 1000: 12.345 (a real holds 12.3450002670288) → 12,345 fils.
    expect(rows.map((r) => [r.id, r.price_quoted_minor])).toEqual([
      [11, 123_456],
      [12, 9_999_999],
      [13, 13],
      [21, 150_000],
      [31, 12_345],
    ])
  })

  it('when rates and outside costs are converted, then the same rule applies and a cost not known stays unknown', async () => {
    const rates = (await db.query(`select workshop_id, hourly_rate_minor from people order by workshop_id`)).rows.map((r) => r.hourly_rate_minor)
    // 32.50 GBP → 3,250 p; ¥3,000 → 3,000; 4.125 BHD → 4,125 fils.
    expect(rates).toEqual([3250, 3000, 4125])
    const steps = (await db.query(`select template_id, step_key, outside_cost_minor from template_step_costs order by template_id, step_key`)).rows
    // 2.80 GBP → 280 p; the caster's cost was never entered → null; ¥450 → 450; 1.75 BHD → 1,750 fils.
    expect(steps.map((r) => [r.template_id, r.step_key, r.outside_cost_minor])).toEqual([
      [1, 'cast', null],
      [1, 'hallmark', 280],
      [2, 'hallmark', 450],
      [3, 'hallmark', 1750],
    ])
    // 0.10 GBP (a real holds 0.100000001490116) → 10 p; ¥500 → 500; 2.5 BHD → 2,500 fils.
    const invoiced = (await db.query(`select operation_id, outside_cost_minor from operation_costs order by operation_id`)).rows.map(
      (r) => r.outside_cost_minor,
    )
    expect(invoiced).toEqual([10, 500, 2500])
  })

  it('when the migration is done, then the real columns are gone', async () => {
    const { rows } = await db.query(`select table_name, column_name from information_schema.columns
      where (table_name, column_name) in (('orders', 'price_quoted'), ('people', 'hourly_rate'), ('template_step_costs', 'outside_cost'), ('operation_costs', 'outside_cost'))`)
    expect(rows).toEqual([])
  })
})
