// The managers' daily digest of job bags at risk or late on the live plan, read from the board and sent through the outbox.
import { and, desc, eq } from 'drizzle-orm'
import type { AtRiskDigestSent } from '../../shared/schemas/mail'
import type { Db } from '../db/client'
import * as s from '../db/schema/index'
import { notFound } from '../errors/app-error'
import type { Deps } from '../lib/route'
import { dayjs } from '../lib/time'
import * as t from '../mail/messages'
import { boardData } from './board'
import { sendRecorded } from './mail'

/**
 * The managers' digest of job bags at risk or late on the live plan; those not in the previous digest are marked new.
 * Sends nothing when no job bag is at risk. Managers receive it; owners when the workshop has no manager.
 */
export async function sendAtRiskDigest(deps: Pick<Deps, 'db' | 'mailer' | 'jobs'>, workshopId: number, now = new Date()): Promise<AtRiskDigestSent> {
  const [w] = await deps.db.select().from(s.workshops).where(eq(s.workshops.id, workshopId))
  if (!w) throw notFound('Workshop')
  const day = dayjs(now).tz(w.timeZone).format('YYYY-MM-DD')
  const board = await boardData(deps.db, workshopId, { from: day, to: day, now })
  const risky = board.jobs.filter((j) => j.state === 'at-risk' || j.state === 'late')
  const [last] = await deps.db
    .select({ meta: s.outbox.meta })
    .from(s.outbox)
    .where(and(eq(s.outbox.workshopId, workshopId), eq(s.outbox.kind, 'at-risk-digest')))
    .orderBy(desc(s.outbox.id))
    .limit(1)
  const before = new Set((last?.meta?.jobBagIds as number[] | undefined) ?? [])
  const jobs: t.DigestLine[] = risky.map((j) => ({
    number: j.number,
    piece: j.piece,
    orderNumber: j.orderNumber,
    due: j.due,
    state: j.state,
    reason: j.reason,
    isNew: !before.has(j.jobBagId),
    expected: j.expectedCompletion ? dayjs(j.expectedCompletion).tz(w.timeZone).format('ddd D MMM HH:mm') : null,
  }))
  if (!jobs.length) return { day, jobs: [], messages: [] }
  let to = await deps.db
    .select({ email: s.users.email })
    .from(s.users)
    .where(and(eq(s.users.workshopId, workshopId), eq(s.users.role, 'manager'), eq(s.users.active, true)))
  if (!to.length)
    to = await deps.db
      .select({ email: s.users.email })
      .from(s.users)
      .where(and(eq(s.users.workshopId, workshopId), eq(s.users.role, 'owner'), eq(s.users.active, true)))
  const content = t.atRiskDigest({ workshopName: w.name, day, jobs })
  const meta = { day, jobBagIds: risky.map((j) => j.jobBagId) }
  const messages = []
  for (const u of to) messages.push(await sendRecorded(deps, { workshopId, to: u.email, kind: 'at-risk-digest', meta, content }))
  return { day, jobs, messages }
}

/** Whether today's digest went out already (the daily timer asks before sending). */
export async function digestSentOn(db: Db, workshopId: number, day: string) {
  const rows = await db
    .select({ meta: s.outbox.meta })
    .from(s.outbox)
    .where(and(eq(s.outbox.workshopId, workshopId), eq(s.outbox.kind, 'at-risk-digest')))
    .orderBy(desc(s.outbox.id))
    .limit(1)
  return rows[0]?.meta?.day === day
}
