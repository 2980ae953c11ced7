// The job queue over one database shared by several app instances: a planner run is taken once, survives its instance
// being killed, the daily digest goes once, and a refused e-mail is tried again and delivered once.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { randomUUID } from 'node:crypto'
import { and, asc, count, eq, gte, inArray, isNotNull, sql } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { createApp } from '../../server/app'
import { loadConfig } from '../../server/config'
import { createDb } from '../../server/db/client'
import { createAppJobs } from '../../server/jobs/index'
import { startDigestTimer } from '../../server/mail/digest-timer'
import { startFakeSmtp, type FakeSmtp } from '../../server/mail/fake-smtp'
import { Realtime } from '../../server/realtime/hub'
import { dayjs } from '../../server/lib/time'
import { sendRecorded } from '../../server/services/mail'
import { recoverStaleRuns, runPlanJob, startRun, waitForRun } from '../../server/planning/runs'
import { createTestApp, httpSignIn, signedIn, type TestApp } from '../setup/app'
import { startInstances, type Instances } from '../setup/instances'
import { bookLastStepLate, openOrder, unplanOpenSteps, userIdByEmail } from '../setup/fixtures'

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
  return {
    db,
    pool,
    deps,
    jobs,
    async close() {
      await jobs.stop()
      await realtime.close()
      await pool.end()
    },
  }
}

