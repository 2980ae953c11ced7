// The daily timer in the server process: once a day per workshop, from 07:30 workshop time, the money reminders (lapsed quotes
// expired, quotes ending within 3 days, balances owed on pieces ready to collect) and the at-risk digest.
import * as s from '../db/schema/index'
import type { Deps } from '../lib/route'
import { dayjs } from '../lib/time'
import { digestSentOn, sendAtRiskDigest } from '../services/mail'
import { sendMoneyReminders } from '../services/quotes'

export const DIGEST_TIME = '07:30'
/** A server started later in the day still sends that day's digest, until midday. */
const LAST_CALL = '12:00'

export function startDigestTimer(deps: Pick<Deps, 'db' | 'mailer' | 'realtime'>, o: { at?: string; everyMs?: number; clock?: () => Date } = {}) {
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
        const day = local.format('YYYY-MM-DD'), hm = local.format('HH:mm')
        const key = `${w.id}:${day}`
        if (hm < at || hm >= LAST_CALL || handled.has(key)) continue
        handled.add(key)
        // Each reminder is sent once (a quote's once, a balance once per order and day), so a restart the same day repeats none.
        try {
          const n = await sendMoneyReminders(deps, w.id, now)
          if (n) console.log(`[mail] money reminders for workshop ${w.id}: ${n}`)
        } catch (err) {
          console.error('[mail] money reminders failed:', (err as Error).message)
        }
        if (await digestSentOn(deps.db, w.id, day)) continue
        const r = await sendAtRiskDigest(deps, w.id, now)
        if (r.jobs.length) console.log(`[mail] at-risk digest for workshop ${w.id}: ${r.jobs.length} job bags, ${r.messages.length} recipients`)
      }
    } catch (err) {
      console.error('[mail] at-risk digest failed:', (err as Error).message)
    } finally {
      busy = false
    }
  }
  const timer = setInterval(() => void tick(), o.everyMs ?? 60_000)
  timer.unref()
  return { tick, stop: () => clearInterval(timer) }
}
