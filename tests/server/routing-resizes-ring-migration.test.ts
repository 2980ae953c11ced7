// The migration that lets a routing say it resizes a ring, run on routings from before it: those whose code said "resize" (how
// the order form knew to ask for the two sizes until then) resize a ring, with their version moved on; the rest do not.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import pg from 'pg'
import { databaseBefore, type BeforeMigration } from '../setup/migrations'

// Raw SQL for the writes on purpose: the routings are written as they were stored before the migration under test.
const TARGET = '0019_routing-resizes-ring'
let m: BeforeMigration
let db: pg.Client
const rows = async (sql: string) => (await db.query(sql)).rows

beforeAll(async () => {
  m = await databaseBefore(TARGET)
  db = m.db
  await db.query(`insert into workshops (id, name, week_pattern) overriding system value values (1, 'W', '[]'::jsonb)`)
  await db.query(`insert into routings (id, workshop_id, code, name, kind, version) overriding system value values
    (1, 1, 'ring-resize', 'Repair: ring resize', 'repair', 2),
    (2, 1, 'chain-repair', 'Repair: chain link', 'repair', 0),
    (3, 1, 'sizing', 'Ring resize by stretching', 'repair', 0),
    (4, 1, 'bezel-ring', 'Bezel ring', 'piece', 1)`)
  await m.runTarget()
})
afterAll(async () => {
  await m?.close()
})

describe('routings say whether they resize a ring', () => {
  it('when a routing’s code says resize, then it resizes a ring with its version moved on; others (a name alone included) do not', async () => {
    // Worked by hand from the order form's old rule (the code contains "resize", as written): only routing 1.
    expect(await rows(`select id, resizes_ring, version from routings order by id`)).toEqual([
      { id: 1, resizes_ring: true, version: 3 },
      { id: 2, resizes_ring: false, version: 0 },
      { id: 3, resizes_ring: false, version: 0 },
      { id: 4, resizes_ring: false, version: 1 },
    ])
  })
})
