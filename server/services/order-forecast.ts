// An order's forecast on the live plan: each job bag's expected finish, late, tight or on time and why (the order's drawer), the
// same reckoning for a page of the order list in one read of the live plan, and why an order could not be booked when it was made.
import { and, asc, desc, eq, inArray, ne } from 'drizzle-orm'
import type { JobBagForecast, OrderForecast } from '../../shared/schemas/promise'
import type { OrderExpected } from '../../shared/schemas/order'
import { formatWorkingTime } from '../../shared/domain/working-time'
import type { Db } from '../db/client'
import type { Cache } from '../lib/cache'
import * as s from '../db/schema/index'
import type { Actor, Deps } from '../lib/route'
import { dayjs, formatDay, formatInstant } from '../lib/time'
import { boardData, liveJobFinishes, type JobFinish } from './board'
import { requireOwned } from './versioned'

/** Orders whose work is over: ready to collect, collected or cancelled (the list shows no forecast for them). */
const OVER = ['ready', 'collected', 'cancelled']

/** Working time late or to spare against the end of the due day, in the board's words ("1 working day 2 h late", "only 3 h to spare"). */
export function forecastMargin(j: Pick<JobFinish, 'state' | 'lateWorkingMinutes'>, dayMinutes: number): string {
  if (j.state === 'late') return `${formatWorkingTime(j.lateWorkingMinutes, dayMinutes)} late`
  if (j.state === 'at-risk') return `only ${formatWorkingTime(-j.lateWorkingMinutes, dayMinutes)} to spare`
  return `${formatWorkingTime(-j.lateWorkingMinutes, dayMinutes)} to spare`
}

/**
 * The forecast's sentence for a planned job bag, in the board's measure: working time late or to spare (open hours, rounded as
 * the board rounds them), against the end of its due day written as a day ("Fri 11 Dec"). `when` writes the expected finish.
 * A job bag with no bar says what would give it one: a plan published, or — when one is live — the planner's next run.
 */
export function forecastWhy(
  j: Pick<JobFinish, 'state' | 'expectedCompletion' | 'lateWorkingMinutes' | 'reason'>,
  o: { due: string; dayMinutes: number; timeZone: string; now: Date; when: (iso: string) => string; livePlan: boolean },
): string {
  if (j.state === 'unplanned') {
    if (j.reason) return `Not planned: ${j.reason} (casting and forging wait until it is paid).`
    return o.livePlan
      ? 'Not in the live plan yet: run the planner to place it, then publish its plan to get a date.'
      : 'Not on the live plan yet: publish a plan to get a date.'
  }
  const expected = `Expected ${o.when(j.expectedCompletion!)}`
  const dueDay = `due by the end of ${formatDay(o.due, o.timeZone, o.now)}`
  const because = j.reason && j.state !== 'on-time' ? ` Last step: ${j.reason}.` : ''
  return `${expected}, ${forecastMargin(j, o.dayMinutes)} (${dueDay}).${because}`
}

type BagRow = Pick<typeof s.jobBags.$inferSelect, 'id' | 'status'>
type OrderRow = Pick<typeof s.orders.$inferSelect, 'status'>

/** A job bag of an order against its finish on the live plan: there (late, tight, on time or unplanned), finished, or not on it. */
function bagOutlook(order: OrderRow, bag: BagRow, j: JobFinish | undefined) {
  if (j) return { ...j, finished: false }
  const finished = bag.status === 'complete' || ['ready', 'collected'].includes(order.status)
  return {
    state: finished ? ('finished' as const) : ('unplanned' as const),
    expectedCompletion: null,
    latenessMinutes: 0,
    lateWorkingMinutes: 0,
    reason: null,
    stepsOffPlan: 0,
    finished,
  }
}

/** Why the order was not booked into the live plan when it was made (its latest booking in the audit), while work of it is still off the plan. */
async function notBooked(db: Db, workshopId: number, orderId: number) {
  const a = s.auditLog
  const [last] = await db
    .select({ action: a.action, details: a.details, at: a.at })
    .from(a)
    .where(and(eq(a.workshopId, workshopId), eq(a.entity, 'order'), eq(a.entityId, orderId), inArray(a.action, ['book', 'not-booked'])))
    .orderBy(desc(a.id))
    .limit(1)
  if (last?.action !== 'not-booked' || typeof last.details.reason !== 'string') return null
  return { reason: last.details.reason, at: new Date(last.at).toISOString() }
}

