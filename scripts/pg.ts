// Private PostgreSQL cluster control: create, start, stop and probe a cluster whose data lives inside the project.
import { execFileSync, spawnSync } from 'node:child_process'
import { existsSync, mkdirSync, readdirSync, readFileSync, rmSync, statSync, chmodSync } from 'node:fs'
import { dirname, join, resolve } from 'node:path'

export interface ClusterOptions {
  /** Data directory (inside the project, git-ignored). */
  dataDir: string
  port: number
  /** Durable clusters keep fsync on; throwaway test clusters trade it for speed. */
  durable: boolean
}

export function pgBin(): string {
  if (process.env.PG_BIN) return process.env.PG_BIN
  const base = '/usr/lib/postgresql'
  const versions = existsSync(base)
    ? readdirSync(base)
        .filter((v) => existsSync(join(base, v, 'bin', 'initdb')))
        .sort((a, b) => Number(b) - Number(a))
    : []
  if (!versions[0]) throw new Error('PostgreSQL server binaries not found (run `node scripts/bootstrap.mjs`)')
  return join(base, versions[0], 'bin')
}

const isRoot = typeof process.getuid === 'function' && process.getuid() === 0

/** Runs a PostgreSQL binary; as root it runs as the `postgres` user, which initdb and postgres require. */
function pg(binary: string, args: string[], opts: { allowFail?: boolean } = {}): { ok: boolean; out: string } {
  const file = join(pgBin(), binary)
  const [cmd, argv] = isRoot ? ['runuser', ['-u', 'postgres', '--', file, ...args]] : [file, args]
  const r = spawnSync(cmd, argv, { cwd: '/', encoding: 'utf8' })
  const out = `${r.stdout ?? ''}${r.stderr ?? ''}`
  if (r.status !== 0 && !opts.allowFail) throw new Error(`${binary} ${args.join(' ')} failed:\n${out}`)
  return { ok: r.status === 0, out }
}

/** Every parent of the data dir must be enterable by the postgres user. */
function ensureTraversable(dir: string) {
  if (!isRoot) return
  let d = dirname(resolve(dir))
  while (d !== '/') {
    const mode = statSync(d).mode
    if ((mode & 0o001) === 0) {
      console.log(`[db] making ${d} enterable (o+x) for the postgres user`)
      chmodSync(d, mode | 0o001)
    }
    d = dirname(d)
  }
}

export function isReady(port: number): boolean {
  return spawnSync(join(pgBin(), 'pg_isready'), ['-q', '-h', '127.0.0.1', '-p', String(port), '-U', 'postgres']).status === 0
}

/** Is `pid` a live (not zombie) postgres process of this data dir? */
function isOurPostmaster(pid: number, dataDir: string): boolean {
  try {
    const state = readFileSync(`/proc/${pid}/stat`, 'utf8').split(') ')[1]?.[0]
    if (state === 'Z' || state === 'X') return false
    const cmdline = readFileSync(`/proc/${pid}/cmdline`, 'utf8').replace(/\0/g, ' ')
    return cmdline.includes('postgres') && cmdline.includes(resolve(dataDir))
  } catch {
    return false
  }
}

/** PID of this data dir's running postmaster, or null (stale lock files left by a crash are removed). */
function runningPostmaster(dataDir: string): number | null {
  const pidFile = join(dataDir, 'postmaster.pid')
  if (!existsSync(pidFile)) return null
  const pid = Number(readFileSync(pidFile, 'utf8').split('\n')[0])
  if (isOurPostmaster(pid, dataDir)) return pid
  console.log('[db] removing stale lock files left by a crash')
  rmSync(pidFile, { force: true })
  // The socket lock names the dead postmaster too; a killed one may linger as a zombie that nobody reaps.
  for (const f of readdirSync(dataDir)) if (/^\.s\.PGSQL\.\d+\.lock$/.test(f)) rmSync(join(dataDir, f), { force: true })
  return null
}

export function portOf(dataDir: string): number | null {
  const pidFile = join(dataDir, 'postmaster.pid')
  if (!existsSync(pidFile)) return null
  return Number(readFileSync(pidFile, 'utf8').split('\n')[3])
}

