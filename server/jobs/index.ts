// The app's jobs: one handler per kind (planner run, e-mail, daily mail) on the queue of server/jobs/queue.ts, and the
// heartbeat check that takes over or fails planner runs whose instance went away. Started and stopped with the server.
import type { Config } from '../config'
import type { Deps } from '../lib/route'
import { runDailyMail } from '../mail/digest-timer'
import { deliverOutboxJob } from '../services/mail'
import { recoverStaleRuns, releaseLocalRuns, runPlanJob } from '../planning/runs'
import { createJobs, QUEUES, timingOf, type JobHandler, type Jobs as QueueJobs, type QueueName } from './queue'

export { QUEUES } from './queue'
/** The app's job queue: its handlers get the app's Deps. */
export type Jobs = QueueJobs<Deps>

export const HANDLERS: Record<QueueName, JobHandler<Deps>> = {
  [QUEUES.planRun]: (deps, data, job) => runPlanJob(deps, data, job),
  [QUEUES.mailSend]: (deps, data, job) => deliverOutboxJob(deps, data, job),
  [QUEUES.dailyMail]: (deps, data) => runDailyMail(deps, data),
}

/**
 * The queue for this process. `only` limits the kinds this instance takes (tests use it to play a second consumer);
 * `start(deps)` must follow createApp, whose deps carry it.
 */
export function createAppJobs(config: Config, o: { only?: QueueName[]; instance?: string } = {}): Jobs {
  let deps: Deps | undefined
  const timing = timingOf(config)
  const handlers = Object.fromEntries(Object.entries(HANDLERS).filter(([q]) => !o.only || o.only.includes(q as QueueName)))
  const jobs = createJobs<Deps>(config.DATABASE_URL, {
    timing,
    handlers,
    ...(o.instance ? { instance: o.instance } : {}),
    beforeStop: async () => {
      if (deps) await releaseLocalRuns(deps)
    },
  })
  const start = jobs.start
  jobs.start = async (d) => {
    deps = d
    await start(d)
  }
  jobs.every(Math.max(1, timing.staleRunSeconds / 3), async () => {
    if (deps) await recoverStaleRuns(deps)
  })
  return jobs
}
