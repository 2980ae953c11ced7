// The job queue over one database shared by several app instances: a planner run is taken once, survives its instance
// being killed, the daily digest goes once, and a refused e-mail is tried again and delivered once.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { randomUUID } from 'node:crypto'
import { sql } from 'drizzle-orm'
import { createApp } from '../../server/app'
import { loadConfig } from '../../server/config'
import { createDb } from '../../server/db/client'
import { createAppJobs } from '../../server/jobs/index'
import { startDigestTimer } from '../../server/mail/digest-timer'
import { startFakeSmtp, type FakeSmtp } from '../../server/mail/fake-smtp'
import { Realtime } from '../../server/realtime/hub'
import { intersect, walkWorkingTime } from '../../server/scheduler/calendar.ts'
import { dayjs } from '../../server/lib/time'
import { loadPlanningData } from '../../server/planning/problem'
import { sendRecorded } from '../../server/services/mail'
import { recoverStaleRuns, runPlanJob, startRun, waitForRun } from '../../server/planning/runs'
import { createTestApp, httpSignIn, signedIn, type TestApp } from '../setup/app'
import { startInstances, type Instances } from '../setup/instances'

const SECRET = 'test-secret-test-secret'
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms))

async function until<T>(what: string, fn: () => Promise<T | undefined | null | false>, timeoutMs = 60_000): Promise<T> {
  const t0 = Date.now()
  for (;;) {
    const v = await fn()
    if (v) return v
    if (Date.now() - t0 > timeoutMs) throw new Error(`timed out waiting for ${what}`)
    await sleep(100)
  }
}

/** A second app instance in this process: its own pool, hub and queue consumer over the same database. */
async function secondInstance(url: string, overrides: Record<string, string> = {}) {
  const { db, pool } = createDb(url, 5)
  const config = loadConfig({ DATABASE_URL: url, SESSION_SECRET: SECRET, NODE_ENV: 'test', ...overrides })
  const realtime = new Realtime()
  const jobs = createAppJobs(config, { instance: 'second' })
  const { deps } = createApp({ db, pool, config, realtime, jobs })
  await jobs.start(deps)
  return { db, pool, deps, jobs, async close() { await jobs.stop(); await realtime.close(); await pool.end() } }
}