describe('planner runs on two instances', () => {
  let t: TestApp
  let second: Awaited<ReturnType<typeof secondInstance>>
  beforeAll(async () => {
    t = await createTestApp({ JOBS_POLL_SECONDS: '0.5' })
    second = await secondInstance(t.url, { JOBS_POLL_SECONDS: '0.5' })
  })
  afterAll(async () => {
    await second?.close()
    await t?.close()
  })

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
      const row = (await t.db.select({ attempt: s.planRuns.attempt, planId: s.planRuns.planId }).from(s.planRuns).where(eq(s.planRuns.id, r.body.id)))[0]!
      expect(row.attempt).toBe(1)
      // Raw SQL on purpose: pg-boss's own table, not part of our schema.
      const { rows: jobs } = await t.pool.query(`select state from pgboss.job where name = 'plan-run' and data->>'runId' = $1`, [r.body.id])
      expect(jobs).toHaveLength(1)
      const [drafts] = await t.db
        .select({ n: count() })
        .from(s.planVersions)
        .where(and(isNotNull(sql`${s.planVersions.score}->>'iterations'`), inArray(s.planVersions.id, [row.planId ?? 0])))
      expect(drafts!.n).toBe(row.planId ? 1 : 0)
    }
    const [audits] = await t.db
      .select({ n: count() })
      .from(s.auditLog)
      .where(and(eq(s.auditLog.action, 'draft'), eq(s.auditLog.entity, 'plan')))
    const [made] = await t.db.select({ n: count() }).from(s.planRuns).where(isNotNull(s.planRuns.planId))
    expect(audits!.n).toBe(made!.n)
  })

  it('when a run is taken twice at once (a takeover while the first taker still runs), then only the latest take saves, and one draft is made', async () => {
    const u = (
      await t.db
        .select({ id: s.users.id, workshopId: s.users.workshopId, role: s.users.role, name: s.users.name })
        .from(s.users)
        .where(eq(s.users.email, 'manager@wrenfield.test'))
    )[0]!
    const actor = { userId: u.id, workshopId: u.workshopId, role: u.role, personId: null, name: u.name }
    // Empty the live plan's unplanned bars so any plan beats it and a draft is due (as the planner tests do).
    await unplanOpenSteps(t.db)
    const { jobs: _queue, ...noQueue } = t.deps
    // Without a queue the run starts in place (first take); the second instance takes it as well, as a retried job would.
    const run = await startRun(noQueue, actor, { timeLimitSeconds: 3, seed: 3 })
    await until(
      'the first take',
      async () =>
        (
          await t.db
            .select({ id: s.planRuns.id })
            .from(s.planRuns)
            .where(and(eq(s.planRuns.id, run.id), eq(s.planRuns.attempt, 1)))
        ).length > 0,
    )
    const second_ = await runPlanJob(second.deps, { runId: run.id })
    const done = await waitForRun(t.db, run.id, 60_000)
    expect(second_).toMatchObject({ planId: expect.any(Number) })
    expect(done).toMatchObject({ status: 'done', planId: (second_ as { planId: number }).planId })
    const [row] = await t.db
      .select({ attempt: s.planRuns.attempt, instance: s.planRuns.instance, createdAt: s.planRuns.createdAt })
      .from(s.planRuns)
      .where(eq(s.planRuns.id, run.id))
    expect(row).toMatchObject({ attempt: 2, instance: 'second' })
    const drafts = await t.db
      .select({ id: s.planVersions.id })
      .from(s.planVersions)
      .where(and(eq(s.planVersions.status, 'draft'), gte(s.planVersions.createdAt, row!.createdAt)))
    expect(drafts.map((d) => d.id)).toEqual([done!.planId])
  })

  it("when a running run's heartbeat has stopped and it has had its tries, then it is marked failed with the reason and plan:failed is sent", async () => {
    const emitted: unknown[][] = []
    const realtime = Object.create(second.deps.realtime, { emit: { value: (...a: unknown[]) => void emitted.push(a) } })
    const createdBy = await userIdByEmail(t.db, 'manager@wrenfield.test')
    const id = randomUUID()
    // A run stuck on its second try: its instance last wrote a heartbeat a minute ago (the limit here is 30 s, the default).
    await t.db.insert(s.planRuns).values({
      id,
      workshopId: 1,
      createdBy,
      options: { timeLimitSeconds: 5, seed: 1, stability: 'small-changes' },
      status: 'running',
      attempt: 2,
      instance: 'gone:1',
      heartbeatAt: new Date(Date.now() - 60_000).toISOString(),
      startedAt: new Date(Date.now() - 70_000).toISOString(),
    })
    await recoverStaleRuns({ ...second.deps, realtime })
    const row = (
      await t.db.select({ status: s.planRuns.status, error: s.planRuns.error, finishedAt: s.planRuns.finishedAt }).from(s.planRuns).where(eq(s.planRuns.id, id))
    )[0]!
    expect(row.status).toBe('failed')
    expect(row.error).toMatch(/stopped answering 2 times/)
    expect(row.finishedAt).not.toBeNull()
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
  afterAll(async () => {
    await cluster?.stop()
  })

  it('when the instance running a planner run is killed, then the other instance takes it over and it ends done with one draft', async () => {
    // Two app processes over one database; a heartbeat older than 3 s counts as a lost instance.
    cluster = await startInstances(2, { env: { PLAN_RUN_STALE_SECONDS: '3', JOBS_POLL_SECONDS: '0.5' } })
    const { pool, db } = cluster.database
    const [a] = cluster.instances
    const { cookie, csrf } = await httpSignIn(a!.url, 'manager')
    const r = await fetch(`${a!.url}/api/plans/runs`, {
      method: 'POST',
      headers: { 'content-type': 'application/json', 'x-csrf-token': csrf, cookie },
      body: JSON.stringify({ timeLimitSeconds: 6, seed: 7 }),
    })
    expect(r.status).toBe(202)
    const run = (await r.json()) as { id: string }
    // Mid-run: one of the two has taken the run and written progress with its heartbeat.
    const taken = await until('an instance to report progress', async () => {
      const [row] = await db
        .select({ status: s.planRuns.status, instance: s.planRuns.instance, progress: s.planRuns.progress })
        .from(s.planRuns)
        .where(eq(s.planRuns.id, run.id))
      return row?.status === 'running' && row.progress ? row : null
    })
    const holder = cluster.instances.find((i) => String(taken.instance).endsWith(`:${i.pid}`))!
    const other = cluster.instances.find((i) => i !== holder)!
    expect(holder, `run held by ${taken.instance}`).toBeDefined()
    await holder.kill('SIGKILL')

    const done = await waitForRun(db, run.id, 90_000)
    const row = (
      await db
        .select({ status: s.planRuns.status, attempt: s.planRuns.attempt, instance: s.planRuns.instance, planId: s.planRuns.planId, error: s.planRuns.error })
        .from(s.planRuns)
        .where(eq(s.planRuns.id, run.id))
    )[0]!
    expect(done?.status, JSON.stringify(row)).toBe('done')
    expect(row.attempt).toBe(2)
    expect(row.instance).toMatch(new RegExp(`:${other.pid}$`))
    const [drafts] = await db
      .select({ n: count() })
      .from(s.auditLog)
      .where(and(eq(s.auditLog.action, 'draft'), eq(s.auditLog.entity, 'plan')))
    expect(drafts!.n).toBe(row.planId ? 1 : 0)
    // Raw SQL on purpose below: pg-boss's own table, not part of our schema.
    // Its first job was cancelled when the run was taken over, so the queue does not retry it as well.
    const { rows: jobs } = await pool.query(`select state from pgboss.job where name = 'plan-run' and data->>'runId' = $1 order by created_on`, [run.id])
    expect(jobs.map((j: { state: string }) => j.state)).toEqual(['cancelled', 'completed'])
    // Polling the run reads the row: the surviving instance answers it.
    const seen = await httpSignIn(other.url, 'manager')
    const polled = await fetch(`${other.url}/api/plans/runs/${run.id}`, { headers: { cookie: seen.cookie } })
    expect(await polled.json()).toMatchObject({ id: run.id, status: 'done', planId: row.planId })
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
  afterAll(async () => {
    await second?.close()
    await t?.close()
    await fake?.close()
  })

  it("when both instances' timers ask for the day's digest, again and again, then it goes out once to each manager", async () => {
    // A job bag on the live plan made late (as in the mail tests): its last step ends two days after its promised date.
    const o = await openOrder(t.db)
    const bag = { number: o.bagNumber }
    await bookLastStepLate(t.db, {
      workshopId: 1,
      orderId: o.id,
      bagId: o.bagId,
      fromMinute: 3 * 1440,
      promised: (end) => new Date(end.getTime() - 2 * 86_400_000).toISOString().slice(0, 10),
    })

    const { timeZone } = (await t.db.select({ timeZone: s.workshops.timeZone }).from(s.workshops).where(eq(s.workshops.id, 1)))[0]!
    const today = dayjs().tz(timeZone).format('YYYY-MM-DD')
    const at = dayjs.tz(`${today} 08:00`, timeZone).toDate()
    const timers = [startDigestTimer(t.deps, { clock: () => at, everyMs: 3_600_000 }), startDigestTimer(second.deps, { clock: () => at, everyMs: 3_600_000 })]
    try {
      for (let i = 0; i < 3; i++) await Promise.all(timers.map((x) => x.tick()))
      await until(
        'the day to be done',
        async () =>
          (
            await t.db
              .select({ day: s.dailyMailRuns.day })
              .from(s.dailyMailRuns)
              .where(and(eq(s.dailyMailRuns.workshopId, 1), eq(s.dailyMailRuns.day, today)))
          ).length > 0,
      )
      for (let i = 0; i < 2; i++) await Promise.all(timers.map((x) => x.tick()))
    } finally {
      timers.forEach((x) => x.stop())
    }
    const managers = await t.db
      .select({ email: s.users.email })
      .from(s.users)
      .where(and(eq(s.users.workshopId, 1), eq(s.users.role, 'manager'), eq(s.users.active, true)))
    expect(managers.length).toBeGreaterThan(0)
    for (const m of managers) await fake.waitFor((x) => x.to.includes(m.email) && x.subject.includes('at risk'), 30_000)
    // Every queued mail sent, then count: one digest row and one message per manager, the late job bag in it.
    await until(
      'the outbox to drain',
      async () => (await t.db.select({ id: s.outbox.id }).from(s.outbox).where(eq(s.outbox.status, 'queued'))).length === 0,
      30_000,
    )
    const digests = await t.db
      .select({ to: s.outbox.to })
      .from(s.outbox)
      .where(and(eq(s.outbox.kind, 'at-risk-digest'), eq(sql`${s.outbox.meta}->>'day'`, today)))
      .orderBy(asc(s.outbox.to))
    expect(digests.map((d) => d.to)).toEqual(managers.map((m) => m.email).sort())
    for (const m of managers) {
      const got = fake.messages.filter((x) => x.to.includes(m.email) && x.subject.includes('at risk'))
      expect(got).toHaveLength(1)
      expect(got[0]!.text).toContain(bag.number)
    }
    const [days] = await t.db.select({ n: count() }).from(s.dailyMailRuns).where(eq(s.dailyMailRuns.workshopId, 1))
    expect(days!.n).toBe(1)
  })

  it('when the change that queued an e-mail rolls back, then neither its outbox row nor its send job exists; when it commits, both do', async () => {
    const content = { subject: 'Queued in a transaction', text: 'x', html: '<p>x</p>' }
    // Raw SQL on purpose for the queue's jobs: pg-boss's own table, not part of our schema.
    const jobsFor = async (outboxId: number) =>
      Number((await t.pool.query(`select count(*) from pgboss.job where name = 'mail-send' and data->>'outboxId' = $1`, [String(outboxId)])).rows[0].count)
    let rolledBack = 0
    await t.db
      .transaction(async (tx) => {
        rolledBack = (
          await sendRecorded({ ...t.deps, db: tx as unknown as typeof t.db }, { workshopId: 1, to: 'rolled-back@example.com', kind: 'test', content })
        ).id
        // Inside the transaction its job is there (written on the transaction's own connection).
        const { rows } = await tx.execute(sql`select count(*)::int as n from pgboss.job where name = 'mail-send' and data->>'outboxId' = ${String(rolledBack)}`)
        expect(rows[0]).toMatchObject({ n: 1 })
        tx.rollback()
      })
      .catch((err) => {
        if (!/rollback/i.test(String(err))) throw err
      })
    expect(rolledBack).toBeGreaterThan(0)
    expect(await jobsFor(rolledBack)).toBe(0)
    expect(await t.db.select({ id: s.outbox.id }).from(s.outbox).where(eq(s.outbox.id, rolledBack))).toHaveLength(0)
    const committed = { ...content, subject: 'Queued and committed' }
    const kept = await t.db.transaction((tx) =>
      sendRecorded({ ...t.deps, db: tx as unknown as typeof t.db }, { workshopId: 1, to: 'committed@example.com', kind: 'test', content: committed }),
    )
    expect(await jobsFor(kept.id)).toBe(1)
    await fake.waitFor((m) => m.subject === committed.subject, 30_000)
  })

  it('when the mail server refuses the first try, then the message is tried again and delivered once', async () => {
    const manager = await signedIn(t.app, 'manager')
    const o = await openOrder(t.db, 1)
    fake.refuseNext(1)
    const refusedBefore = fake.refused
    const r = await manager.patch(`/api/orders/${o.id}`, { status: 'ready', version: o.version })
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    const answeredAt = Date.now()
    // The answer came before the message was delivered: the first try was refused, the retry waits a second or more.
    const m = await fake.waitFor((x) => x.subject.includes(o.number) && /ready to collect/.test(x.subject), 30_000)
    expect(fake.refused - refusedBefore).toBe(1)
    expect(new Date(m.receivedAt).getTime()).toBeGreaterThan(answeredAt)
    const row = (
      await t.db
        .select({ id: s.outbox.id, status: s.outbox.status, error: s.outbox.error })
        .from(s.outbox)
        .where(and(eq(s.outbox.orderId, o.id), eq(s.outbox.kind, 'ready-for-collection')))
    )[0]!
    expect(row).toMatchObject({ status: 'delivered' })
    // Raw SQL on purpose: pg-boss's own table, not part of our schema.
    const job = await until(
      'the send job to complete',
      async () =>
        (
          await t.pool.query(`select state, retry_count from pgboss.job where name = 'mail-send' and data->>'outboxId' = $1 and state = 'completed'`, [
            String(row.id),
          ])
        ).rows[0],
    )
    expect(job.retry_count).toBe(1)
    await sleep(1500)
    expect(fake.messages.filter((x) => x.subject === m.subject)).toHaveLength(1)
    expect((await t.db.select({ error: s.outbox.error }).from(s.outbox).where(eq(s.outbox.id, row.id)))[0]!.error).toBeNull()
  })
})
