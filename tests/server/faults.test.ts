// Faults: the app killed mid-write and PostgreSQL killed under load lose nothing acknowledged (orders, time records), and the app answers 503 meanwhile.
import { spawn, type ChildProcess } from 'node:child_process'
import { randomBytes } from 'node:crypto'
import { readFileSync, rmSync } from 'node:fs'
import { join, resolve } from 'node:path'
import pg from 'pg'
import { afterAll, describe, expect, it } from 'vitest'
import { httpSignIn } from '../setup/app'
import { startCluster, stopCluster } from '../../scripts/pg'

const root = resolve(import.meta.dirname, '../..')
const dataDir = join(root, '.data', `fault-${randomBytes(4).toString('hex')}`)
// Below the kernel's ephemeral range (32768–60999 here), where an outgoing connection's own port could already hold it.
const pgPort = 29900 + Math.floor(Math.random() * 90)
const appPort = 30900 + Math.floor(Math.random() * 90)
const base = `http://127.0.0.1:${appPort}`
const env = { ...process.env, MILLGRAIN_DATA_DIR: dataDir, PG_PORT: String(pgPort), PORT: String(appPort), SKIP_BUILD: '1', NODE_ENV: 'production' }

/** `npm start` without the bootstrap (dependencies are there) and without the client build. */
function startApp(): Promise<ChildProcess> {
  const child = spawn(join(root, 'node_modules/.bin/tsx'), ['scripts/start.ts'], { cwd: root, env, detached: true, stdio: ['ignore', 'pipe', 'pipe'] })
  let out = ''
  return new Promise((res, rej) => {
    const t = setTimeout(() => rej(new Error(`app did not start:\n${out}`)), 60_000)
    const onData = (d: Buffer) => {
      out += d.toString()
      if (out.includes('Millgrain is running at')) {
        clearTimeout(t)
        res(child)
      }
    }
    child.stdout!.on('data', onData)
    child.stderr!.on('data', onData)
    child.on('exit', (code) => {
      clearTimeout(t)
      if (code !== null && code !== 0) console.error(`app exited (${code}):\n${out.slice(-4000)}`)
      rej(new Error(`app exited (${code}):\n${out}`))
    })
  })
}
const killGroup = (c: ChildProcess, sig: NodeJS.Signals) => {
  try {
    process.kill(-c.pid!, sig)
  } catch {
    /* gone */
  }
}

/** Ids the writers need: a customer, a routing, and an operation with a person to book time to. */
async function writeTargets(cookie: string) {
  const get = async (path: string) => (await fetch(`${base}/api${path}`, { headers: { cookie } })).json() as Promise<any>
  const customers = await get('/customers')
  const routings = await get('/routings')
  const people = await get('/people')
  const orders = await get('/orders?status=open')
  const order = await get(`/orders/${orders.items[0].id}`)
  return {
    customerId: customers.items[0].id as number,
    routing: routings[0] as { id: number; steps: unknown[] },
    personId: people[0].id as number,
    operationId: order.jobBags[0].operations[0].id as number,
  }
}

/** 20 writers, each alternating an order (with its job bag and operations) and a time record, until stopped. */
function writers(sessions: { cookie: string; csrf: string }[], t: Awaited<ReturnType<typeof writeTargets>>, tag: string) {
  let running = true
  const acked: string[] = []
  const ackedRecords: string[] = []
  const work = sessions.map(async (s, i) => {
    for (let n = 0; running; n++) {
      const title = `${tag}-${i}-${n}`
      const headers = { 'content-type': 'application/json', cookie: s.cookie, 'x-csrf-token': s.csrf }
      try {
        if (n % 2 === 0) {
          const r = await fetch(`${base}/api/orders`, {
            method: 'POST',
            headers,
            signal: AbortSignal.timeout(15_000),
            body: JSON.stringify({ customerId: t.customerId, title, dueDate: '2030-06-01', pieces: [{ routingId: t.routing.id, piece: title }] }),
          })
          if (r.status === 201) acked.push(title)
          else await r.text()
        } else {
          const startedAt = new Date(Date.now() - 3_600_000 - n * 60_000).toISOString()
          const r = await fetch(`${base}/api/operations/${t.operationId}/time-records`, {
            method: 'POST',
            headers,
            signal: AbortSignal.timeout(15_000),
            body: JSON.stringify({ personId: t.personId, startedAt, endedAt: new Date(Date.parse(startedAt) + 30 * 60_000).toISOString(), reason: title }),
          })
          if (r.status === 201) ackedRecords.push(title)
          else await r.text()
        }
      } catch {
        await new Promise((r) => setTimeout(r, 20))
      }
    }
  })
  return {
    acked,
    ackedRecords,
    stop: async () => {
      running = false
      await Promise.all(work)
    },
  }
}

async function dbCheck(tag: string) {
  const c = new pg.Client({ connectionString: `postgres://postgres@127.0.0.1:${pgPort}/millgrain` })
  await c.connect()
  const orders = await c.query(
    `select o.title, (select count(*)::int from job_bags b where b.order_id = o.id) as bags,
    (select count(*)::int from operations op join job_bags b on b.id = op.job_bag_id where b.order_id = o.id) as ops from orders o where o.title like $1`,
    [`${tag}-%`],
  )
  // A time record and its "added by hand" entry are written together or not at all.
  const records = await c.query(
    `select k.reason, count(r.id)::int as records from time_record_corrections k left join time_records r on r.id = k.time_record_id where k.reason like $1 group by k.id, k.reason`,
    [`${tag}-%`],
  )
  await c.end()
  return Object.assign(orders.rows as { title: string; bags: number; ops: number }[], { records: records.rows as { reason: string; records: number }[] })
}