describe('planner runs on two instances', () => {
  let t: TestApp
  let second: Awaited<ReturnType<typeof secondInstance>>
  beforeAll(async () => {
    t = await createTestApp({ JOBS_POLL_SECONDS: '0.5' })
    second = await secondInstance(t.url, { JOBS_POLL_SECONDS: '0.5' })
  })
  afterAll(async () => { await second?.close(); await t?.close() })

  it('when two queue consumers share the database, then each submitted run is taken by one of them, once, and drafts at most once', async () => {
    const manager = await signedIn(t.app, 'manager')
    for (let i = 0; i < 3; i++) {
      const r = await manager.post('/api/plans/runs', { timeLimitSeconds: 1, seed: i + 1 })
      expect(r.status, JSON.stringify(r.body)).toBe(202)
      expect(['queued', 'running']).toContain(r.body.status)
      // The second instance reads the same run from the database.
      const seen = await second.db.query.planRuns.findFirst({ where: (p, { eq }) => eq(p.id, r.body.id) })
      expect(seen?.workshopId).toBe(r.body.workshopId)
      const done = await waitForRun(t.db, r.body.id, 60_000)
      expect(done?.status, JSON.stringify(done)).toBe('done')
      const { rows: [row] } = await t.pool.query(`select attempt, instance, plan_id from plan_runs where id = $1`, [r.body.id])
      expect(row.attempt).toBe(1)
      const { rows: jobs } = await t.pool.query(`select state from pgboss.job where name = 'plan-run' and data->>'runId' = $1`, [r.body.id])
      expect(jobs).toHaveLength(1)
      const { rows: [drafts] } = await t.pool.query(`select count(*)::int as n from plan_versions where score->>'iterations' is not null and id = any($1::int[])`, [[row.plan_id ?? 0]])
      expect(drafts.n).toBe(row.plan_id ? 1 : 0)
    }
    const { rows: [audits] } = await t.pool.query(`select count(*)::int as n from audit_log where action = 'draft' and entity = 'plan'`)
    const { rows: [made] } = await t.pool.query(`select count(*)::int as n from plan_runs where plan_id is not null`)
    expect(audits.n).toBe(made.n)
  })

  it('when a run is taken twice at once (a takeover while the first taker still runs), then only the latest take saves, and one draft is made', async () => {
    const { rows: [u] } = await t.pool.query(`select id, workshop_id, role, name from users where email = 'manager@wrenfield.test'`)
    const actor = { userId: u.id, workshopId: u.workshop_id, role: u.role, personId: null, name: u.name }
    // Empty the live plan's unplanned bars so any plan beats it and a draft is due (as the planner tests do).
    await t.pool.query(`update operations set planned_start = null, planned_end = null, planned_bench_id = null, planned_person_id = null where status not in ('running', 'done', 'skipped') and not pinned`)
    const { jobs: _queue, ...noQueue } = t.deps
    // Without a queue the run starts in place (first take); the second instance takes it as well, as a retried job would.
    const run = await startRun(noQueue, actor, { timeLimitSeconds: 3, seed: 3 })
    await until('the first take', async () => (await t.pool.query(`select 1 from plan_runs where id = $1 and attempt = 1`, [run.id])).rows.length > 0)
    const second_ = await runPlanJob(second.deps, { runId: run.id })
    const done = await waitForRun(t.db, run.id, 60_000)
    expect(second_).toMatchObject({ planId: expect.any(Number) })
    expect(done).toMatchObject({ status: 'done', planId: (second_ as { planId: number }).planId })
    const { rows: [row] } = await t.pool.query(`select attempt, instance from plan_runs where id = $1`, [run.id])
    expect(row).toMatchObject({ attempt: 2, instance: 'second' })
    const { rows: drafts } = await t.pool.query(`select id from plan_versions where status = 'draft' and created_at >= (select created_at from plan_runs where id = $1)`, [run.id])
    expect(drafts.map((d: { id: number }) => d.id)).toEqual([done!.planId])
  })

  it('when a running run\'s heartbeat has stopped and it has had its tries, then it is marked failed with the reason and plan:failed is sent', async () => {
    const emitted: unknown[][] = []
    const realtime = Object.create(second.deps.realtime, { emit: { value: (...a: unknown[]) => void emitted.push(a) } })
    const { rows: [u] } = await t.pool.query(`select id from users where email = 'manager@wrenfield.test'`)
    const id = randomUUID()
    // A run stuck on its second try: its instance last wrote a heartbeat a minute ago (the limit here is 30 s, the default).
    await t.pool.query(`insert into plan_runs (id, workshop_id, created_by, options, status, attempt, instance, heartbeat_at, started_at) values ($1, 1, $2, '{"timeLimitSeconds": 5, "seed": 1, "stability": "small-changes"}', 'running', 2, 'gone:1', now() - interval '60 seconds', now() - interval '70 seconds')`, [id, u.id])
    await recoverStaleRuns({ ...second.deps, realtime })
    const { rows: [row] } = await t.pool.query(`select status, error, finished_at from plan_runs where id = $1`, [id])
    expect(row.status).toBe('failed')
    expect(row.error).toMatch(/stopped answering 2 times/)
    expect(row.finished_at).not.toBeNull()
    expect(emitted).toEqual([[1, 'plan:failed', { runId: id, error: row.error }]])
    // The workshop can plan again.
    const manager = await signedIn(t.app, 'manager')
    const again = await manager.post('/api/plans/runs', { timeLimitSeconds: 1 })
    expect(again.status, JSON.stringify(again.body)).toBe(202)
    await waitForRun(t.db, again.body.id, 60_000)
  })

  it('when a second run is asked for while one is queued or running, then it is refused with 409 naming the running one', async () => {
    const manager = await signedIn(t.app, 'manager')
    const first = await manager.post('/api/plans/runs', { timeLimitSeconds: 2 })
    expect(first.status).toBe(202)
    const again = await manager.post('/api/plans/runs', { timeLimitSeconds: 2 })
    expect(again.status).toBe(409)
    expect(again.body.details).toMatchObject({ runId: first.body.id })
    await waitForRun(t.db, first.body.id, 60_000)
  })
})

