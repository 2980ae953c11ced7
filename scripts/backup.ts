// Backup and restore of a Millgrain database with pg_dump / pg_restore (custom format, one file).
import { spawnSync } from 'node:child_process'
import { existsSync, mkdirSync, statSync } from 'node:fs'
import { join } from 'node:path'
import { pgBin } from './pg'

export function backupDatabase(o: { port: number; database: string; file: string }) {
  mkdirSync(join(o.file, '..'), { recursive: true })
  const r = spawnSync(join(pgBin(), 'pg_dump'), ['-h', '127.0.0.1', '-p', String(o.port), '-U', 'postgres', '-Fc', '--no-owner', '-f', o.file, o.database], {
    encoding: 'utf8',
  })
  if (r.status !== 0) throw new Error(`pg_dump failed: ${r.stderr}`)
  return { file: o.file, bytes: statSync(o.file).size }
}

/** Restores into `database`, which must be empty (a fresh cluster, or a new database). */
export function restoreDatabase(o: { port: number; database: string; file: string }) {
  if (!existsSync(o.file)) throw new Error(`no such backup file: ${o.file}`)
  const tables = spawnSync(
    join(pgBin(), 'psql'),
    ['-h', '127.0.0.1', '-p', String(o.port), '-U', 'postgres', '-tAc', "select count(*) from pg_tables where schemaname in ('public','drizzle')", o.database],
    { encoding: 'utf8' },
  )
  if (tables.status === 0 && Number(tables.stdout.trim()) > 0)
    throw new Error(`database ${o.database} is not empty; restore goes into an empty database (stop the app, move .data/pg away or use PG_DATABASE=<new name>)`)
  const r = spawnSync(
    join(pgBin(), 'pg_restore'),
    ['-h', '127.0.0.1', '-p', String(o.port), '-U', 'postgres', '--no-owner', '--exit-on-error', '-d', o.database, o.file],
    { encoding: 'utf8' },
  )
  if (r.status !== 0) throw new Error(`pg_restore failed: ${r.stderr}`)
}
