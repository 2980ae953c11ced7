// The daily mail: once a day per workshop, from 07:30 workshop time, the money reminders (lapsed quotes expired, quotes
// ending within 3 days, balances owed on pieces ready to collect) and the at-risk digest. Every app instance's timer asks
// for it (a queue job per workshop and day, one waiting at a time); the job does it in one transaction that first checks
// the day is not done yet, so it happens once however many instances ask, and a crash part-way leaves nothing half sent.
import { and, eq, sql } from 'drizzle-orm'
import * as s from '../db/schema/index'
import type { Db } from '../db/client'
import { QUEUES } from '../jobs/queue'
import { LOCK } from '../lib/locks'
import type { Deps } from '../lib/route'
import { dayjs } from '../lib/time'
import type { Realtime } from '../realtime/hub'
import { digestSentOn, sendAtRiskDigest } from '../services/digest'
import { sendMoneyReminders } from '../services/quotes'

export const DIGEST_TIME = '07:30'
/** A server started later in the day still sends that day's digest, until midday. */
const LAST_CALL = '12:00'

type DailyDeps = Pick<Deps, 'db' | 'mailer' | 'realtime' | 'jobs'>

export async function dailyMailDone(db: Db, workshopId: number, day: string) {
  const [r] = await db
    .select({ day: s.dailyMailRuns.day })
    .from(s.dailyMailRuns)
    .where(and(eq(s.dailyMailRuns.workshopId, workshopId), eq(s.dailyMailRuns.day, day)))
  return !!r
}

/**
 * The job: reminders and digest of one workshop and day, once. The reminders' own guards (a quote's reminder once, a
 * balance once per order and day) and the digest's (once per day) still hold for the manual digest and older days.
 */
export async function runDailyMail(deps: DailyDeps, job: { workshopId: number; day: string; at: string }) {
  const emitted: Parameters<Realtime['emit']>[] = []
  const result = await deps.db.transaction(async (tx) => {
    await tx.execute(sql`select pg_advisory_xact_lock(${LOCK.dailyMail}, ${job.workshopId})`)
    const [done] = await tx
      .select()
      .from(s.dailyMailRuns)
      .where(and(eq(s.dailyMailRuns.workshopId, job.workshopId), eq(s.dailyMailRuns.day, job.day)))
    if (done) return null
    const now = new Date(job.at)
    // Events wait for the commit (a quote expired here is news only once it is).
    const realtime = Object.create(deps.realtime, { emit: { value: (...a: Parameters<Realtime['emit']>) => void emitted.push(a) } }) as Realtime
    const inTx = { ...deps, db: tx as unknown as Db, realtime }
    let reminders = 0
    try {
      reminders = await tx.transaction((sp) => sendMoneyReminders({ ...inTx, db: sp as unknown as Db }, job.workshopId, now))
    } catch (err) {
      console.error('[mail] money reminders failed:', (err as Error).message)
    }
    const digest = (await digestSentOn(inTx.db, job.workshopId, job.day)) ? null : await sendAtRiskDigest(inTx, job.workshopId, now)
    await tx.insert(s.dailyMailRuns).values({ workshopId: job.workshopId, day: job.day, reminders, digestRecipients: digest?.messages.length ?? 0 })
    return { reminders, jobs: digest?.jobs.length ?? 0, recipients: digest?.messages.length ?? 0 }
  })
  for (const a of emitted) deps.realtime.emit(...a)
  if (result?.reminders) console.log(`[mail] money reminders for workshop ${job.workshopId}: ${result.reminders}`)
  if (result?.jobs) console.log(`[mail] at-risk digest for workshop ${job.workshopId}: ${result.jobs} job bags, ${result.recipients} recipients`)
  return result
}

export function startDigestTimer(deps: DailyDeps, o: { at?: string; everyMs?: number; clock?: () => Date } = {}) {
  const at = o.at ?? DIGEST_TIME
  const clock = o.clock ?? (() => new Date())
  const handled = new Set<string>()
  let busy = false
  const tick = async () => {
    if (busy) return
    busy = true
    try {
      const now = clock()
      for (const w of await deps.db.select({ id: s.workshops.id, timeZone: s.workshops.timeZone }).from(s.workshops)) {
        const local = dayjs(now).tz(w.timeZone)
        const day = local.format('YYYY-MM-DD'),
          hm = local.format('HH:mm')
        const key = `${w.id}:${day}`
        if (hm < at || hm >= LAST_CALL || handled.has(key)) continue
        if (await dailyMailDone(deps.db, w.id, day)) {
          handled.add(key)
          continue
        }
        const job = { workshopId: w.id, day, at: now.toISOString() }
        // Asked again each minute until done: a job lost with its instance is asked for again by the next tick.
        if (deps.jobs) await deps.jobs.send(QUEUES.dailyMail, job, { singletonKey: key })
        else await runDailyMail(deps, job)
      }
    } catch (err) {
      console.error('[mail] daily mail failed:', (err as Error).message)
    } finally {
      busy = false
    }
  }
  const timer = setInterval(() => void tick(), o.everyMs ?? 60_000)
  timer.unref()
  return { tick, stop: () => clearInterval(timer) }
}