describe('an instance killed mid-run', () => {
  let cluster: Instances | undefined
  afterAll(async () => { await cluster?.stop() })

  it('when the instance running a planner run is killed, then the other instance takes it over and it ends done with one draft', async () => {
    // Two app processes over one database; a heartbeat older than 3 s counts as a lost instance.
    cluster = await startInstances(2, { env: { PLAN_RUN_STALE_SECONDS: '3', JOBS_POLL_SECONDS: '0.5' } })
    const { pool, db } = cluster.database
    const [a] = cluster.instances
    const { cookie, csrf } = await httpSignIn(a!.url, 'manager')
    const r = await fetch(`${a!.url}/api/plans/runs`, { method: 'POST', headers: { 'content-type': 'application/json', 'x-csrf-token': csrf, cookie }, body: JSON.stringify({ timeLimitSeconds: 6, seed: 7 }) })
    expect(r.status).toBe(202)
    const run = (await r.json()) as { id: string }
    // Mid-run: one of the two has taken the run and written progress with its heartbeat.
    const taken = await until('an instance to report progress', async () => {
      const { rows: [row] } = await pool.query(`select status, instance, attempt, progress from plan_runs where id = $1`, [run.id])
      return row?.status === 'running' && row.progress ? row : null
    })
    const holder = cluster.instances.find((i) => String(taken.instance).endsWith(`:${i.pid}`))!
    const other = cluster.instances.find((i) => i !== holder)!
    expect(holder, `run held by ${taken.instance}`).toBeDefined()
    await holder.kill('SIGKILL')

    const done = await waitForRun(db, run.id, 90_000)
    const { rows: [row] } = await pool.query(`select status, attempt, instance, plan_id, error from plan_runs where id = $1`, [run.id])
    expect(done?.status, JSON.stringify(row)).toBe('done')
    expect(row.attempt).toBe(2)
    expect(row.instance).toMatch(new RegExp(`:${other.pid}$`))
    const { rows: [drafts] } = await pool.query(`select count(*)::int as n from audit_log where action = 'draft' and entity = 'plan'`)
    expect(drafts.n).toBe(row.plan_id ? 1 : 0)
    // Its first job was cancelled when the run was taken over, so the queue does not retry it as well.
    const { rows: jobs } = await pool.query(`select state from pgboss.job where name = 'plan-run' and data->>'runId' = $1 order by created_on`, [run.id])
    expect(jobs.map((j: { state: string }) => j.state)).toEqual(['cancelled', 'completed'])
    // Polling the run reads the row: the surviving instance answers it.
    const seen = await httpSignIn(other.url, 'manager')
    const polled = await fetch(`${other.url}/api/plans/runs/${run.id}`, { headers: { cookie: seen.cookie } })
    expect(await polled.json()).toMatchObject({ id: run.id, status: 'done', planId: row.plan_id })
  })
})

