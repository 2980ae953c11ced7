// A private database per test file, copied from the migrated + seeded template that `npm test` prepares.
import { randomBytes } from 'node:crypto'
import pg from 'pg'
import { createDb, type Db } from '../../server/db/client'

export interface TestDb {
  url: string
  db: Db
  pool: pg.Pool
  drop(): Promise<void>
}

function env() {
  const port = process.env.TEST_PG_PORT
  const template = process.env.TEST_DATABASE_TEMPLATE
  if (!port || !template) throw new Error('Database tests run through `npm test` (it starts PostgreSQL and prepares the template database).')
  return { port, template }
}

// Raw SQL on purpose: creating and dropping databases from the template is PostgreSQL administration, not a table write.
async function admin<T>(fn: (c: pg.Client) => Promise<T>): Promise<T> {
  const { port } = env()
  const c = new pg.Client({ connectionString: `postgres://postgres@127.0.0.1:${port}/postgres` })
  await c.connect()
  try {
    return await fn(c)
  } finally {
    await c.end()
  }
}

export async function createTestDb(): Promise<TestDb> {
  const { port, template } = env()
  const name = `t_${randomBytes(6).toString('hex')}`
  for (let attempt = 0; ; attempt++) {
    try {
      await admin((c) => c.query(`create database ${name} template ${template}`))
      break
    } catch (err) {
      // Another file copying the template at the same moment: try again shortly.
      if (attempt > 20 || !String((err as Error).message).includes('being accessed')) throw err
      await new Promise((r) => setTimeout(r, 100 + Math.random() * 200))
    }
  }
  const url = `postgres://postgres@127.0.0.1:${port}/${name}`
  const { db, pool } = createDb(url, 20)
  return {
    url,
    db,
    pool,
    async drop() {
      await pool.end()
      await admin((c) => c.query(`drop database if exists ${name} with (force)`))
    },
  }
}
