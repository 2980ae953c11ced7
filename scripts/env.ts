// Where the private clusters live and which ports they use (overridable by environment).
import { randomBytes } from 'node:crypto'
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs'
import { join, resolve } from 'node:path'

export const root = resolve(new URL('..', import.meta.url).pathname)
export const dataRoot = resolve(process.env.MILLGRAIN_DATA_DIR ?? join(root, '.data'))

export const app = {
  pgDir: join(dataRoot, 'pg'),
  pgPort: Number(process.env.PG_PORT ?? 54329),
  dbName: process.env.PG_DATABASE ?? 'millgrain',
  port: Number(process.env.PORT ?? 8080),
}
export const test = {
  pgDir: resolve(process.env.TEST_PG_DIR ?? join(dataRoot, 'pg-test')),
  pgPort: Number(process.env.TEST_PG_PORT ?? 54339),
  dbName: 'millgrain_template',
}

/** A session secret kept with the data, so sessions survive restarts. */
export function sessionSecret(): string {
  if (process.env.SESSION_SECRET) return process.env.SESSION_SECRET
  const file = join(dataRoot, 'session-secret')
  if (!existsSync(file)) {
    mkdirSync(dataRoot, { recursive: true })
    writeFileSync(file, randomBytes(32).toString('hex'), { mode: 0o600 })
  }
  return readFileSync(file, 'utf8').trim()
}
