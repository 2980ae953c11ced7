// The migration that renames stored values from "template" to "routing" (estimate sources, the routings' audit entity, the routing
// key in quote details), run on a database holding rows written with the old values: they read back with the new ones.
import { eq, getTableColumns } from 'drizzle-orm'
import { drizzle } from 'drizzle-orm/node-postgres'
import pg from 'pg'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { databaseBefore, type BeforeMigration } from '../setup/migrations'
import * as s from '../../server/db/schema/index'
import { quoteOrderInput } from '../../server/services/quote-order'

// Raw SQL for the writes on purpose: the rows hold the values as they were stored before the migration under test, which the
// schema's types no longer allow.
const TARGET = '0015_routing-stored-values'
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
  await db.query(`insert into operation_kinds (id, workshop_id, code, name) overriding system value values (1, 1, 'setting', 'Setting')`)
  await db.query(`insert into customers (id, workshop_id, reference, name) overriding system value values (1, 1, 'C-1', 'Customer')`)
  await db.query(
    `insert into orders (id, workshop_id, number, customer_id, title, due_date) overriding system value values (1, 1, 'O-1', 1, 'x', '2030-01-01')`,
  )
  await db.query(`insert into routings (id, workshop_id, code, name) overriding system value values (7, 1, 'signet', 'Signet ring')`)
  await db.query(`insert into job_bags (id, workshop_id, order_id, number, piece, routing_id, params) overriding system value values
    (1, 1, 1, 'B-1', 'Ring', 7, '{}'::jsonb)`)
  // Three steps: two planned from the routing (one of them changed by hand since, which recorded its old source), one a manager's figure.
  await db.query(`insert into operations (id, job_bag_id, seq, key, kind_id, name, estimate_minutes, estimate_source) overriding system value values
    (1, 1, 0, 'set', 1, 'Set', 40, 'template'), (2, 1, 1, 'polish', 1, 'Polish', 25, 'override'), (3, 1, 2, 'check', 1, 'Check', 10, 'learned')`)
  await db.query(`insert into estimate_changes (workshop_id, operation_id, from_minutes, to_minutes, from_source, reason, changed_by) values
    (1, 2, 30, 25, 'template', 'Lighter piece', 1), (1, 2, 25, 25, 'override', 'Checked again', 1)`)
  // The routing's history under its old audit entity, beside a job bag's row that must stay as it is.
  await db.query(`insert into audit_log (id, workshop_id, user_id, at, action, entity, entity_id, details) overriding system value values
    (1, 1, 1, '2030-01-01T09:00Z', 'create', 'routing-template', 7, '{"code": "signet"}'::jsonb),
    (2, 1, 1, '2030-01-02T09:00Z', 'update', 'routing-template', 7, '{"code": "signet", "steps": 3}'::jsonb),
    (3, 1, 1, '2030-01-03T09:00Z', 'create', 'job-bag', 1, '{}'::jsonb),
    (4, 1, 1, '2030-01-04T09:00Z', 'update', 'quote', 1, '{"details": {"templateId": 7, "piece": "Signet"}, "title": "Signet"}'::jsonb),
    (5, 1, 1, '2030-01-05T09:00Z', 'update', 'quote', 2, '{"title": "Chain"}'::jsonb)`)
  // One quote naming its routing under the old key, one naming none.
  await db.query(`insert into quotes (id, workshop_id, number, customer_id, title, details, currency, price_minor, deposit_minor, valid_until)
    overriding system value values
    (1, 1, 'Q-1', 1, 'Signet', '{"templateId": 7, "piece": "Signet", "params": {"quantity": 2}, "priority": 2}'::jsonb, 'GBP', 50000, 10000, '2030-02-01'),
    (2, 1, 'Q-2', 1, 'Chain', '{"piece": "Chain"}'::jsonb, 'GBP', 8000, 0, '2030-02-01')`)
  await m.runTarget()
})
afterAll(async () => {
  await m?.close()
})