let app: ChildProcess | null = null
afterAll(async () => {
  if (app) killGroup(app, 'SIGKILL')
  stopCluster(join(dataDir, 'pg'))
  rmSync(dataDir, { recursive: true, force: true })
})

// Whole-process tests: each starts the app and PostgreSQL, so they get more time than API tests on a busy machine.
describe('faults', { timeout: 180_000 }, () => {
  it('when the app is killed while 20 clients write, then after a restart every acknowledged write is there once, whole, and sessions survive', async () => {
    app = await startApp()
    const sessions = await Promise.all(Array.from({ length: 20 }, () => httpSignIn(base, 'manager')))
    const targets = await writeTargets(sessions[0]!.cookie)
    const routing = targets.routing
    const w = writers(sessions, targets, 'kill-app')
    await new Promise((r) => setTimeout(r, 2500))
    killGroup(app, 'SIGKILL')
    await w.stop()
    app = await startApp()
    const rows = await dbCheck('kill-app')
    expect(w.acked.length).toBeGreaterThan(10)
    const titles = rows.map((r) => r.title)
    for (const t of w.acked) expect(titles.filter((x) => x === t)).toHaveLength(1)
    // No half-written order: each has its job bag and all its operations (one transaction).
    for (const r of rows) expect(r).toMatchObject({ bags: 1, ops: routing.steps.length })
    expect(w.ackedRecords.length).toBeGreaterThan(5)
    const reasons = rows.records.map((r) => r.reason)
    for (const t of w.ackedRecords) expect(reasons.filter((x) => x === t)).toHaveLength(1)
    for (const r of rows.records) expect(r.records).toBe(1)
    const me = (await (await fetch(`${base}/api/session`, { headers: { cookie: sessions[0]!.cookie } })).json()) as { user: { role: string } | null }
    expect(me.user?.role).toBe('manager')
  })

  it('when PostgreSQL is killed under load, then the app answers 503 with a message, reconnects when it is back, and loses nothing acknowledged', async () => {
    expect(app).not.toBeNull()
    const t0 = Date.now()
    const step = (what: string) => console.error(`[faults] ${((Date.now() - t0) / 1000).toFixed(1)} s ${what}`)
    const sessions = await Promise.all(Array.from({ length: 20 }, () => httpSignIn(base, 'manager')))
    step('signed in')
    const w = writers(sessions, await writeTargets(sessions[0]!.cookie), 'kill-db')
    await new Promise((r) => setTimeout(r, 1500))
    const pid = Number(readFileSync(join(dataDir, 'pg', 'postmaster.pid'), 'utf8').split('\n')[0])
    process.kill(pid, 'SIGKILL')
    step('postmaster killed')
    // Backends notice the postmaster's death within moments; from then on every answer is a 503.
    // (A keep-alive connection the server closes while it notices may reset once: ask again.)
    const ask = async (path: string) => {
      for (let i = 0; i < 5; i++) {
        try {
          return await fetch(`${base}${path}`, { headers: { cookie: sessions[0]!.cookie }, signal: AbortSignal.timeout(15_000) })
        } catch {
          await new Promise((r) => setTimeout(r, 100))
        }
      }
      throw new Error(`no answer from ${path}`)
    }
    let down = await ask('/api/orders')
    for (let i = 0; i < 50 && down.status !== 503; i++) {
      await new Promise((r) => setTimeout(r, 100))
      down = await ask('/api/orders')
    }
    expect(down.status).toBe(503)
    expect(((await down.json()) as { error: string }).error).toMatch(/database is not reachable/)
    expect((await ask('/api/health')).status).toBe(503)
    step('503 seen')
    await w.stop()
    step('writers stopped')
    // Back up (as the start script would on its next start); the running app reconnects by itself.
    await startCluster({ dataDir: join(dataDir, 'pg'), port: pgPort, durable: true })
    step('database back')
    let ok = 0
    for (let i = 0; i < 50 && ok === 0; i++) {
      const r = await fetch(`${base}/api/orders`, { headers: { cookie: sessions[0]!.cookie }, signal: AbortSignal.timeout(15_000) }).catch(() => null)
      if (r?.status === 200) ok++
      else await new Promise((res) => setTimeout(res, 200))
    }
    expect(ok).toBe(1)
    step('app answers again')
    const rows = await dbCheck('kill-db')
    const titles = rows.map((r) => r.title)
    for (const t of w.acked) expect(titles.filter((x) => x === t)).toHaveLength(1)
    for (const r of rows) expect(r.bags).toBe(1)
    const reasons = rows.records.map((r) => r.reason)
    for (const t of w.ackedRecords) expect(reasons.filter((x) => x === t)).toHaveLength(1)
    for (const r of rows.records) expect(r.records).toBe(1)
    // Ctrl-C: app and database stop.
    const exited = new Promise((r) => app!.once('exit', r))
    killGroup(app!, 'SIGINT')
    step('stopping')
    await exited
    step('stopped')
    app = null
    await new Promise((r) => setTimeout(r, 500))
    const c = new pg.Client({ connectionString: `postgres://postgres@127.0.0.1:${pgPort}/millgrain` })
    await expect(c.connect()).rejects.toThrow()
  })
})
