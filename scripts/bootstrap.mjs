// First step of `npm start` / `npm test`: makes sure dependencies and PostgreSQL's server binaries are on this machine.
// Plain JavaScript on purpose: it runs before node_modules (and so tsx) exists.
import { createHash } from 'node:crypto'
import { existsSync, readFileSync, writeFileSync, readdirSync } from 'node:fs'
import { execSync } from 'node:child_process'
import { join } from 'node:path'

const root = new URL('..', import.meta.url).pathname
const run = (cmd) => execSync(cmd, { stdio: 'inherit', cwd: root })

// 1. Dependencies: reinstall when node_modules is missing or older than the lockfile.
const lock = readFileSync(join(root, 'package-lock.json'))
const want = createHash('sha256').update(lock).digest('hex')
const stamp = join(root, 'node_modules', '.millgrain-lock-sha256')
const have = existsSync(stamp) ? readFileSync(stamp, 'utf8').trim() : ''
if (have !== want || !existsSync(join(root, 'node_modules', '.bin', 'tsx'))) {
  console.log('[setup] installing dependencies (npm ci)…')
  run('npm ci --no-audit --no-fund')
  writeFileSync(stamp, want)
}

// 2. PostgreSQL server binaries from Debian's packages.
function pgBinDir() {
  const base = '/usr/lib/postgresql'
  if (!existsSync(base)) return null
  const versions = readdirSync(base)
    .filter((v) => existsSync(join(base, v, 'bin', 'initdb')))
    .sort((a, b) => Number(b) - Number(a))
  return versions.length ? join(base, versions[0], 'bin') : null
}
if (!process.env.PG_BIN && !pgBinDir()) {
  console.log('[setup] PostgreSQL server binaries not found: installing Debian package "postgresql"…')
  const sudo = process.getuid && process.getuid() === 0 ? '' : 'sudo '
  run(`${sudo}apt-get update`)
  run(`${sudo}env DEBIAN_FRONTEND=noninteractive apt-get install -y postgresql`)
  if (!pgBinDir()) {
    console.error('[setup] PostgreSQL is still missing after the install; set PG_BIN to its bin directory.')
    process.exit(1)
  }
}

// 3. Chromium for the browser tests (only when asked: npm test).
if (process.argv.includes('--browser') && !existsSync(process.env.CHROMIUM_PATH || '/usr/bin/chromium')) {
  console.log('[setup] installing Debian package "chromium" for the browser tests…')
  const sudo = process.getuid && process.getuid() === 0 ? '' : 'sudo '
  try {
    run(`${sudo}env DEBIAN_FRONTEND=noninteractive apt-get install -y chromium`)
  } catch {
    run(`${sudo}apt-get update`)
    run(`${sudo}env DEBIAN_FRONTEND=noninteractive apt-get install -y chromium`)
  }
}
