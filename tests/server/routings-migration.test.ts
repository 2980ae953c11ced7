// The migration that gave routings their own name in the database (tables, columns, keys, indexes, sequences), run on a database
// holding routings, steps, accepted changes, outside costs and job bags under the old names: every row is still there afterwards.
import { readFileSync } from 'node:fs'
import { join } from 'node:path'
import pg from 'pg'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { migrationsFolder } from '../../server/db/migrate'
import { databaseBefore, type BeforeMigration } from '../setup/migrations'

// Raw SQL throughout on purpose: the rows are written under the table and column names as they stood before the migration under test,
// and the database's own catalogue is read after it.
const TARGET = '0014_routings-named-routings'
let m: BeforeMigration
let db: pg.Client
const rows = async (sql: string) => (await db.query(sql)).rows

beforeAll(async () => {
  // The schema as it stood before: every migration up to the one under test.
  m = await databaseBefore(TARGET)
  db = m.db
  await db.query(`insert into workshops (id, name, week_pattern) overriding system value values (1, 'W', '[]'::jsonb)`)
  await db.query(
    `insert into users (id, workshop_id, email, name, role, password_hash) overriding system value values (1, 1, 'o@example.test', 'O', 'owner', 'x')`,
  )
  await db.query(
    `insert into operation_kinds (id, workshop_id, code, name) overriding system value values (1, 1, 'casting', 'Casting'), (2, 1, 'polishing', 'Polishing')`,
  )
  await db.query(`insert into customers (id, workshop_id, reference, name) overriding system value values (1, 1, 'C-1', 'Customer')`)
  await db.query(
    `insert into orders (id, workshop_id, number, customer_id, title, due_date) overriding system value values (1, 1, 'O-1', 1, 'x', '2030-01-01')`,
  )
  // Two routings: the first through its identity (so the sequence has moved on to 1), the second with an id of its own.
  await db.query(`insert into routing_templates (workshop_id, code, name, learning_rate) values (1, 'signet', 'Signet ring', 0.85)`)
  await db.query(`insert into routing_templates (id, workshop_id, code, name) overriding system value values (7, 1, 'chain', 'Chain repair')`)
  await db.query(`insert into template_steps (template_id, seq, key, kind_id, name, base_minutes, after) values
    (1, 0, 'cast', 1, 'Cast', 40, '{}'), (1, 1, 'polish', 2, 'Polish', 25, '{cast}'), (7, 0, 'polish', 2, 'Polish', 15, '{}')`)
  await db.query(`insert into template_step_changes (workshop_id, template_id, step_key, kind_id, from_base_minutes, from_per_stone_minutes,
    to_base_minutes, to_per_stone_minutes, template_version, basis, accepted_by) values (1, 1, 'polish', 2, 30, 0, 25, 0, 2, '{"n": 6}'::jsonb, 1)`)
  await db.query(`insert into template_step_costs (template_id, step_key, outside_cost_minor) values (1, 'cast', 1800), (7, 'polish', null)`)
  await db.query(`insert into job_bags (id, workshop_id, order_id, number, piece, template_id, params) overriding system value values
    (1, 1, 1, 'B-1', 'Ring', 1, '{}'::jsonb), (2, 1, 1, 'B-2', 'Chain', 7, '{}'::jsonb)`)
  await m.runTarget()
})
afterAll(async () => {
  await m?.close()
})

