// The migration that gives a piece made from a quote the quote's stone rows, run on a database holding orders from before it:
// the order made from an accepted quote naming a routing gets, on its first job bag, the rows with a count, in their order, each
// with what one stone costs (null when the quote gave none); orders a quote was only written for, quotes with no counted row
// and pieces taken without a quote stay without.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import pg from 'pg'
import { databaseBefore, type BeforeMigration } from '../setup/migrations'

// Raw SQL for the writes on purpose: the rows are written as they were stored before the migration under test.
const TARGET = '0024_bag-quoted-stones'
let m: BeforeMigration
let db: pg.Client
const rows = async (sql: string) => (await db.query(sql)).rows

const stones = (list: unknown[]) => `'${JSON.stringify(list).replace(/'/g, "''")}'::jsonb`

beforeAll(async () => {
  m = await databaseBefore(TARGET)
  db = m.db
  await db.query(`insert into workshops (id, name, week_pattern) overriding system value values (1, 'W', '[]'::jsonb)`)
  await db.query(`insert into customers (id, workshop_id, reference, name) overriding system value values (1, 1, 'C-1', 'Customer')`)
  await db.query(`insert into routings (id, workshop_id, code, name, kind) overriding system value values (1, 1, 'pave-band', 'Pavé band', 'piece')`)
  await db.query(`insert into orders (id, workshop_id, number, customer_id, title, due_date, vat_registered, vat_number, vat_rate_basis_points)
    overriding system value values
    (1, 1, 'O-1', 1, 'Pavé band', '2030-01-01', false, '', 2000),
    (2, 1, 'O-2', 1, 'Resize', '2030-01-01', false, '', 2000),
    (3, 1, 'O-3', 1, 'Plain band', '2030-01-01', false, '', 2000),
    (4, 1, 'O-4', 1, 'Taken at the counter', '2030-01-01', false, '', 2000)`)
  await db.query(`insert into job_bags (id, workshop_id, order_id, number, piece, routing_id, params) overriding system value values
    (1, 1, 1, 'O-1-1', 'Pavé band', 1, '{}'::jsonb),
    (2, 1, 1, 'O-1-2', 'Pavé band, second', 1, '{}'::jsonb),
    (3, 1, 2, 'O-2-1', 'Resize', 1, '{}'::jsonb),
    (4, 1, 3, 'O-3-1', 'Plain band', 1, '{}'::jsonb),
    (5, 1, 4, 'O-4-1', 'Counter piece', 1, '{}'::jsonb)`)
  await db.query(`insert into quotes (id, workshop_id, number, customer_id, order_id, status, title, details, currency, price_minor, deposit_minor,
    valid_until, vat_registered, vat_number, vat_rate_basis_points) overriding system value values
    (1, 1, 'Q-1', 1, 1, 'accepted', 'Pavé band', '{}'::jsonb, 'GBP', 150000, 45000, '2030-01-01', false, '', 2000),
    (2, 1, 'Q-2', 1, 2, 'accepted', 'Resize', '{}'::jsonb, 'GBP', 8000, 0, '2030-01-01', false, '', 2000),
    (3, 1, 'Q-3', 1, 3, 'accepted', 'Plain band', '{}'::jsonb, 'GBP', 40000, 12000, '2030-01-01', false, '', 2000)`)
  // The quote that made order 1: a routing, two rows with a count (one without a cost) and a row of words only.
  await db.query(
    `update quotes set details = jsonb_build_object('routingId', 1, 'piece', 'Pavé band', 'stones', ${stones([
      { description: 'round diamonds of 1.5 mm', count: 18, carats: 0.25, costEachMinor: 4567 },
      { description: 'engraved inside', costEachMinor: 1000 },
      { description: 'oval sapphire', count: 1 },
    ])}) where id = 1`,
  )
  // A quote written for an order already taken names no routing: it made no piece.
  await db.query(
    `update quotes set details = jsonb_build_object('stones', ${stones([{ description: 'stones re-set', count: 3, costEachMinor: 900 }])}) where id = 2`,
  )
  // A quote that made a piece but counted no stones.
  await db.query(`update quotes set details = jsonb_build_object('routingId', 1, 'stones', ${stones([{ description: 'no stones', count: 0 }])}) where id = 3`)
  await m.runTarget()
})
afterAll(async () => {
  await m?.close()
})

describe('pieces made from a quote keep its stone rows', () => {
  it('when orders from before are migrated, then only the first piece of the order a quote made has the quote’s counted rows with their costs', async () => {
    expect(await rows(`select id, quoted_stones from job_bags order by id`)).toEqual([
      {
        id: 1,
        quoted_stones: [
          { description: 'round diamonds of 1.5 mm', count: 18, costEachMinor: 4567 },
          { description: 'oval sapphire', count: 1, costEachMinor: null },
        ],
      },
      { id: 2, quoted_stones: null },
      { id: 3, quoted_stones: null },
      { id: 4, quoted_stones: null },
      { id: 5, quoted_stones: null },
    ])
  })
})