/** Expected completion of each job bag of an order on the live plan (cancelled ones left out), whether it is at risk or late, and why. */
export async function orderForecast(deps: Deps, actor: Actor, orderId: number, now = new Date()): Promise<OrderForecast> {
  const order = await requireOwned(deps.db, s.orders, 'Order', orderId, actor.workshopId)
  const [w] = await deps.db.select({ timeZone: s.workshops.timeZone }).from(s.workshops).where(eq(s.workshops.id, actor.workshopId))
  const tz = w!.timeZone
  const day = dayjs(now).tz(tz).format('YYYY-MM-DD')
  const board = await boardData(deps.db, actor.workshopId, { from: day, to: day, now })
  // A cancelled job bag will not be made: it has no finish to forecast and does not hold the order's back (as in the list).
  const bags = await deps.db
    .select()
    .from(s.jobBags)
    .where(and(eq(s.jobBags.orderId, orderId), ne(s.jobBags.status, 'cancelled')))
    .orderBy(asc(s.jobBags.number))
  const due = order.promisedDate ?? order.dueDate
  const when = (iso: string) => formatInstant(iso, tz, now)
  const jobBags: JobBagForecast[] = bags.map((b) => {
    const j = board.jobs.find((x) => x.jobBagId === b.id)
    const base = { jobBagId: b.id, number: b.number, piece: b.piece, status: b.status, stepsOffPlan: j?.stepsOffPlan ?? 0 }
    if (!j) {
      const { state, finished } = bagOutlook(order, b, undefined)
      return {
        ...base,
        expectedCompletion: null,
        expectedDate: null,
        state,
        latenessMinutes: 0,
        why: finished ? 'Finished.' : `Not on the plan (order ${order.status}, job bag ${b.status}).`,
      }
    }
    const expectedDate = j.expectedCompletion ? dayjs(j.expectedCompletion).tz(tz).format('YYYY-MM-DD') : null
    const why = forecastWhy(j, { due, dayMinutes: board.dayMinutes, timeZone: tz, now, when, livePlan: board.plan !== null })
    return { ...base, expectedCompletion: j.expectedCompletion, expectedDate, state: j.state, latenessMinutes: j.latenessMinutes, why }
  })
  const rank: JobBagForecast['state'][] = ['late', 'at-risk', 'unplanned', 'on-time', 'finished']
  const state = jobBags.map((x) => x.state).sort((a, b) => rank.indexOf(a) - rank.indexOf(b))[0] ?? 'unplanned'
  const offPlan = jobBags.some((x) => x.state === 'unplanned' || x.stepsOffPlan > 0)
  return {
    orderId: order.id,
    number: order.number,
    status: order.status,
    due: order.dueDate,
    promisedDate: order.promisedDate,
    timeZone: tz,
    plan: board.plan ? { id: board.plan.id, number: board.plan.number, publishedAt: board.plan.publishedAt } : null,
    state,
    jobBags,
    notBooked: offPlan ? await notBooked(deps.db, actor.workshopId, order.id) : null,
  }
}

/**
 * The forecast of each order of a list page still in the workshop (null for one ready, collected or cancelled): the day its last
 * planned step ends on the live plan re-timed against the calendar, how that stands against its due day (the promised day when
 * there is one) in the forecast's words, and whether steps of it are off the plan — the job bags' finishes as the drawer reads
 * them (`jobFinishes`), for the page's job bags only, from one read of the live plan (kept in the app's cache). Cancelled job
 * bags leave no mark; an order whose bags are all cancelled says so (`cancelled`) rather than "not in the plan".
 */
export async function listForecasts(
  { db, cache }: { db: Db; cache?: Cache },
  workshopId: number,
  orders: readonly { id: number; status: string }[],
  now = new Date(),
): Promise<Map<number, OrderExpected | null>> {
  const out = new Map<number, OrderExpected | null>(orders.map((o) => [o.id, null]))
  const open = orders.filter((o) => !OVER.includes(o.status))
  if (!open.length) return out
  const bags = await db
    .select({ id: s.jobBags.id, orderId: s.jobBags.orderId, status: s.jobBags.status })
    .from(s.jobBags)
    .where(
      inArray(
        s.jobBags.orderId,
        open.map((o) => o.id),
      ),
    )
  const { jobs, dayMinutes, timeZone } = await liveJobFinishes(
    db,
    workshopId,
    bags.map((b) => b.id),
    { cache, now },
  )
  for (const order of open) {
    const all = bags.filter((b) => b.orderId === order.id)
    const cancelled = all.length > 0 && all.every((b) => b.status === 'cancelled')
    const mine = all.filter((b) => b.status !== 'cancelled').map((b) => bagOutlook(order, b, jobs.get(b.id)))
    const done = mine.length > 0 && mine.every((x) => x.finished)
    const planned = mine.filter((x) => x.expectedCompletion !== null)
    const last = planned.reduce<(typeof planned)[number] | null>(
      (m, x) => (!m || Date.parse(x.expectedCompletion!) > Date.parse(m.expectedCompletion!) ? x : m),
      null,
    )
    const risk = last && last.state !== 'unplanned' && last.state !== 'finished' ? last.state : null
    const someOff = mine.some((x) => x.state === 'unplanned' || x.stepsOffPlan > 0)
    out.set(order.id, {
      date: last ? dayjs(last.expectedCompletion).tz(timeZone).format('YYYY-MM-DD') : null,
      risk,
      margin: last && risk ? forecastMargin({ state: risk, lateWorkingMinutes: last.lateWorkingMinutes }, dayMinutes) : null,
      offPlan: done || cancelled ? 'none' : !last ? 'all' : someOff ? 'some' : 'none',
      done,
      cancelled,
    })
  }
  return out
}
