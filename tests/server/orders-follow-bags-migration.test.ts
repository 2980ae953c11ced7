// The migration that puts open orders whose work has begun in work: an open order with a job bag in work or complete is in
// work (its version moved on); one whose bags all wait, and orders in any other state, stay as they are.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import pg from 'pg'
import { databaseBefore, type BeforeMigration } from '../setup/migrations'

const TARGET = '0020_orders-follow-bags'
let m: BeforeMigration
let db: pg.Client
const rows = async (sql: string) => (await db.query(sql)).rows

beforeAll(async () => {
  m = await databaseBefore(TARGET)
  db = m.db
  await db.query(`insert into workshops (id, name, week_pattern) overriding system value values (1, 'W', '[]'::jsonb)`)
  await db.query(`insert into customers (id, workshop_id, reference, name) overriding system value values (1, 1, 'C-1', 'Customer')`)
  await db.query(`insert into orders (id, workshop_id, number, customer_id, title, due_date, status, version) overriding system value values
    (1, 1, 'O-1', 1, 'started', '2030-01-01', 'open', 2),
    (2, 1, 'O-2', 1, 'one done', '2030-01-01', 'open', 0),
    (3, 1, 'O-3', 1, 'waiting', '2030-01-01', 'open', 0),
    (4, 1, 'O-4', 1, 'ready', '2030-01-01', 'ready', 5)`)
  await db.query(`insert into job_bags (id, workshop_id, order_id, number, piece, params, status) overriding system value values
    (1, 1, 1, 'O-1-1', 'p', '{}'::jsonb, 'in-work'),
    (2, 1, 1, 'O-1-2', 'p', '{}'::jsonb, 'waiting'),
    (3, 1, 2, 'O-2-1', 'p', '{}'::jsonb, 'complete'),
    (4, 1, 3, 'O-3-1', 'p', '{}'::jsonb, 'waiting'),
    (5, 1, 3, 'O-3-2', 'p', '{}'::jsonb, 'cancelled'),
    (6, 1, 4, 'O-4-1', 'p', '{}'::jsonb, 'complete')`)
  await m.runTarget()
})
afterAll(async () => {
  await m?.close()
})

describe('open orders whose work has begun', () => {
  it('when an open order has a bag in work or complete, then it is in work with its version moved on; the others stay', async () => {
    expect(await rows(`select id, status, version from orders order by id`)).toEqual([
      { id: 1, status: 'in-work', version: 3 },
      { id: 2, status: 'in-work', version: 1 },
      { id: 3, status: 'open', version: 0 },
      { id: 4, status: 'ready', version: 5 },
    ])
  })
})