describe('routings under their own name', () => {
  it('when the tables are renamed, then every routing, step, accepted change, outside cost and job bag link is still there', async () => {
    // The rows written above, read back under the new names.
    expect(await rows(`select id, code, name, learning_rate from routings order by id`)).toEqual([
      { id: 1, code: 'signet', name: 'Signet ring', learning_rate: 0.85 },
      { id: 7, code: 'chain', name: 'Chain repair', learning_rate: null },
    ])
    expect((await rows(`select routing_id, seq, key, base_minutes, after from routing_steps order by routing_id, seq`)).map((r) => Object.values(r))).toEqual([
      [1, 0, 'cast', 40, []],
      [1, 1, 'polish', 25, ['cast']],
      [7, 0, 'polish', 15, []],
    ])
    expect(await rows(`select routing_id, step_key, to_base_minutes, routing_version, basis from routing_step_changes`)).toEqual([
      { routing_id: 1, step_key: 'polish', to_base_minutes: 25, routing_version: 2, basis: { n: 6 } },
    ])
    expect(await rows(`select routing_id, step_key, outside_cost_minor from routing_step_costs order by routing_id`)).toEqual([
      { routing_id: 1, step_key: 'cast', outside_cost_minor: 1800 },
      { routing_id: 7, step_key: 'polish', outside_cost_minor: null },
    ])
    expect(await rows(`select id, routing_id from job_bags order by id`)).toEqual([
      { id: 1, routing_id: 1 },
      { id: 2, routing_id: 7 },
    ])
  })

  it('when a routing is added after the rename, then its id follows on from the renamed sequence', async () => {
    // One routing took id 1 from the sequence before the rename (the other was given 7 by hand), so the next from it is 2.
    expect(await rows(`insert into routings (workshop_id, code, name) values (1, 'new', 'New') returning id`)).toEqual([{ id: 2 }])
    expect(await rows(`select pg_get_serial_sequence('routings', 'id') as seq`)).toEqual([{ seq: 'public.routings_id_seq' }])
  })

  it('when a routing is deleted after the rename, then its steps, changes and costs go with it and its job bags keep no link', async () => {
    await db.query(`delete from routings where id = 1`)
    expect(await rows(`select count(*)::int as n from routing_steps where routing_id = 1`)).toEqual([{ n: 0 }])
    expect(await rows(`select count(*)::int as n from routing_step_changes`)).toEqual([{ n: 0 }])
    expect(await rows(`select routing_id from routing_step_costs`)).toEqual([{ routing_id: 7 }])
    expect(await rows(`select id, routing_id from job_bags order by id`)).toEqual([
      { id: 1, routing_id: null },
      { id: 2, routing_id: 7 },
    ])
    // The unique code per workshop still holds under its new index name.
    await expect(db.query(`insert into routings (workshop_id, code, name) values (1, 'chain', 'Again')`)).rejects.toThrow(/routings_workshop_id_code_index/)
  })

  it('when the migration is done, then every table, column, index and key drizzle-kit records for the schema exists under its name', async () => {
    // drizzle-kit's own snapshot of the schema after this migration, written by the tool from the schema files, not from the SQL above.
    const snap = JSON.parse(readFileSync(join(migrationsFolder, `meta/${TARGET.slice(0, 4)}_snapshot.json`), 'utf8')) as {
      tables: Record<
        string,
        {
          name: string
          columns: Record<string, { identity?: { name: string } }>
          indexes: Record<string, unknown>
          foreignKeys: Record<string, unknown>
          compositePrimaryKeys: Record<string, unknown>
          uniqueConstraints: Record<string, unknown>
        }
      >
    }
    const columns = new Set(
      (await rows(`select table_name || '.' || column_name as c from information_schema.columns where table_schema = 'public'`)).map((r) => r.c),
    )
    const relations = new Set(
      (await rows(`select relname from pg_class c join pg_namespace n on n.oid = c.relnamespace where n.nspname = 'public'`)).map((r) => r.relname),
    )
    const constraints = new Set(
      (await rows(`select conname from pg_constraint c join pg_namespace n on n.oid = c.connamespace where n.nspname = 'public'`)).map((r) => r.conname),
    )
    const missing: string[] = []
    for (const t of Object.values(snap.tables)) {
      if (!relations.has(t.name)) missing.push(`table ${t.name}`)
      for (const [c, col] of Object.entries(t.columns)) {
        if (!columns.has(`${t.name}.${c}`)) missing.push(`column ${t.name}.${c}`)
        if (col.identity && !relations.has(col.identity.name)) missing.push(`sequence ${col.identity.name}`)
      }
      for (const i of Object.keys(t.indexes)) if (!relations.has(i)) missing.push(`index ${i}`)
      for (const k of [...Object.keys(t.foreignKeys), ...Object.keys(t.compositePrimaryKeys), ...Object.keys(t.uniqueConstraints)])
        if (!constraints.has(k)) missing.push(`constraint ${k}`)
    }
    expect(missing).toEqual([])
    // And nothing in the database is named after templates any more.
    expect([...relations, ...constraints, ...columns].filter((n) => n.includes('template'))).toEqual([])
  })
})
