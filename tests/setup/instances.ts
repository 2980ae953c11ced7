// Several app instances as separate processes (server/index.ts each) over one private test database, each on its own
// loopback port; optionally the sticky reverse proxy of `npm run start:cluster` in front of them.
import { spawn, type ChildProcess } from 'node:child_process'
import { join, resolve } from 'node:path'
import { createTestDb, type TestDb } from './db'
import { startProxy, type ClusterProxy } from '../../scripts/cluster-proxy'

const root = resolve(new URL('../..', import.meta.url).pathname)

export interface Instance {
  /** 'a', 'b', 'c', … in start order. */
  readonly name: string
  readonly port: number
  /** http://127.0.0.1:<port> */
  readonly url: string
  readonly pid: number
  /** Everything the process printed (stdout and stderr), for failure messages. */
  readonly output: string[]
  /** True until the process exited. */
  readonly alive: boolean
  /** Resolves with the exit code (null when ended by a signal) once the process is gone. */
  readonly exited: Promise<number | null>
  /** Sends a signal ('SIGKILL' to crash it, 'SIGTERM' for a clean stop) and waits until the process is gone. */
  kill(signal?: NodeJS.Signals): Promise<void>
}

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

function spawnInstance(name: string, dbUrl: string, env: Record<string, string>, timeoutMs: number): Promise<Instance> {
  const child: ChildProcess = spawn(process.execPath, ['--import', 'tsx', join(root, 'server/index.ts')], {
    cwd: root,
    env: {
      ...process.env,
      DATABASE_URL: dbUrl, PORT: '0', HOST: '127.0.0.1', SESSION_SECRET, NODE_ENV: 'test', LOGIN_ATTEMPTS_PER_15_MIN: '1000',
      MILLGRAIN_INSTANCE: name,
      ...env,
    },
    stdio: ['ignore', 'pipe', 'pipe'],
  })
  const output: string[] = []
  let alive = true
  const exited = new Promise<number | null>((res) => child.once('exit', (code) => { alive = false; res(code) }))
  return new Promise<Instance>((res, rej) => {
    const timer = setTimeout(() => { child.kill('SIGKILL'); rej(new Error(`instance ${name} did not start within ${timeoutMs} ms:\n${output.join('')}`)) }, timeoutMs)
    const onData = (chunk: Buffer) => {
      const text = chunk.toString()
      output.push(text)
      if (output.length > 500) output.splice(0, output.length - 500)
      const m = /Millgrain listening on http:\/\/127\.0\.0\.1:(\d+)/.exec(text)
      if (!m) return
      clearTimeout(timer)
      const port = Number(m[1])
      res({
        name, port, url: `http://127.0.0.1:${port}`, pid: child.pid!, output, exited,
        get alive() { return alive },
        async kill(signal: NodeJS.Signals = 'SIGTERM') {
          if (!alive) return
          child.kill(signal)
          const t = signal === 'SIGKILL' ? null : setTimeout(() => child.kill('SIGKILL'), 8000)
          await exited
          if (t) clearTimeout(t)
        },
      })
    }
    child.stdout!.on('data', onData)
    child.stderr!.on('data', (c: Buffer) => output.push(c.toString()))
    void exited.then((code) => { clearTimeout(timer); rej(new Error(`instance ${name} exited (${code}) before listening:\n${output.join('')}`)) })
  })
}

/** Starts `n` instances (in parallel) over one fresh copy of the test database. */
export async function startInstances(n: number, o: StartOptions = {}): Promise<Instances> {
  const database = await createTestDb()
  const instances: Instance[] = []
  let proxy: ClusterProxy | null = null
  const timeout = o.startTimeoutMs ?? 60_000
  const names = 'abcdefghijklmnopqrstuvwxyz'
  let started = 0
  const add = async (env: Record<string, string> = {}) => {
    const inst = await spawnInstance(names[started++ % 26]!, database.url, { ...o.env, ...env }, timeout)
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
    const first = await Promise.all(Array.from({ length: n }, () => spawnInstance(names[started++ % 26]!, database.url, o.env ?? {}, timeout)))
    instances.push(...first)
    if (o.proxy) proxy = await startProxy({ port: 0, targets: instances.map((i) => i.url) })
  } catch (err) {
    await stop()
    throw err
  }
  return { database, instances, get proxyUrl() { return proxy?.url ?? null }, add, stop }
}