describe('stored values say routing', () => {
  it('when steps were planned from a routing, then their estimate source reads routing and the other sources are left alone', async () => {
    expect(await rows(`select id, estimate_source from operations order by id`)).toEqual([
      { id: 1, estimate_source: 'routing' },
      { id: 2, estimate_source: 'override' },
      { id: 3, estimate_source: 'learned' },
    ])
    expect(await rows(`select from_source, reason from estimate_changes order by id`)).toEqual([
      { from_source: 'routing', reason: 'Lighter piece' },
      { from_source: 'override', reason: 'Checked again' },
    ])
  })

  it('when a step is added without naming its source, then it is a routing figure', async () => {
    await db.query(
      `insert into operations (id, job_bag_id, seq, key, kind_id, name, estimate_minutes) overriding system value values (4, 1, 3, 'pack', 1, 'Pack', 5)`,
    )
    expect(await rows(`select estimate_source from operations where key = 'pack'`)).toEqual([{ estimate_source: 'routing' }])
  })

  it('when a routing’s history is looked up under the entity routing, then its old rows are found and other entities keep theirs', async () => {
    // Read as the app reads audit rows (Drizzle on the schema), by entity and id.
    const orm = drizzle(db, { schema: s, casing: 'snake_case' })
    const history = await orm.select().from(s.auditLog).where(eq(s.auditLog.entity, 'routing')).orderBy(s.auditLog.at)
    expect(history.map((r) => [r.id, r.action, r.entityId, r.details])).toEqual([
      [1, 'create', 7, { code: 'signet' }],
      [2, 'update', 7, { code: 'signet', steps: 3 }],
    ])
    expect(await rows(`select count(*)::int as n from audit_log where entity = 'routing-template'`)).toEqual([{ n: 0 }])
    expect(await rows(`select id, entity from audit_log where id >= 3 order by id`)).toEqual([
      { id: 3, entity: 'job-bag' },
      { id: 4, entity: 'quote' },
      { id: 5, entity: 'quote' },
    ])
  })

  it('when a quote’s details named its routing templateId, then they name it routingId with the rest unchanged, and accepting it orders that routing', async () => {
    expect(await rows(`select id, details from quotes order by id`)).toEqual([
      { id: 1, details: { routingId: 7, piece: 'Signet', params: { quantity: 2 }, priority: 2 } },
      { id: 2, details: { piece: 'Chain' } },
    ])
    // An audited quote edit that carried the details says the same; one without details is left as it was.
    expect(await rows(`select id, details from audit_log where entity = 'quote' order by id`)).toEqual([
      { id: 4, details: { details: { routingId: 7, piece: 'Signet' }, title: 'Signet' } },
      { id: 5, details: { title: 'Chain' } },
    ])
    // The order an accepted quote becomes: one piece from routing 7 with the quoted quantity, none from the quote without a routing.
    // This database stands at the migration under test, before quotes kept their VAT terms (0022): read the columns it has, and
    // give the quote no VAT, which plays no part here.
    const orm = drizzle(db, { schema: s, casing: 'snake_case' })
    const { vatRegistered: _r, vatNumber: _n, vatRateBasisPoints: _b, ...before0022 } = getTableColumns(s.quotes)
    const noVat = { vatRegistered: false, vatNumber: '', vatRateBasisPoints: 0 }
    const [q1] = (await orm.select(before0022).from(s.quotes).where(eq(s.quotes.id, 1))).map((q) => ({ ...q, ...noVat }))
    const [q2] = (await orm.select(before0022).from(s.quotes).where(eq(s.quotes.id, 2))).map((q) => ({ ...q, ...noVat }))
    expect(quoteOrderInput(q1!).pieces).toEqual([expect.objectContaining({ routingId: 7, piece: 'Signet', params: expect.objectContaining({ quantity: 2 }) })])
    expect(quoteOrderInput(q2!).pieces).toEqual([])
  })
})
