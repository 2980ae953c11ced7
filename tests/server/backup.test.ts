// Backup and restore: a pg_dump of the demo data comes back into an empty cluster with the same rows.
import { spawnSync } from 'node:child_process'
import { randomBytes } from 'node:crypto'
import { rmSync } from 'node:fs'
import { join, resolve } from 'node:path'
import pg from 'pg'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { backupDatabase } from '../../scripts/backup'
import { startCluster, stopCluster } from '../../scripts/pg'
import { createTestDb, type TestDb } from '../setup/db'

const root = resolve(import.meta.dirname, '../..')
const KEY_TABLES = [
  'workshops',
  'users',
  'benches',
  'people',
  'person_skills',
  'routings',
  'routing_steps',
  'customers',
  'orders',
  'job_bags',
  'operations',
  'time_records',
]

async function fingerprint(url: string) {
  const c = new pg.Client({ connectionString: url })
  await c.connect()
  const out: Record<string, { rows: number; md5: string | null }> = {}
  // Raw SQL on purpose: a whole-row fingerprint of each table (md5 over its text form), compared before the dump and after the restore.
  for (const t of KEY_TABLES) {
    const order = t === 'person_skills' ? 'person_id, kind_id' : 'id'
    const r = await c.query(`select count(*)::int as n, md5(string_agg(x::text, '|' order by ${order})) as h from ${t} x`)
    out[t] = { rows: r.rows[0].n, md5: r.rows[0].h }
  }
  await c.end()
  return out
}

let src: TestDb
const dataDir = join(root, '.data', `restore-${randomBytes(4).toString('hex')}`)
const port = 55000 + Math.floor(Math.random() * 900)
beforeAll(async () => {
  src = await createTestDb()
})
afterAll(async () => {
  stopCluster(join(dataDir, 'pg'))
  rmSync(dataDir, { recursive: true, force: true })
  await src.drop()
})

describe('backup and restore', () => {
  it('when the demo data is backed up and restored into an empty cluster, then row counts and checksums match', async () => {
    const file = join(dataDir, 'demo.dump')
    const { bytes } = backupDatabase({ port: Number(process.env.TEST_PG_PORT), database: new URL(src.url).pathname.slice(1), file })
    expect(bytes).toBeGreaterThan(10_000)
    // The real command, on a cluster that does not exist yet.
    const r = spawnSync(join(root, 'node_modules/.bin/tsx'), ['scripts/db-restore.ts', file], {
      cwd: root,
      encoding: 'utf8',
      env: { ...process.env, MILLGRAIN_DATA_DIR: dataDir, PG_PORT: String(port) },
    })
    expect(r.status, r.stderr + r.stdout).toBe(0)
    expect(r.stdout).toMatch(/restored/)
    await startCluster({ dataDir: join(dataDir, 'pg'), port, durable: true })
    const restored = await fingerprint(`postgres://postgres@127.0.0.1:${port}/millgrain`)
    const original = await fingerprint(src.url)
    expect(restored.orders!.rows).toBeGreaterThan(30)
    expect(restored.time_records!.rows).toBeGreaterThan(250)
    expect(restored).toEqual(original)
    stopCluster(join(dataDir, 'pg'))
    // Restoring over data is refused rather than mixing two workshops' rows.
    const again = spawnSync(join(root, 'node_modules/.bin/tsx'), ['scripts/db-restore.ts', file], {
      cwd: root,
      encoding: 'utf8',
      env: { ...process.env, MILLGRAIN_DATA_DIR: dataDir, PG_PORT: String(port) },
    })
    expect(again.status).not.toBe(0)
    expect(again.stderr).toMatch(/not empty/)
  })
})
