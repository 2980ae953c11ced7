// The job queue (pg-boss over the app's own database): jobs run once, on whichever app instance takes them. Owns the queue
// names and their retry rules; server/jobs/index.ts registers the one handler of each kind.
import { hostname } from 'node:os'
import PgBoss from 'pg-boss'
import type pg from 'pg'
import type { Config } from '../config'
import type { Db, Trx } from '../db/client'

export const QUEUES = {
  /** { runId }: one planner run (server/planning/runs.ts). */
  planRun: 'plan-run',
  /** { outboxId }: one outgoing e-mail (server/services/mail.ts). */
  mailSend: 'mail-send',
  /** { workshopId, day, at }: the money reminders and the at-risk digest of one workshop and day (server/mail/digest-timer.ts). */
  dailyMail: 'daily-mail',
} as const
export type QueueName = (typeof QUEUES)[keyof typeof QUEUES]

export interface JobTiming {
  /** How often an idle instance looks for work. */
  pollSeconds: number
  /** A planner run whose instance wrote no heartbeat for this long is taken over or failed. */
  staleRunSeconds: number
  /** First delay before an e-mail is tried again (doubling each time). */
  mailRetrySeconds: number
}

export const timingOf = (config: Pick<Config, 'JOBS_POLL_SECONDS' | 'PLAN_RUN_STALE_SECONDS' | 'MAIL_RETRY_SECONDS'>): JobTiming => ({
  pollSeconds: config.JOBS_POLL_SECONDS,
  staleRunSeconds: config.PLAN_RUN_STALE_SECONDS,
  mailRetrySeconds: config.MAIL_RETRY_SECONDS,
})

/** The configuration's defaults (for the migrations, which install the queues before any app runs). */
export const DEFAULT_TIMING: JobTiming = { pollSeconds: 1, staleRunSeconds: 30, mailRetrySeconds: 30 }

/** pg-boss's schema and our queues into a database, through a handle of ours (the migrations' connection). */
export async function installJobQueue(db: Db) {
  const boss = new PgBoss({ db: adapterOf(db), supervise: false, schedule: false, migrate: true })
  await boss.start()
  try {
    await installQueues(boss, DEFAULT_TIMING)
  } finally {
    await boss.stop({ graceful: false, close: false })
  }
}

/** Tries of a planner run (first take included) before it is marked failed; tries of an e-mail. */
export const PLAN_RUN_TRIES = 2
export const MAIL_TRIES = 5

function queueOptions(t: JobTiming): Record<QueueName, PgBoss.Queue> {
  return {
    // Expiry is the backstop behind the heartbeat: the longest run (120 s) plus loading and saving.
    [QUEUES.planRun]: { name: QUEUES.planRun, retryLimit: PLAN_RUN_TRIES - 1, retryDelay: 1, expireInSeconds: 15 * 60 },
    [QUEUES.mailSend]: { name: QUEUES.mailSend, retryLimit: MAIL_TRIES - 1, retryDelay: t.mailRetrySeconds, retryBackoff: true, expireInSeconds: 120 },
    // 'short': while one is waiting, a second instance's request for the same workshop and day is not queued again.
    [QUEUES.dailyMail]: { name: QUEUES.dailyMail, policy: 'short', retryLimit: 3, retryDelay: 60, expireInSeconds: 10 * 60 },
  }
}

/** pg-boss's own schema (`pgboss`) and our queues; idempotent, also run by the migrations so a template database carries them. */
export async function installQueues(boss: PgBoss, t: JobTiming) {
  for (const [name, options] of Object.entries(queueOptions(t))) {
    if (await boss.getQueue(name)) await boss.updateQueue(name, options)
    else await boss.createQueue(name, options).catch(async () => boss.updateQueue(name, options)) // another instance created it
  }
}

/** pg-boss's query interface on our pool or on an open transaction's client, so a job can be queued in the transaction of the change. */
export function adapterOf(db: Db | Trx): PgBoss.Db {
  const client = (db as unknown as { session?: { client?: pg.PoolClient | pg.Pool } }).session?.client ?? (db as Db).$client
  if (!client?.query) throw new Error('no PostgreSQL client behind this database handle')
  return { executeSql: (text, values) => client.query(text, values) }
}

// eslint-disable-next-line @typescript-eslint/no-explicit-any -- each queue's handler reads the data shape its own sender wrote
export type JobHandler<D> = (deps: D, data: any, job: PgBoss.JobWithMetadata<any>) => Promise<unknown>