describe('daily mail and e-mail retries on two instances', () => {
  let fake: FakeSmtp
  let t: TestApp
  let second: Awaited<ReturnType<typeof secondInstance>>
  beforeAll(async () => {
    fake = await startFakeSmtp()
    t = await createTestApp({ SMTP_URL: fake.url, MAIL_RETRY_SECONDS: '1', JOBS_POLL_SECONDS: '0.5' })
    fake.useDb(t.db)
    second = await secondInstance(t.url, { SMTP_URL: fake.url, MAIL_RETRY_SECONDS: '1', JOBS_POLL_SECONDS: '0.5' })
  })
  afterAll(async () => { await second?.close(); await t?.close(); await fake?.close() })

  it('when both instances\' timers ask for the day\'s digest, again and again, then it goes out once to each manager', async () => {
    // A job bag on the live plan made late (as in the mail tests): its last step ends two days after its promised date.
    const { rows: [o] } = await t.pool.query(`select r.id from orders r where r.status = 'open' order by r.id limit 1`)
    const { rows: [bag] } = await t.pool.query(`select id, number from job_bags where order_id = $1`, [o.id])
    const data = await loadPlanningData(t.db, 1, new Date())
    const b = data.problem.benches[0]!, p = data.problem.people[0]!
    const segs = walkWorkingTime(intersect(b.available, p.available), data.problem.now + 3 * 1440, 60)!
    const end = data.clock.toDate(segs.at(-1)!.end)
    await t.pool.query(`update orders set promised_date = $1 where id = $2`, [new Date(end.getTime() - 2 * 86_400_000).toISOString().slice(0, 10), o.id])
    const { rows: [op] } = await t.pool.query(`select id from operations where job_bag_id = $1 and lead_days = 0 order by seq desc limit 1`, [bag.id])
    await t.pool.query(`update operations set planned_bench_id = $1, planned_person_id = $2, planned_start = $3, planned_end = $4 where id = $5`, [Number(b.id), Number(p.id), data.clock.toDate(segs[0]!.start).toISOString(), end.toISOString(), op.id])

    const { rows: [w] } = await t.pool.query(`select time_zone from workshops where id = 1`)
    const today = dayjs().tz(w.time_zone).format('YYYY-MM-DD')
    const at = dayjs.tz(`${today} 08:00`, w.time_zone).toDate()
    const timers = [startDigestTimer(t.deps, { clock: () => at, everyMs: 3_600_000 }), startDigestTimer(second.deps, { clock: () => at, everyMs: 3_600_000 })]
    try {
      for (let i = 0; i < 3; i++) await Promise.all(timers.map((x) => x.tick()))
      await until('the day to be done', async () => (await t.pool.query(`select 1 from daily_mail_runs where workshop_id = 1 and day = $1`, [today])).rows.length > 0)
      for (let i = 0; i < 2; i++) await Promise.all(timers.map((x) => x.tick()))
    } finally {
      timers.forEach((x) => x.stop())
    }
    const { rows: managers } = await t.pool.query(`select email from users where workshop_id = 1 and role = 'manager' and active`)
    expect(managers.length).toBeGreaterThan(0)
    for (const m of managers) await fake.waitFor((x) => x.to.includes(m.email) && x.subject.includes('at risk'), 30_000)
    // Every queued mail sent, then count: one digest row and one message per manager, the late job bag in it.
    await until('the outbox to drain', async () => (await t.pool.query(`select 1 from outbox where status = 'queued'`)).rows.length === 0, 30_000)
    const { rows: digests } = await t.pool.query(`select "to" from outbox where kind = 'at-risk-digest' and meta->>'day' = $1 order by "to"`, [today])
    expect(digests.map((d: { to: string }) => d.to)).toEqual(managers.map((m: { email: string }) => m.email).sort())
    for (const m of managers) {
      const got = fake.messages.filter((x) => x.to.includes(m.email) && x.subject.includes('at risk'))
      expect(got).toHaveLength(1)
      expect(got[0]!.text).toContain(bag.number)
    }
    const { rows: days } = await t.pool.query(`select count(*)::int as n from daily_mail_runs where workshop_id = 1`)
    expect(days[0].n).toBe(1)
  })

  it('when the change that queued an e-mail rolls back, then neither its outbox row nor its send job exists; when it commits, both do', async () => {
    const content = { subject: 'Queued in a transaction', text: 'x', html: '<p>x</p>' }
    const jobsFor = async (outboxId: number) => Number((await t.pool.query(`select count(*) from pgboss.job where name = 'mail-send' and data->>'outboxId' = $1`, [String(outboxId)])).rows[0].count)
    let rolledBack = 0
    await t.db.transaction(async (tx) => {
      rolledBack = (await sendRecorded({ ...t.deps, db: tx as unknown as typeof t.db }, { workshopId: 1, to: 'rolled-back@example.com', kind: 'test', content })).id
      // Inside the transaction its job is there (written on the transaction's own connection).
      const { rows } = await tx.execute(sql`select count(*)::int as n from pgboss.job where name = 'mail-send' and data->>'outboxId' = ${String(rolledBack)}`)
      expect(rows[0]).toMatchObject({ n: 1 })
      tx.rollback()
    }).catch((err) => { if (!/rollback/i.test(String(err))) throw err })
    expect(rolledBack).toBeGreaterThan(0)
    expect(await jobsFor(rolledBack)).toBe(0)
    expect((await t.pool.query(`select 1 from outbox where id = $1`, [rolledBack])).rows).toHaveLength(0)
    const committed = { ...content, subject: 'Queued and committed' }
    const kept = await t.db.transaction((tx) => sendRecorded({ ...t.deps, db: tx as unknown as typeof t.db }, { workshopId: 1, to: 'committed@example.com', kind: 'test', content: committed }))
    expect(await jobsFor(kept.id)).toBe(1)
    await fake.waitFor((m) => m.subject === committed.subject, 30_000)
  })

  it('when the mail server refuses the first try, then the message is tried again and delivered once', async () => {
    const manager = await signedIn(t.app, 'manager')
    const { rows: [o] } = await t.pool.query(`select r.id, r.number, r.version from orders r where r.status = 'open' order by r.id offset 1 limit 1`)
    fake.refuseNext(1)
    const refusedBefore = fake.refused
    const r = await manager.patch(`/api/orders/${o.id}`, { status: 'ready', version: o.version })
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    const answeredAt = Date.now()
    // The answer came before the message was delivered: the first try was refused, the retry waits a second or more.
    const m = await fake.waitFor((x) => x.subject.includes(o.number) && /ready to collect/.test(x.subject), 30_000)
    expect(fake.refused - refusedBefore).toBe(1)
    expect(new Date(m.receivedAt).getTime()).toBeGreaterThan(answeredAt)
    const { rows: [row] } = await t.pool.query(`select id, status, error from outbox where order_id = $1 and kind = 'ready-for-collection'`, [o.id])
    expect(row).toMatchObject({ status: 'delivered' })
    const job = await until('the send job to complete', async () => (await t.pool.query(`select state, retry_count from pgboss.job where name = 'mail-send' and data->>'outboxId' = $1 and state = 'completed'`, [String(row.id)])).rows[0])
    expect(job.retry_count).toBe(1)
    await sleep(1500)
    expect(fake.messages.filter((x) => x.subject === m.subject)).toHaveLength(1)
    expect((await t.pool.query(`select error from outbox where id = $1`, [row.id])).rows[0].error).toBeNull()
  })
})