/** Creates the cluster if needed and starts it; returns once it accepts connections. */
export async function startCluster(o: ClusterOptions): Promise<void> {
  const dataDir = resolve(o.dataDir)
  if (!existsSync(join(dataDir, 'PG_VERSION'))) {
    console.log(`[db] creating a PostgreSQL cluster in ${dataDir}`)
    mkdirSync(dataDir, { recursive: true })
    ensureTraversable(dataDir)
    if (isRoot) execFileSync('chown', ['postgres:postgres', dataDir])
    chmodSync(dataDir, 0o700)
    pg('initdb', ['-D', dataDir, '-U', 'postgres', '-A', 'trust', '-E', 'UTF8', '--locale=C.UTF-8', ...(o.durable ? [] : ['--no-sync'])])
  } else {
    ensureTraversable(dataDir)
  }
  const running = runningPostmaster(dataDir)
  if (running) {
    if (portOf(dataDir) !== o.port) throw new Error(`the cluster in ${dataDir} already runs on port ${portOf(dataDir)}, not ${o.port}`)
    if (isReady(o.port)) return
  } else {
    if (isReady(o.port)) throw new Error(`port ${o.port} is already used by another PostgreSQL server; set another port`)
    // Unix socket paths are limited to 107 bytes; fall back to TCP only for long paths.
    const socketDir = dataDir.length < 90 ? dataDir : "''"
    const settings = [
      `-c listen_addresses=127.0.0.1`,
      `-p ${o.port}`,
      `-k ${socketDir}`,
      ...(o.durable ? ['-c fsync=on', '-c synchronous_commit=on'] : ['-c fsync=off', '-c synchronous_commit=off', '-c full_page_writes=off']),
    ].join(' ')
    // After a crash the old server's processes may take a moment to go (they hold its shared memory): try again a few times.
    for (let attempt = 1; ; attempt++) {
      const r = pg('pg_ctl', ['-D', dataDir, '-l', join(dataDir, 'server.log'), '-w', '-t', '60', '-o', settings, 'start'], { allowFail: true })
      if (r.ok) break
      const log = existsSync(join(dataDir, 'server.log')) ? readFileSync(join(dataDir, 'server.log'), 'utf8').split('\n').slice(-15).join('\n') : ''
      if (attempt < 10 && /shared memory block is still in use|lock file .* already exists/.test(log)) {
        console.log('[db] the previous server is still going away; trying again shortly')
        runningPostmaster(dataDir)
        await new Promise((res) => setTimeout(res, 1000))
        continue
      }
      throw new Error(`PostgreSQL did not start:\n${r.out}\n${log}`)
    }
  }
  for (let i = 0; i < 120 && !isReady(o.port); i++) await new Promise((r) => setTimeout(r, 250))
  if (!isReady(o.port)) throw new Error('PostgreSQL did not become ready in 30 s')
}

export function stopCluster(dataDir: string): void {
  if (!runningPostmaster(resolve(dataDir))) return
  pg('pg_ctl', ['-D', resolve(dataDir), '-m', 'fast', '-w', '-t', '30', 'stop'], { allowFail: true })
}

export function ensureDatabase(port: number, name: string): void {
  const q = spawnSync(
    join(pgBin(), 'psql'),
    ['-h', '127.0.0.1', '-p', String(port), '-U', 'postgres', '-tAc', `select 1 from pg_database where datname='${name}'`],
    { encoding: 'utf8' },
  )
  if (q.stdout.trim() === '1') return
  execFileSync(join(pgBin(), 'createdb'), ['-h', '127.0.0.1', '-p', String(port), '-U', 'postgres', name])
}

export function dropDatabase(port: number, name: string): void {
  spawnSync(join(pgBin(), 'dropdb'), ['-h', '127.0.0.1', '-p', String(port), '-U', 'postgres', '--if-exists', '--force', name])
}

export const databaseUrl = (port: number, name: string) => `postgres://postgres@127.0.0.1:${port}/${name}`