/** The queue, generic in what its handlers are given (the app's Deps), so this module needs nothing from the app's layers. */
export interface Jobs<D> {
  /** This instance's name in run rows and logs (host:pid). */
  readonly instance: string
  readonly timing: JobTiming
  /** Queues a job; with `tx` it is written in that transaction (and vanishes with its rollback). */
  send(queue: QueueName, data: object, o?: { tx?: Db | Trx; singletonKey?: string }): Promise<string | null>
  /** Cancels a job that has not finished (no retry follows). */
  cancel(queue: QueueName, jobId: string, o?: { tx?: Db | Trx }): Promise<void>
  /** Wakes this instance's worker for a queue at once (after a commit that queued work). */
  wake(queue: QueueName): void
  /** Runs every `seconds` while started (e.g. the heartbeat check of planner runs). */
  every(seconds: number, fn: () => Promise<void>): void
  start(deps: D): Promise<void>
  stop(): Promise<void>
}

export interface JobsOptions<D> {
  timing: JobTiming
  /** Handlers per queue; tests may leave some out to play a consumer of certain kinds only. */
  handlers: Partial<Record<QueueName, JobHandler<D>>>
  /** Runs before the queue stops (e.g. hand this instance's planner runs back). */
  beforeStop?: () => Promise<void>
  instance?: string
}

export function createJobs<D>(connectionString: string, o: JobsOptions<D>): Jobs<D> {
  const t = o.timing
  const boss = new PgBoss({
    connectionString,
    max: 4,
    application_name: 'millgrain-jobs',
    // No cron schedules: the daily mail is asked for by every instance's timer and deduplicated per workshop and day.
    schedule: false,
    // Expired jobs (an instance gone mid-job) are put back to retry by whichever instance runs maintenance first.
    supervise: true,
    maintenanceIntervalSeconds: Math.max(1, Math.min(30, t.staleRunSeconds)),
  })
  boss.on('error', (err) => {
    if (!stopping) console.error('[jobs] queue error:', err.message)
  })
  const workers = new Map<QueueName, string>()
  const timers: ReturnType<typeof setInterval>[] = []
  const periodic: { seconds: number; fn: () => Promise<void> }[] = []
  let started = false
  let stopping = false
  const jobs: Jobs<D> = {
    instance: o.instance ?? `${hostname()}:${process.pid}`,
    timing: t,
    async send(queue, data, so = {}) {
      const id = await boss.send(queue, data, { ...(so.tx ? { db: adapterOf(so.tx) } : {}), ...(so.singletonKey ? { singletonKey: so.singletonKey } : {}) })
      if (!so.tx) jobs.wake(queue)
      return id
    },
    async cancel(queue, jobId, so = {}) {
      await boss.cancel(queue, jobId, so.tx ? { db: adapterOf(so.tx) } : undefined)
    },
    wake(queue) {
      const w = workers.get(queue)
      if (w && started) boss.notifyWorker(w)
    },
    every(seconds, fn) {
      periodic.push({ seconds, fn })
      if (started) schedule({ seconds, fn })
    },
    async start(deps) {
      await boss.start()
      await installQueues(boss, t)
      for (const [queue, handler] of Object.entries(o.handlers) as [QueueName, JobHandler<D>][]) {
        const id = await boss.work(queue, { batchSize: 1, includeMetadata: true, pollingIntervalSeconds: t.pollSeconds }, async ([job]) => {
          if (job) return handler(deps, job.data, job)
        })
        workers.set(queue, id)
      }
      started = true
      for (const p of periodic) schedule(p)
    },
    async stop() {
      if (!started) return
      stopping = true
      started = false
      for (const timer of timers) clearInterval(timer)
      await o.beforeStop?.().catch((err) => console.error('[jobs] before stop:', (err as Error).message))
      // Work still running gets a few seconds; what is left is failed and so retried by another instance.
      await boss.stop({ graceful: true, timeout: 5000, wait: true })
    },
  }
  function schedule(p: { seconds: number; fn: () => Promise<void> }) {
    let busy = false
    const timer = setInterval(() => {
      if (busy || !started) return
      busy = true
      p.fn()
        .catch((err) => console.error('[jobs] periodic task:', (err as Error).message))
        .finally(() => {
          busy = false
        })
    }, p.seconds * 1000)
    timer.unref()
    timers.push(timer)
  }
  return jobs
}
