// One app instance as its own process (`node --import tsx server/index.ts`), started on a loopback port and followed
// until it says where it listens; used by `npm run start:cluster`, `benchmark:instances` and tests/setup/instances.ts.
import { spawn, type ChildProcess } from 'node:child_process'
import { join } from 'node:path'
import { root } from './env'

export interface InstanceProcess {
  /** 'a', 'b', 'c', … */
  readonly name: string
  readonly port: number
  /** http://127.0.0.1:<port> */
  readonly url: string
  readonly pid: number
  /** The last lines the process printed (stdout and stderr), for failure messages. */
  readonly output: string[]
  /** True until the process exited. */
  readonly alive: boolean
  /** Resolves with the exit code (null when ended by a signal) once the process is gone. */
  readonly exited: Promise<number | null>
  /** Sends a signal ('SIGKILL' to crash it, 'SIGTERM' for a clean stop, SIGKILL after 8 s) and waits until it is gone. */
  kill(signal?: NodeJS.Signals): Promise<void>
}

export const instanceName = (i: number) => 'abcdefghijklmnopqrstuvwxyz'[i % 26]!

/** Starts one instance with `env` on top of this process's environment (DATABASE_URL, SESSION_SECRET, … are the caller's). */
export function spawnInstance(name: string, env: Record<string, string>, o: { timeoutMs?: number; echo?: boolean } = {}): Promise<InstanceProcess> {
  const timeoutMs = o.timeoutMs ?? 60_000
  const child: ChildProcess = spawn(process.execPath, ['--import', 'tsx', join(root, 'server/index.ts')], {
    cwd: root,
    env: { ...process.env, PORT: '0', HOST: '127.0.0.1', MILLGRAIN_INSTANCE: name, ...env },
    stdio: ['ignore', 'pipe', 'pipe'],
  })
  const output: string[] = []
  let alive = true
  const exited = new Promise<number | null>((res) =>
    child.once('exit', (code) => {
      alive = false
      res(code)
    }),
  )
  const keep = (text: string) => {
    output.push(text)
    if (output.length > 500) output.splice(0, output.length - 500)
    if (o.echo) for (const line of text.split('\n')) if (line.trim()) console.log(`[${name}] ${line}`)
  }
  return new Promise<InstanceProcess>((res, rej) => {
    const timer = setTimeout(() => {
      child.kill('SIGKILL')
      rej(new Error(`instance ${name} did not start within ${timeoutMs} ms:\n${output.join('')}`))
    }, timeoutMs)
    let started = false
    child.stdout!.on('data', (chunk: Buffer) => {
      const text = chunk.toString()
      keep(text)
      const m = /Millgrain listening on https?:\/\/[^:]+:(\d+)/.exec(text)
      if (!m || started) return
      started = true
      clearTimeout(timer)
      const port = Number(m[1])
      res({
        name,
        port,
        url: `http://127.0.0.1:${port}`,
        pid: child.pid!,
        output,
        exited,
        get alive() {
          return alive
        },
        async kill(signal: NodeJS.Signals = 'SIGTERM') {
          if (!alive) return
          child.kill(signal)
          const t = signal === 'SIGKILL' ? null : setTimeout(() => child.kill('SIGKILL'), 8000)
          await exited
          if (t) clearTimeout(t)
        },
      })
    })
    child.stderr!.on('data', (c: Buffer) => keep(c.toString()))
    void exited.then((code) => {
      if (started) return
      clearTimeout(timer)
      rej(new Error(`instance ${name} exited (${code}) before listening:\n${output.join('')}`))
    })
  })
}
