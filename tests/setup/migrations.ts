// A database of its own, migrated up to just before one migration: a migration test writes rows as they were stored then, runs that
// migration on them and reads them back. Raw SQL by nature: the rows are in shapes the current schema no longer has.
import { readFileSync } from 'node:fs'
import { join } from 'node:path'
import { randomBytes } from 'node:crypto'
import pg from 'pg'
import { migrationsFolder } from '../../server/db/migrate'

export interface BeforeMigration {
  /** Connected to the database, which holds every migration before the one under test. */
  db: pg.Client
  /** Runs the migration under test. */
  runTarget(): Promise<void>
  /** Closes the connection and drops the database. */
  close(): Promise<void>
}

const journal = () => JSON.parse(readFileSync(join(migrationsFolder, 'meta/_journal.json'), 'utf8')) as { entries: { idx: number; tag: string }[] }

export async function databaseBefore(tag: string): Promise<BeforeMigration> {
  const entries = journal().entries
  const target = entries.find((e) => e.tag === tag)
  if (!target) throw new Error(`no migration ${tag} in the journal`)
  const port = process.env.TEST_PG_PORT
  const name = `m_${randomBytes(6).toString('hex')}`
  const admin = async (sql: string) => {
    const a = new pg.Client({ connectionString: `postgres://postgres@127.0.0.1:${port}/postgres` })
    await a.connect()
    try {
      await a.query(sql)
    } finally {
      await a.end()
    }
  }
  await admin(`create database ${name}`)
  const db = new pg.Client({ connectionString: `postgres://postgres@127.0.0.1:${port}/${name}` })
  await db.connect()
  const apply = async (t: string) => {
    for (const stmt of readFileSync(join(migrationsFolder, `${t}.sql`), 'utf8').split('--> statement-breakpoint')) if (stmt.trim()) await db.query(stmt)
  }
  for (const e of entries.filter((x) => x.idx < target.idx)) await apply(e.tag)
  return {
    db,
    runTarget: () => apply(tag),
    close: async () => {
      await db.end()
      await admin(`drop database if exists ${name} with (force)`)
    },
  }
}
