// Several app instances as separate processes (server/index.ts each) over one private test database, each on its own
// loopback port; optionally the sticky reverse proxy of `npm run start:cluster` in front of them.
import { createTestDb, type TestDb } from './db'
import { startProxy, type ClusterProxy } from '../../scripts/cluster-proxy'
import { instanceName, spawnInstance, type InstanceProcess } from '../../scripts/instance-process'

/** One app process: name ('a', 'b', …), port, url, pid, output, alive, exited, kill(signal). */
export type Instance = InstanceProcess

export interface Instances {
  /** The shared database (a private copy of the test template); `db`/`pool` are the test's own connections to it. */
  readonly database: TestDb
  readonly instances: Instance[]
  /** The proxy's address when started with `proxy: true`, else null. */
  readonly proxyUrl: string | null
  /** Starts one more instance over the same database (e.g. after killing one). */
  add(env?: Record<string, string>): Promise<Instance>
  /** Stops the proxy, every instance still running (SIGTERM, then SIGKILL after 8 s) and drops the database. */
  stop(): Promise<void>
}

export interface StartOptions {
  /** Extra environment for every instance (e.g. SOCKET_SESSION_SWEEP_MS). */
  env?: Record<string, string>
  /** Also start the sticky reverse proxy on a free loopback port. */
  proxy?: boolean
  /** How long one instance may take to start (default 60 s; the machine is shared). */
  startTimeoutMs?: number
  /** Runs on the fresh database before any instance starts (e.g. publish a first plan). */
  prepare?: (database: TestDb) => Promise<void>
}

const SESSION_SECRET = 'test-secret-test-secret'

function spawnFor(name: string, dbUrl: string, env: Record<string, string>, timeoutMs: number): Promise<Instance> {
  return spawnInstance(name, { DATABASE_URL: dbUrl, SESSION_SECRET, NODE_ENV: 'test', LOGIN_ATTEMPTS_PER_15_MIN: '1000', ...env }, { timeoutMs })
}

/** Starts `n` instances (in parallel) over one fresh copy of the test database. */
export async function startInstances(n: number, o: StartOptions = {}): Promise<Instances> {
  const database = await createTestDb()
  const instances: Instance[] = []
  let proxy: ClusterProxy | null = null
  const timeout = o.startTimeoutMs ?? 60_000
  let started = 0
  const add = async (env: Record<string, string> = {}) => {
    const inst = await spawnFor(instanceName(started++), database.url, { ...o.env, ...env }, timeout)
    instances.push(inst)
    proxy?.setTargets(instances.filter((i) => i.alive).map((i) => i.url))
    return inst
  }
  const stop = async () => {
    await proxy?.close()
    await Promise.all(instances.map((i) => i.kill('SIGTERM')))
    await database.drop().catch(() => {})
  }
  try {
    await o.prepare?.(database)
    const first = await Promise.all(Array.from({ length: n }, () => spawnFor(instanceName(started++), database.url, o.env ?? {}, timeout)))
    instances.push(...first)
    if (o.proxy) proxy = await startProxy({ port: 0, targets: instances.map((i) => i.url) })
  } catch (err) {
    await stop()
    throw err
  }
  return {
    database,
    instances,
    get proxyUrl() {
      return proxy?.url ?? null
    },
    add,
    stop,
  }
}
