// The migration that keeps the VAT terms on each quote, order and payment: rows made before it take their workshop's settings as
// they stand (the only terms on record), and each payment the VAT of its own amount, as its receipt stated it. Figures worked by
// hand at 20 % (the UK standard rate as HMRC publishes it): amount / 6, to the penny, halves away from zero.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import pg from 'pg'
import { databaseBefore, type BeforeMigration } from '../setup/migrations'

const TARGET = '0022_frozen-vat'
let m: BeforeMigration
let db: pg.Client
const rows = async (sql: string) => (await db.query(sql)).rows

beforeAll(async () => {
  m = await databaseBefore(TARGET)
  db = m.db
  // Workshop 1 is registered at 20 %; workshop 2 is not (its rate left at the default).
  await db.query(`insert into workshops (id, name, week_pattern, vat_registered, vat_number, vat_rate_basis_points) overriding system value values
    (1, 'Registered', '[]'::jsonb, true, 'GB 123 4567 89', 2000),
    (2, 'Not registered', '[]'::jsonb, false, '', 2000)`)
  await db.query(`insert into customers (id, workshop_id, reference, name) overriding system value values (1, 1, 'C-1', 'Cora'), (2, 2, 'C-2', 'Dan')`)
  await db.query(`insert into orders (id, workshop_id, number, customer_id, title, due_date) overriding system value values
    (1, 1, 'O-1', 1, 'Ring', '2030-01-01'), (2, 2, 'O-2', 2, 'Chain', '2030-01-01')`)
  await db.query(`insert into quotes (id, workshop_id, number, customer_id, title, currency, price_minor, deposit_minor, valid_until) overriding system value values
    (1, 1, 'Q-1', 1, 'Ring', 'GBP', 9999, 3000, '2030-01-01'), (2, 2, 'Q-2', 2, 'Chain', 'GBP', 5000, 1500, '2030-01-01')`)
  await db.query(`insert into payments (id, workshop_id, order_id, method, purpose, amount_minor, currency, received_at) overriding system value values
    (1, 1, 1, 'cash', 'balance', 9999, 'GBP', now()),
    (2, 1, 1, 'cash', 'refund', -9999, 'GBP', now()),
    (3, 1, 1, 'cash', 'other', 3, 'GBP', now()),
    (4, 1, 1, 'cash', 'other', 2, 'GBP', now()),
    (5, 1, 1, 'bank-transfer', 'balance', 1000000000, 'GBP', now()),
    (6, 2, 2, 'cash', 'deposit', 5000, 'GBP', now())`)
  await m.runTarget()
})
afterAll(async () => {
  await m?.close()
})

describe('the VAT terms kept on rows made before', () => {
  it('when a workshop is registered at 20 %, then its quotes and orders keep 20 % and its number; the other workshop’s keep no VAT', async () => {
    const terms = 'vat_registered, vat_number, vat_rate_basis_points'
    const registered = { vat_registered: true, vat_number: 'GB 123 4567 89', vat_rate_basis_points: 2000 }
    const not = { vat_registered: false, vat_number: '', vat_rate_basis_points: 2000 }
    expect(await rows(`select id, ${terms} from orders order by id`)).toEqual([
      { id: 1, ...registered },
      { id: 2, ...not },
    ])
    expect(await rows(`select id, ${terms} from quotes order by id`)).toEqual([
      { id: 1, ...registered },
      { id: 2, ...not },
    ])
  })

  it('when payments were taken at 20 %, then each keeps the VAT of its own amount, halves away from zero, a refund negative', async () => {
    expect(await rows(`select id, vat_registered, vat_minor from payments order by id`)).toEqual([
      { id: 1, vat_registered: true, vat_minor: 1667 }, // 99.99 / 6 = 16.665 → 16.67
      { id: 2, vat_registered: true, vat_minor: -1667 }, // the refund mirrors it
      { id: 3, vat_registered: true, vat_minor: 1 }, // 0.03 / 6 = 0.005 → 0.01
      { id: 4, vat_registered: true, vat_minor: 0 }, // 0.02 / 6 = 0.0033… → 0
      { id: 5, vat_registered: true, vat_minor: 166666667 }, // 10,000,000.00 / 6 = 1,666,666.666… → 1,666,666.67
      { id: 6, vat_registered: false, vat_minor: 0 }, // not registered: none
    ])
  })

  it('when a row is written after, then it must say its terms: the columns take no default', async () => {
    await expect(
      db.query(`insert into payments (workshop_id, method, purpose, amount_minor, currency, received_at) values (1, 'cash', 'other', 100, 'GBP', now())`),
    ).rejects.toThrow(/null value in column "vat_/)
  })
})
