// The migration that gives each job bag the kind of its routing, run on a database holding bags from before it: each bag takes
// the kind its routing has (what it was read as until then); a bag whose routing was removed is a new piece.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import pg from 'pg'
import { databaseBefore, type BeforeMigration } from '../setup/migrations'

// Raw SQL for the writes on purpose: the bags are written as they were stored before the migration under test, without a kind.
const TARGET = '0018_bag-routing-kind'
let m: BeforeMigration
let db: pg.Client
const rows = async (sql: string) => (await db.query(sql)).rows

beforeAll(async () => {
  m = await databaseBefore(TARGET)
  db = m.db
  await db.query(`insert into workshops (id, name, week_pattern) overriding system value values (1, 'W', '[]'::jsonb)`)
  await db.query(`insert into customers (id, workshop_id, reference, name) overriding system value values (1, 1, 'C-1', 'Customer')`)
  await db.query(
    `insert into orders (id, workshop_id, number, customer_id, title, due_date) overriding system value values (1, 1, 'O-1', 1, 'x', '2030-01-01')`,
  )
  await db.query(`insert into routings (id, workshop_id, code, name, kind) overriding system value values
    (1, 1, 'chain-repair', 'Repair: chain link', 'repair'),
    (2, 1, 'stud-run', 'Production run: studs', 'run'),
    (3, 1, 'bezel-ring', 'Bezel ring', 'piece')`)
  await db.query(`insert into job_bags (id, workshop_id, order_id, number, piece, routing_id, params) overriding system value values
    (1, 1, 1, 'O-1-1', 'Chain', 1, '{}'::jsonb),
    (2, 1, 1, 'O-1-2', 'Studs', 2, '{}'::jsonb),
    (3, 1, 1, 'O-1-3', 'Ring', 3, '{}'::jsonb),
    (4, 1, 1, 'O-1-4', 'Bangle', null, '{}'::jsonb)`)
  await m.runTarget()
})
afterAll(async () => {
  await m?.close()
})

describe('job bags keep their routing’s kind', () => {
  it('when bags from before are migrated, then each has its routing’s kind, and one without a routing is a new piece', async () => {
    expect(await rows(`select id, routing_kind from job_bags order by id`)).toEqual([
      { id: 1, routing_kind: 'repair' },
      { id: 2, routing_kind: 'run' },
      { id: 3, routing_kind: 'piece' },
      { id: 4, routing_kind: 'piece' },
    ])
  })

  it('when the routing’s kind changes afterwards, then the bag’s kind stays as it was', async () => {
    await db.query(`update routings set kind = 'piece' where id = 1`)
    expect(await rows(`select routing_kind from job_bags where id = 1`)).toEqual([{ routing_kind: 'repair' }])
  })
})
