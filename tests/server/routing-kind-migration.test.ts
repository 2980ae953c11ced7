// The migration that gives routings a kind, run on a database holding routings from before it: those whose code or name said
// repair, resize or retip (how a repair was recognised until then) become repairs with their version moved on; the rest new pieces.
import { asc } from 'drizzle-orm'
import { drizzle } from 'drizzle-orm/node-postgres'
import pg from 'pg'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import * as s from '../../server/db/schema/index'
import { databaseBefore, type BeforeMigration } from '../setup/migrations'

// Raw SQL for the writes on purpose: the rows are written as they were stored before the migration under test, without a kind,
// which the schema no longer allows.
const TARGET = '0016_routing-kind'
let m: BeforeMigration
let db: pg.Client
const rows = async (sql: string) => (await db.query(sql)).rows

beforeAll(async () => {
  // The schema as it stood before: every migration up to the one under test.
  m = await databaseBefore(TARGET)
  db = m.db
  await db.query(`insert into workshops (id, name, week_pattern) overriding system value values (1, 'W', '[]'::jsonb)`)
  await db.query(`insert into routings (id, workshop_id, code, name, version) overriding system value values
    (1, 1, 'chain-repair', 'Repair: chain link', 0),
    (2, 1, 'ring-resize', 'Ring sizing', 3),
    (3, 1, 'claws', 'Retip claws', 0),
    (4, 1, 'REPAIR-kit', 'Kit', 1),
    (5, 1, 'signet', 'Signet ring, after repair', 0),
    (6, 1, 'prepaired', 'Prepaired studs', 0),
    (7, 1, 'bezel-ring', 'Bezel ring', 2),
    (8, 1, 'stud-run', 'Production run: studs', 0),
    (9, 1, 'resizer', 'Resizer tool', 0)`)
  await m.runTarget()
})
afterAll(async () => {
  await m?.close()
})

describe('routings get a kind', () => {
  it('when a routing’s code or name has a word starting repair, resiz or retip in any case, then it is a repair with its version moved on', async () => {
    // Worked by hand from the old rule (a word starting repair, resiz or retip in the code or name, any case):
    //   1 "Repair: chain link" · 2 code ring-resize · 3 "Retip claws" · 4 code REPAIR-kit · 5 "…, after repair" · 9 "Resizer tool" are repairs;
    //   6 "prepaired" has repair only inside a word, 7 says none of them, 8 is a production run by name only: new pieces.
    expect(await rows(`select id, kind, version from routings order by id`)).toEqual([
      { id: 1, kind: 'repair', version: 1 },
      { id: 2, kind: 'repair', version: 4 },
      { id: 3, kind: 'repair', version: 1 },
      { id: 4, kind: 'repair', version: 2 },
      { id: 5, kind: 'repair', version: 1 },
      { id: 6, kind: 'piece', version: 0 },
      { id: 7, kind: 'piece', version: 2 },
      { id: 8, kind: 'piece', version: 0 },
      { id: 9, kind: 'repair', version: 1 },
    ])
  })

  it('when a routing is added without saying its kind, then it is a new piece, and it may not be left without one', async () => {
    await db.query(`insert into routings (id, workshop_id, code, name) overriding system value values (10, 1, 'toggle', 'Toggle bracelet')`)
    expect(await rows(`select kind from routings where id = 10`)).toEqual([{ kind: 'piece' }])
    await expect(db.query(`update routings set kind = null where id = 10`)).rejects.toThrow(/null/)
  })

  it('when the app reads the routings, then each comes with its kind', async () => {
    // Read as the app reads routings (Drizzle on the schema).
    const orm = drizzle(db, { schema: s, casing: 'snake_case' })
    const read = await orm.select({ code: s.routings.code, kind: s.routings.kind }).from(s.routings).orderBy(asc(s.routings.id)).limit(2)
    expect(read).toEqual([
      { code: 'chain-repair', kind: 'repair' },
      { code: 'ring-resize', kind: 'repair' },
    ])
  })
})
