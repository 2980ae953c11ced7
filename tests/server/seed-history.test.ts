// The demo's finished work keeps to the demo's own calendar: every time record inside the workshop's open hours and its
// person's own pattern, on no closure or leave day, no person at two jobs at once, and nothing finished after the seed's now.
// The working-time check is written here from the clock alone (Intl time zones), not with the app's working-time code.
import { randomBytes } from 'node:crypto'
import pg from 'pg'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { countDistinct, eq, inArray, max } from 'drizzle-orm'
import { createDb, type Db } from '../../server/db/client'
import * as s from '../../server/db/schema/index'
import { runMigrations } from '../../server/db/migrate'
import { seedDemo } from '../../server/db/seed'
import { DEFAULT_PAUSE_REASONS } from '../../shared/domain/pause-reasons'
import { createTestDb, type TestDb } from '../setup/db'
import { createTestApp, signedIn, type Agent, type TestApp } from '../setup/app'

interface Span {
  weekday: number
  start: string
  end: string
}
interface Calendar {
  zone: string
  workshop: Span[]
  closures: { startsOn: string; endsOn: string }[]
  people: Map<number, { name: string; pattern: Span[] | null; leave: { startsOn: string; endsOn: string }[] }>
}

const WEEKDAY: Record<string, number> = { Mon: 1, Tue: 2, Wed: 3, Thu: 4, Fri: 5, Sat: 6, Sun: 7 }
const hhmm = (t: string) => Number(t.slice(0, 2)) * 60 + Number(t.slice(3, 5))

/** Local calendar day, ISO weekday and minute of the day (with seconds as a fraction) of a moment in a time zone. */
function local(at: Date, zone: string) {
  const parts = Object.fromEntries(
    new Intl.DateTimeFormat('en-GB', {
      timeZone: zone,
      year: 'numeric',
      month: '2-digit',
      day: '2-digit',
      weekday: 'short',
      hour: '2-digit',
      minute: '2-digit',
      second: '2-digit',
      hourCycle: 'h23',
    })
      .formatToParts(at)
      .map((p) => [p.type, p.value]),
  )
  return {
    day: `${parts.year}-${parts.month}-${parts.day}`,
    weekday: WEEKDAY[parts.weekday!]!,
    minute: Number(parts.hour) * 60 + Number(parts.minute) + Number(parts.second) / 60,
  }
}

/** Why [start, end] is not working time for this person (or null when it is): one local day, inside one span of both patterns, no closure, no leave. */
function outsideWorkingTime(cal: Calendar, personId: number | null, start: Date, end: Date): string | null {
  if (!(end > start)) return 'does not end after it starts'
  const a = local(start, cal.zone),
    b = local(end, cal.zone)
  if (a.day !== b.day) return `runs from ${a.day} into ${b.day}`
  const inside = (pattern: Span[]) => pattern.some((s) => s.weekday === a.weekday && hhmm(s.start) <= a.minute && b.minute <= hhmm(s.end))
  if (!inside(cal.workshop)) return `${a.day} (weekday ${a.weekday}) ${fmt(a.minute)}–${fmt(b.minute)} is outside the workshop's open hours`
  if (cal.closures.some((c) => c.startsOn <= a.day && a.day <= c.endsOn)) return `${a.day} the workshop is closed`
  if (personId !== null) {
    const p = cal.people.get(personId)!
    if (p.pattern && !inside(p.pattern)) return `${a.day} (weekday ${a.weekday}) ${fmt(a.minute)}–${fmt(b.minute)} is outside ${p.name}'s own working pattern`
    if (p.leave.some((l) => l.startsOn <= a.day && a.day <= l.endsOn)) return `${a.day} ${p.name} is on leave`
  }
  return null
}
const fmt = (m: number) => `${String(Math.floor(m / 60)).padStart(2, '0')}:${String(Math.floor(m % 60)).padStart(2, '0')}`

async function calendarOf(db: Db): Promise<Calendar> {
  const w = (await db.select({ id: s.workshops.id, timeZone: s.workshops.timeZone, weekPattern: s.workshops.weekPattern }).from(s.workshops))[0]!
  const closures = await db.select({ startsOn: s.closures.startsOn, endsOn: s.closures.endsOn }).from(s.closures).where(eq(s.closures.workshopId, w.id))
  const people = await db
    .select({ id: s.people.id, name: s.people.name, weekPattern: s.people.weekPattern })
    .from(s.people)
    .where(eq(s.people.workshopId, w.id))
  const leave = await db.select({ personId: s.leave.personId, startsOn: s.leave.startsOn, endsOn: s.leave.endsOn }).from(s.leave)
  return {
    zone: w.timeZone,
    workshop: w.weekPattern as Span[],
    closures,
    people: new Map(
      people.map((p) => [
        p.id,
        {
          name: p.name,
          pattern: p.weekPattern as Span[] | null,
          leave: leave.filter((l) => l.personId === p.id).map((l) => ({ startsOn: l.startsOn, endsOn: l.endsOn })),
        },
      ]),
    ),
  }
}

/** Every contradiction between the seeded history and its calendar or `now`, in words (empty when there is none). */
async function contradictions(db: Db, now: Date): Promise<{ problems: string[]; records: number; cal: Calendar; recordDays: string[] }> {
  const cal = await calendarOf(db)
  const problems: string[] = []
  const tr = s.timeRecords
  const records = (
    await db
      .select({ id: tr.id, operationId: tr.operationId, personId: tr.personId, startedAt: tr.startedAt, endedAt: tr.endedAt })
      .from(tr)
      .orderBy(tr.personId, tr.startedAt)
  ).map((r) => ({
    id: r.id,
    operation_id: r.operationId,
    person_id: r.personId,
    started_at: new Date(r.startedAt),
    ended_at: r.endedAt === null ? null : new Date(r.endedAt),
  }))
  for (const r of records) {
    if (!r.ended_at) {
      problems.push(`record ${r.id} is still running`)
      continue
    }
    const why = outsideWorkingTime(cal, r.person_id, r.started_at, r.ended_at)
    if (why) problems.push(`record ${r.id}: ${why}`)
    if (r.ended_at > now) problems.push(`record ${r.id} ends ${r.ended_at.toISOString()}, after now ${now.toISOString()}`)
  }
  for (let i = 1; i < records.length; i++) {
    const [p, r] = [records[i - 1]!, records[i]!]
    if (p.person_id === r.person_id && p.ended_at && r.started_at < p.ended_at)
      problems.push(`${cal.people.get(r.person_id)!.name} is at two jobs at once (records ${p.id} and ${r.id})`)
  }
  const lastRecord = new Map<number, Date>()
  for (const r of records) if (r.ended_at && !(lastRecord.get(r.operation_id)! >= r.ended_at)) lastRecord.set(r.operation_id, r.ended_at)
  const ops = (
    await db
      .select({
        id: s.operations.id,
        orderId: s.jobBags.orderId,
        status: s.operations.status,
        leadDays: s.operations.leadDays,
        finishedAt: s.operations.finishedAt,
      })
      .from(s.operations)
      .innerJoin(s.jobBags, eq(s.jobBags.id, s.operations.jobBagId))
  ).map((o) => ({
    id: o.id,
    order_id: o.orderId,
    status: o.status,
    lead_days: o.leadDays,
    finished_at: o.finishedAt === null ? null : new Date(o.finishedAt),
    last_record: lastRecord.get(o.id) ?? null,
  }))
  for (const o of ops) {
    if (o.status === 'done' && !o.finished_at) problems.push(`operation ${o.id} is done but has no finishing time`)
    if (o.finished_at && o.finished_at > now) problems.push(`operation ${o.id} finished ${o.finished_at.toISOString()}, after now`)
    if (o.last_record && o.finished_at && o.finished_at.getTime() !== o.last_record.getTime())
      problems.push(`operation ${o.id} finished at ${o.finished_at.toISOString()}, not when its last record ended`)
    // Outside work comes back to the workshop while it is open.
    if (o.lead_days > 0 && o.finished_at) {
      const at = local(o.finished_at, cal.zone)
      const open =
        cal.workshop.some((s) => s.weekday === at.weekday && hhmm(s.start) <= at.minute && at.minute <= hhmm(s.end)) &&
        !cal.closures.some((c) => c.startsOn <= at.day && at.day <= c.endsOn)
      if (!open) problems.push(`outside work ${o.id} came back ${at.day} (weekday ${at.weekday}) ${fmt(at.minute)}, when the workshop is not open`)
    }
  }
  const orders = (
    await db
      .select({ id: s.orders.id, number: s.orders.number, status: s.orders.status, createdAt: s.orders.createdAt, updatedAt: s.orders.updatedAt })
      .from(s.orders)
  ).map((o) => {
    const mine = ops.filter((x) => x.order_id === o.id)
    const finished = mine.reduce<Date | null>((m, x) => (x.finished_at && (!m || x.finished_at > m) ? x.finished_at : m), null)
    return {
      number: o.number,
      status: o.status,
      created_at: o.createdAt,
      updated_at: o.updatedAt,
      all_done: mine.length ? mine.every((x) => x.status === 'done' || x.status === 'skipped') : null,
      finished,
    }
  })
  for (const o of orders) {
    if (o.created_at > now) problems.push(`order ${o.number} was taken after now`)
    // An order is numbered by the two-digit year it was taken in, in the workshop's zone (as the app numbers a new one).
    const taken = new Intl.DateTimeFormat('en-GB', { timeZone: cal.zone, year: '2-digit' }).format(o.created_at)
    if (!o.number.startsWith(`MG${taken}-`)) problems.push(`order ${o.number} was taken in 20${taken}`)
    if (o.updated_at > now) problems.push(`order ${o.number} was last changed after now`)
    if (o.status === 'collected') {
      if (!o.all_done) problems.push(`order ${o.number} is collected with work not done`)
      if (!o.finished || o.finished > now) problems.push(`order ${o.number} is collected but finished ${o.finished?.toISOString()}`)
      if (o.finished && o.updated_at < o.finished) problems.push(`order ${o.number} was collected before its last step was done`)
    }
  }
  const recordDays = [...new Set(records.map((r) => local(r.started_at, cal.zone).day))].sort()
  return { problems, records: records.length, cal, recordDays }
}

const DAY_MS = 86_400_000

/** Whether a moment lies in the workshop's open hours (a span of its week, not on a closure), to the minute. */
const openAt = (cal: Calendar, at: Date) => outsideWorkingTime(cal, null, at, new Date(at.getTime() + 60_000)) === null

/** Every order taken outside the workshop's opening hours or after now, in words (empty when there is none), and how many were read. */
async function ordersTakenProblems(db: Db, now: Date): Promise<{ problems: string[]; orders: number; open: number }> {
  const cal = await calendarOf(db)
  const orders = await db.select({ number: s.orders.number, status: s.orders.status, createdAt: s.orders.createdAt }).from(s.orders)
  const problems: string[] = []
  for (const o of orders) {
    const why = outsideWorkingTime(cal, null, o.createdAt, new Date(o.createdAt.getTime() + 60_000))
    if (why) problems.push(`${o.number} (${o.status}) was taken at ${o.createdAt.toISOString()}: ${why}`)
    if (o.createdAt > now) problems.push(`${o.number} was taken after now`)
  }
  return { problems, orders: orders.length, open: orders.filter((o) => o.status === 'open').length }
}

/** Working days (the workshop's usual days, less closures) after `from`'s day up to and including `to`'s. */
function workingDaysBetween(cal: Calendar, from: Date, to: Date): number {
  const last = local(to, cal.zone).day
  let n = 0
  // Noon of each day, stepping a day at a time (the clocks change by an hour at night, so noon stays on its day).
  for (let t = Date.parse(`${local(from, cal.zone).day}T12:00:00Z`) + DAY_MS; ; t += DAY_MS) {
    const d = local(new Date(t), cal.zone)
    if (d.day > last) return n
    if (cal.workshop.some((w) => w.weekday === d.weekday) && !cal.closures.some((c) => c.startsOn <= d.day && d.day <= c.endsOn)) n++
  }
}

/**
 * Every piece of outside work finished (casting, hallmarking) that does not say when it went out as sending it out records it
 * (the moment it left as its planned start, with no bench or person), in words; and how many were read, and how many of them
 * came back before the last fortnight (the older history).
 */
async function outsideWorkProblems(db: Db, now: Date): Promise<{ problems: string[]; outside: number; older: number }> {
  const cal = await calendarOf(db)
  const ops = await db
    .select({
      id: s.operations.id,
      jobBagId: s.operations.jobBagId,
      key: s.operations.key,
      after: s.operations.after,
      leadDays: s.operations.leadDays,
      waitAfter: s.operations.waitAfterMinutes,
      status: s.operations.status,
      outside: s.operationKinds.outside,
      sentAt: s.operations.plannedStart,
      benchId: s.operations.plannedBenchId,
      personId: s.operations.plannedPersonId,
      finishedAt: s.operations.finishedAt,
      taken: s.orders.createdAt,
    })
    .from(s.operations)
    .innerJoin(s.operationKinds, eq(s.operationKinds.id, s.operations.kindId))
    .innerJoin(s.jobBags, eq(s.jobBags.id, s.operations.jobBagId))
    .innerJoin(s.orders, eq(s.orders.id, s.jobBags.orderId))
  const problems: string[] = []
  const outside = ops.filter((o) => (o.outside || o.leadDays > 0) && o.status === 'done')
  for (const o of outside) {
    const back = new Date(o.finishedAt!)
    if (!o.sentAt) {
      problems.push(`outside work ${o.id} came back ${back.toISOString()} with no moment it went out`)
      continue
    }
    const sent = new Date(o.sentAt)
    if (o.benchId !== null || o.personId !== null) problems.push(`outside work ${o.id} went out with a bench or person on it`)
    if (!openAt(cal, sent)) problems.push(`outside work ${o.id} went out ${sent.toISOString()}, when the workshop was not open`)
    if (!(sent < back)) problems.push(`outside work ${o.id} went out ${sent.toISOString()}, not before it came back ${back.toISOString()}`)
    // The piece goes once it is ready: its earlier steps finished and their waits over, and the order taken.
    const ready = Math.max(
      o.taken.getTime(),
      ...ops
        .filter((x) => x.jobBagId === o.jobBagId && o.after.includes(x.key))
        .map((x) => (x.finishedAt ? Date.parse(x.finishedAt) + x.waitAfter * 60_000 : Infinity)),
    )
    if (sent.getTime() < ready) problems.push(`outside work ${o.id} went out ${sent.toISOString()}, before the piece was ready`)
    const away = workingDaysBetween(cal, sent, back)
    if (away < o.leadDays) problems.push(`outside work ${o.id} was away ${away} working days, under its ${o.leadDays}`)
  }
  const fortnight = tenWorkingDaysBack(cal, now)
  return { problems, outside: outside.length, older: outside.filter((o) => new Date(o.finishedAt!) < fortnight).length }
}
/** Kinds of work that take metal off the piece, so the bench weighs it out and back (inspection and outside work do not). */
const METAL_WORK = ['forging', 'sawing', 'filing', 'soldering', 'drilling', 'setting', 'polishing', 'etching']
/** How a time record may end: the work finished, or paused for one of the reasons every workshop starts with. */
const ENDINGS = ['finished', ...DEFAULT_PAUSE_REASONS.map((r) => r.code)]

/** The demo's recent history read back from its rows: bench steps finished since `since`, their job bags and their time records. */
async function finishedSince(db: Db, since: Date, now: Date) {
  const steps = (
    await db
      .select({
        id: s.operations.id,
        jobBagId: s.operations.jobBagId,
        kindId: s.operations.kindId,
        kind: s.operationKinds.code,
        outside: s.operationKinds.outside,
        requiredLevel: s.operations.requiredLevel,
        estimate: s.operations.estimateMinutes,
        finishedAt: s.operations.finishedAt,
      })
      .from(s.operations)
      .innerJoin(s.operationKinds, eq(s.operationKinds.id, s.operations.kindId))
      .where(eq(s.operations.status, 'done'))
  ).filter((o) => o.finishedAt !== null && new Date(o.finishedAt) > since && new Date(o.finishedAt) <= now)
  const records = (
    await db
      .select({
        id: s.timeRecords.id,
        operationId: s.timeRecords.operationId,
        personId: s.timeRecords.personId,
        benchId: s.timeRecords.benchId,
        startedAt: s.timeRecords.startedAt,
        endedAt: s.timeRecords.endedAt,
        endReason: s.timeRecords.endReason,
        jobBagId: s.operations.jobBagId,
        kindId: s.operations.kindId,
        requiredLevel: s.operations.requiredLevel,
      })
      .from(s.timeRecords)
      .innerJoin(s.operations, eq(s.operations.id, s.timeRecords.operationId))
  ).map((r) => ({ ...r, start: new Date(r.startedAt), end: r.endedAt === null ? null : new Date(r.endedAt) }))
  const minutesOf = (opId: number) =>
    records.filter((r) => r.operationId === opId && r.end).reduce((m, r) => m + (r.end!.getTime() - r.start.getTime()) / 60_000, 0)
  const bench = steps.filter((o) => !o.outside && records.some((r) => r.operationId === o.id)).map((o) => ({ ...o, actual: minutesOf(o.id) }))
  const bags = [...new Set(bench.map((o) => o.jobBagId))]
  return { bench, bags, records: records.filter((r) => bags.includes(r.jobBagId)) }
}

/** Each job bag's metal account worked out from its ledger rows (corrections folded in), or why it does not close. */
async function metalAccounts(db: Db, bagIds: number[]) {
  const tolerance = new Map(
    (await db.select({ kindId: s.lossTolerances.kindId, pct: s.lossTolerances.tolerancePct }).from(s.lossTolerances)).map((t) => [t.kindId, t.pct]),
  )
  const ops = await db
    .select({ id: s.operations.id, jobBagId: s.operations.jobBagId, kindId: s.operations.kindId, kind: s.operationKinds.code })
    .from(s.operations)
    .innerJoin(s.operationKinds, eq(s.operationKinds.id, s.operations.kindId))
    .where(inArray(s.operations.jobBagId, [...bagIds, -1]))
  const worked = new Set((await db.select({ id: s.timeRecords.operationId }).from(s.timeRecords)).map((r) => r.id))
  const rows = await db
    .select({ m: s.metalMovements, orderStatus: s.orders.status })
    .from(s.metalMovements)
    .innerJoin(s.jobBags, eq(s.jobBags.id, s.metalMovements.jobBagId))
    .innerJoin(s.orders, eq(s.orders.id, s.jobBags.orderId))
    .where(inArray(s.metalMovements.jobBagId, [...bagIds, -1]))
  const effective = new Map<number, number>()
  for (const { m } of rows) effective.set(m.correctsId ?? m.id, (effective.get(m.correctsId ?? m.id) ?? 0) + m.weightMg)
  return bagIds.map((bagId) => {
    const mine = rows
      .filter((r) => r.m.jobBagId === bagId && r.m.correctsId === null)
      .sort((a, b) => new Date(a.m.recordedAt).getTime() - new Date(b.m.recordedAt).getTime() || a.m.id - b.m.id)
    const problems: string[] = []
    const steps = new Map<number, { issued: number; piece: number; scrap: number; lemel: number }>()
    let brought = 0,
      onTray: number | null = null,
      delivered: number | null = null
    const sources = new Set<string>()
    for (const { m } of mine) {
      const mg = effective.get(m.id)!
      if (m.kind === 'delivered') {
        delivered = mg
        continue
      }
      const st = steps.get(m.operationId!) ?? steps.set(m.operationId!, { issued: 0, piece: 0, scrap: 0, lemel: 0 }).get(m.operationId!)!
      if (m.kind === 'issued') {
        sources.add(String(m.source))
        // The piece weighed back from one step goes out again for the next as it is; only metal not on the tray is brought in.
        if (onTray === null) brought += mg
        else if (mg !== onTray) problems.push(`step ${m.operationId} took ${mg} mg out, not the ${onTray} mg piece weighed back`)
        onTray = null
        st.issued += mg
      } else if (m.kind === 'returned') {
        st[m.form as 'piece' | 'scrap' | 'lemel'] += mg
        if (m.form === 'piece') onTray = mg
      }
    }
    let loss = 0,
      scrapAndLemel = 0
    for (const [opId, st] of steps) {
      const op = ops.find((o) => o.id === opId)!
      const lost = st.issued - st.piece - st.scrap - st.lemel
      const tol = tolerance.get(op.kindId)!
      if (lost < 0 || lost > (st.issued * 3 * tol) / 100) problems.push(`${op.kind} step ${opId} lost ${lost} mg of ${st.issued} (tolerance ${tol} %)`)
      loss += lost
      scrapAndLemel += st.scrap + st.lemel
    }
    for (const op of ops.filter((o) => o.jobBagId === bagId && METAL_WORK.includes(o.kind) && worked.has(o.id)))
      if (!steps.get(op.id)?.issued || !steps.get(op.id)?.piece) problems.push(`${op.kind} step ${op.id} was not weighed out and back`)
    const collected = mine.some((r) => r.orderStatus === 'collected')
    if (collected && delivered !== onTray) problems.push(`collected with ${delivered} mg delivered, not its last piece of ${onTray} mg`)
    if (!collected && delivered !== null) problems.push('delivered before its order was collected')
    // In − out − loss: what came in leaves as the piece (delivered, or in the workshop until collected), scrap and lemel, or is lost.
    const out = (onTray ?? 0) + scrapAndLemel
    return { bagId, weighed: mine.length > 0, brought, out, loss, balance: brought - out - loss, problems, sources: [...sources] }
  })
}

/** Everything the last week should show, in words (empty when it does). */
async function lastWeekProblems(db: Db, now: Date): Promise<string[]> {
  const cal = await calendarOf(db)
  const { bench, bags, records } = await finishedSince(db, new Date(now.getTime() - 7 * DAY_MS), now)
  const problems: string[] = []
  if (bench.length < 8) problems.push(`only ${bench.length} bench steps finished in the last 7 days`)
  if (bags.length < 3) problems.push(`only ${bags.length} job bags had a step finished in the last 7 days`)
  const people = new Set(bench.map((o) => records.filter((r) => r.operationId === o.id).map((r) => r.personId)).flat())
  if (people.size < 3) problems.push(`only ${people.size} people finished steps in the last 7 days`)
  if (!bench.some((o) => o.actual > o.estimate)) problems.push('no step of the last 7 days ran over its estimate')
  if (!bench.some((o) => o.actual < o.estimate)) problems.push('no step of the last 7 days came in under its estimate')
  const skills = await db.select().from(s.personSkills)
  const can = new Set((await db.select().from(s.benchCapabilities)).map((c) => `${c.benchId}:${c.kindId}`))
  for (const r of records) {
    const why = r.end ? outsideWorkingTime(cal, r.personId, r.start, r.end) : 'still running'
    if (why) problems.push(`record ${r.id}: ${why}`)
    if (!skills.some((k) => k.personId === r.personId && k.kindId === r.kindId && k.level >= r.requiredLevel))
      problems.push(`record ${r.id}: ${cal.people.get(r.personId)!.name} lacks the step's skill`)
    if (r.benchId === null || !can.has(`${r.benchId}:${r.kindId}`)) problems.push(`record ${r.id}: its bench cannot do the step`)
    if (!ENDINGS.includes(r.endReason ?? '')) problems.push(`record ${r.id} ends with “${r.endReason}”`)
  }
  if (!records.some((r) => r.endReason !== 'finished' && r.endReason !== 'break' && r.endReason !== 'end-of-day'))
    problems.push('no work of the last week was paused for a reason of its own')
  return problems
}

/** The start of the tenth working day back from `now` (today counts once the workshop has opened): the workshop's usual days, less closures. */
function tenWorkingDaysBack(cal: Calendar, now: Date): Date {
  let counted = 0
  for (let t = now.getTime(); ;) {
    const d = local(new Date(t), cal.zone)
    const opens = cal.workshop.filter((w) => w.weekday === d.weekday).map((w) => hhmm(w.start))
    const open = opens.length > 0 && !cal.closures.some((c) => c.startsOn <= d.day && d.day <= c.endsOn) && (t < now.getTime() || Math.min(...opens) < d.minute)
    // Local midnight of that day: this moment less its minutes since midnight on the workshop's clock (the clocks change on Sundays).
    const midnight = t - d.minute * 60_000
    if (open && ++counted === 10) return new Date(midnight)
    t = midnight - DAY_MS / 2
  }
}

/** The last ten working days' repair and paid collections, in words (empty when they are there and right). */
async function fortnightProblems(db: Db, now: Date): Promise<string[]> {
  const cal = await calendarOf(db)
  const { bags } = await finishedSince(db, tenWorkingDaysBack(cal, now), now)
  const problems: string[] = []
  const rows = await db
    .select({ bagId: s.jobBags.id, routingKind: s.jobBags.routingKind, order: s.orders })
    .from(s.jobBags)
    .innerJoin(s.orders, eq(s.orders.id, s.jobBags.orderId))
    .where(inArray(s.jobBags.id, [...bags, -1]))
  const repairs = (
    await metalAccounts(
      db,
      rows.filter((r) => r.routingKind === 'repair').map((r) => r.bagId),
    )
  ).filter((a) => a.weighed)
  if (!repairs.length) problems.push('no repair weighed in the last ten working days')
  for (const a of repairs) if (a.sources.join() !== 'customer') problems.push(`repair bag ${a.bagId} was weighed out as ${a.sources.join(' and ')}`)
  const depositPct = (await db.select({ pct: s.workshops.depositPct }).from(s.workshops))[0]!.pct
  const payments = await db.select().from(s.payments)
  const day = (d: Date | string) => local(new Date(d), cal.zone).day
  const paid = rows.filter((r) => r.order.status === 'collected' && payments.some((p) => p.orderId === r.order.id))
  if (!paid.length) problems.push('no order of the last ten working days was collected and paid')
  for (const { order } of paid) {
    const mine = payments.filter((p) => p.orderId === order.id)
    const deposit = mine.filter((p) => p.purpose === 'deposit')
    const balance = mine.filter((p) => p.purpose === 'balance')
    // The deposit the workshop asks (its % of the price, rounded to the penny) when the order is taken, the rest when it is collected.
    const asked = Math.round((order.priceQuotedMinor * depositPct) / 100)
    if (deposit.length !== 1 || deposit[0]!.amountMinor !== asked || day(deposit[0]!.receivedAt) !== day(order.createdAt))
      problems.push(`${order.number}: deposit ${JSON.stringify(deposit)} is not ${asked} on ${day(order.createdAt)}`)
    if (balance.length !== 1 || balance[0]!.amountMinor !== order.priceQuotedMinor - asked || day(balance[0]!.receivedAt) !== day(order.updatedAt))
      problems.push(`${order.number}: balance ${JSON.stringify(balance)} is not ${order.priceQuotedMinor - asked} on ${day(order.updatedAt)}`)
    for (const p of mine) {
      const at = new Date(p.receivedAt)
      const why = outsideWorkingTime(cal, null, at, new Date(at.getTime() + 60_000))
      if (why) problems.push(`${order.number}: a payment taken when the workshop was shut (${why})`)
    }
  }
  return problems
}

/** The job bags with a step finished in the last 7 days, with their metal accounts. */
async function lastWeekMetal(db: Db, now: Date) {
  const { bags } = await finishedSince(db, new Date(now.getTime() - 7 * DAY_MS), now)
  return (await metalAccounts(db, bags)).filter((a) => a.weighed)
}

/** The moments the demo says orders were taken and outside work went out, on a seeded database, as one test each. */
function takenAndSentTests(seeded: () => { db: Db; now: Date }) {
  it('when its orders are read back, then every one, the open ones too, was taken on a day the workshop was open, within its opening hours, and not after now', async () => {
    const { db, now } = seeded()
    const { problems, orders, open } = await ordersTakenProblems(db, now)
    expect(problems).toEqual([])
    expect(open, 'open orders read').toBeGreaterThanOrEqual(30)
    expect(orders).toBeGreaterThan(open)
  })

  it('when its outside work is read back, then each piece that went out, in the older history too, has the moment it left: in opening hours, once it was ready, its lead days before it came back', async () => {
    const { db, now } = seeded()
    const { problems, outside, older } = await outsideWorkProblems(db, now)
    expect(problems).toEqual([])
    expect(older, 'outside work of the older history').toBeGreaterThan(10)
    expect(outside).toBeGreaterThan(older)
  })
}

/** The three checks of the last week on a seeded database, as one test each. */
function lastWeekTests(seeded: () => { db: Db; now: Date }) {
  it('when its last week is read back, then several people finished steps at their own benches inside their working time, some over and some under the estimate, with pauses and their reasons', async () => {
    const { db, now } = seeded()
    expect(await lastWeekProblems(db, now)).toEqual([])
  })

  it('when the metal of the job bags finished in its last week is read back, then each was weighed out and back at every step and its account closes: in − out − loss = 0', async () => {
    const { db, now } = seeded()
    const accounts = await lastWeekMetal(db, now)
    expect(accounts.length, 'job bags of the last week with metal weighed').toBeGreaterThanOrEqual(3)
    expect(accounts.flatMap((a) => a.problems)).toEqual([])
    expect(accounts.map((a) => a.balance)).toEqual(accounts.map(() => 0))
    expect(accounts.every((a) => a.loss > 0 && a.brought > a.out)).toBe(true)
  })

  it('when its last ten working days are read back, then a customer’s own piece was repaired and weighed as theirs, and collected orders were paid a deposit when taken and the balance when collected', async () => {
    const { db, now } = seeded()
    expect(await fortnightProblems(db, now)).toEqual([])
  })
}

describe('the check itself', () => {
  it('when moments either side of the clock change are read in Europe/London, then they fall on the right side of the open hours', () => {
    // UK summer time starts at 01:00 UTC on the last Sunday in March (29 March 2026) and ends on the last Sunday in October
    // (Summer Time Order 2002; gov.uk "When do the clocks change?"). The workshop opens 08:30–12:30 and 13:15–17:00, Mon–Fri.
    const cal: Calendar = {
      zone: 'Europe/London',
      workshop: [1, 2, 3, 4, 5].flatMap((weekday) => [
        { weekday, start: '08:30', end: '12:30' },
        { weekday, start: '13:15', end: '17:00' },
      ]),
      closures: [],
      people: new Map(),
    }
    const ok = (a: string, b: string) => outsideWorkingTime(cal, null, new Date(a), new Date(b))
    expect(ok('2026-03-27T16:00:00Z', '2026-03-27T17:00:00Z')).toBeNull() // Fri 16:00–17:00 GMT
    expect(ok('2026-03-30T15:30:00Z', '2026-03-30T16:00:00Z')).toBeNull() // Mon 16:30–17:00 BST
    expect(ok('2026-03-30T16:00:00Z', '2026-03-30T16:30:00Z')).toMatch(/outside the workshop's open hours/) // Mon 17:00–17:30 BST
    expect(ok('2026-03-30T07:15:00Z', '2026-03-30T07:45:00Z')).toMatch(/outside/) // Mon 08:15–08:45 BST: starts before opening
    expect(ok('2026-03-29T10:00:00Z', '2026-03-29T11:00:00Z')).toMatch(/outside/) // a Sunday
    expect(ok('2026-03-31T11:00:00Z', '2026-03-31T12:30:00Z')).toMatch(/outside/) // Tue 12:00–13:30 BST runs through lunch
    expect(ok('2026-10-26T08:30:00Z', '2026-10-26T12:30:00Z')).toBeNull() // Mon after summer time: 08:30–12:30 GMT
    expect(ok('2026-03-31T21:00:00Z', '2026-04-01T01:00:00Z')).toMatch(/runs from/) // overnight
  })
})

describe('the working days the check counts', () => {
  it('when outside work goes out on a Friday and comes back the Wednesday after, then it was away three working days, two with the Tuesday closed', () => {
    // Open Monday to Friday in Europe/London; Friday 4 December 2026 to Wednesday 9 December: Monday 7, Tuesday 8, Wednesday 9.
    const cal: Calendar = {
      zone: 'Europe/London',
      workshop: [1, 2, 3, 4, 5].map((weekday) => ({ weekday, start: '08:30', end: '17:00' })),
      closures: [],
      people: new Map(),
    }
    expect(workingDaysBetween(cal, new Date('2026-12-04T16:00:00Z'), new Date('2026-12-09T10:00:00Z'))).toBe(3)
    expect(
      workingDaysBetween(
        { ...cal, closures: [{ startsOn: '2026-12-08', endsOn: '2026-12-08' }] },
        new Date('2026-12-04T16:00:00Z'),
        new Date('2026-12-09T10:00:00Z'),
      ),
    ).toBe(2)
    // Across the clocks going back (Sunday 25 October 2026): Friday 23 to Monday 26 October is one working day.
    expect(workingDaysBetween(cal, new Date('2026-10-23T15:00:00Z'), new Date('2026-10-26T09:00:00Z'))).toBe(1)
  })
})

describe('the seeded demo in the template database', () => {
  let t: TestDb
  let seededAt: Date
  beforeAll(async () => {
    t = await createTestDb()
    // The seed ran (with the real clock) in the transaction that created the workshop, so the workshop's creation is not before the seed's now.
    seededAt = (await t.db.select({ createdAt: s.workshops.createdAt }).from(s.workshops))[0]!.createdAt
  })
  afterAll(async () => {
    await t?.drop()
  })

  it('when its history is read back, then every time record is working time for its person, nobody is at two jobs at once and nothing is finished after now', async () => {
    const { problems, records, cal, recordDays } = await contradictions(t.db, seededAt)
    expect(problems).toEqual([])
    expect(records).toBeGreaterThanOrEqual(300)
    // The check has something to bite on: a past closure and someone's past leave fall inside the history, and people with their own pattern worked in it.
    const within = (x: { startsOn: string; endsOn: string }) => recordDays[0]! <= x.startsOn && x.endsOn <= recordDays.at(-1)!
    expect(cal.closures.filter(within).length).toBeGreaterThan(0)
    expect([...cal.people.values()].flatMap((p) => p.leave).filter(within).length).toBeGreaterThan(0)
    const own = [...cal.people.entries()].filter(([, p]) => p.pattern).map(([id]) => id)
    expect(
      (
        await t.db
          .select({ n: countDistinct(s.timeRecords.personId) })
          .from(s.timeRecords)
          .where(inArray(s.timeRecords.personId, own))
      )[0]!.n,
    ).toBe(own.length)
  })

  lastWeekTests(() => ({ db: t.db, now: seededAt }))
  takenAndSentTests(() => ({ db: t.db, now: seededAt }))
})

describe('the seeded demo through the owner’s Insights', () => {
  let app: TestApp
  let owner: Agent
  beforeAll(async () => {
    app = await createTestApp()
    owner = await signedIn(app.app, 'owner')
  })
  afterAll(async () => {
    await app?.close()
  })

  it('when the owner asks for estimated against actual hours by person over the last week, then the steps finished in it are there, counted as they are in the rows', async () => {
    const now = (await app.db.select({ createdAt: s.workshops.createdAt }).from(s.workshops))[0]!.createdAt
    const zone = 'Europe/London'
    // The last week as the owner picks it: from the day a week ago to today, whole days on the workshop's clock.
    const from = local(new Date(now.getTime() - 7 * DAY_MS), zone).day
    const to = local(now, zone).day
    const { bench } = await finishedSince(app.db, new Date(now.getTime() - 8 * DAY_MS), now)
    // Counted here: bench steps finished on a day of the range, with time recorded, actual within a tenth and ten times the estimate.
    const inRange = bench.filter((o) => {
      const d = local(new Date(o.finishedAt!), zone).day
      return from <= d && d <= to && o.actual >= o.estimate * 0.1 && o.actual <= o.estimate * 10
    })
    const r = await owner.get('/api/insights/comparison').query({ groupBy: 'person', from, to })
    expect(r.status).toBe(200)
    expect(r.body.rows.length, JSON.stringify(r.body)).toBeGreaterThanOrEqual(3)
    expect(r.body.total.n).toBe(inRange.length)
    const minutes = inRange.reduce((m, o) => m + o.actual, 0)
    expect(r.body.total.actualHours).toBeCloseTo(minutes / 60, 1)
  })
})

/** A database of its own with the demo seeded at `now`, for the describe block it is called in. */
function seededOn(now: Date): { db: Db } {
  const name = `h_${randomBytes(6).toString('hex')}`
  const admin = () => new pg.Client({ connectionString: `postgres://postgres@127.0.0.1:${process.env.TEST_PG_PORT}/postgres` })
  const out = {} as { db: Db }
  let pool: pg.Pool | undefined
  beforeAll(async () => {
    const c = admin()
    await c.connect()
    await c.query(`create database ${name}`) // Raw SQL on purpose: making a database is not a table write
    await c.end()
    const made = createDb(`postgres://postgres@127.0.0.1:${process.env.TEST_PG_PORT}/${name}`, 2)
    pool = made.pool
    out.db = made.db
    await runMigrations(made.db)
    expect(await seedDemo(made.db, { now })).toBe(true)
  }, 180_000)
  afterAll(async () => {
    await pool?.end()
    const c = admin()
    await c.connect()
    await c.query(`drop database if exists ${name} with (force)`)
    await c.end()
  })
  return out
}

describe('the demo seeded with a clock it is given', () => {
  // Monday 13 April 2026, 07:45 in London, before opening: the history runs over the clocks going forward (29 March) and
  // the last open minute before now was Friday 10 April at 17:00 BST (16:00 UTC).
  const now = new Date('2026-04-13T06:45:00Z')
  const seeded = seededOn(now)
  // Its last week: Tuesday 7 to Friday 10 April (Easter Monday, 6 April, is a bank holiday).
  lastWeekTests(() => ({ db: seeded.db, now }))
  takenAndSentTests(() => ({ db: seeded.db, now }))

  it('when its history is read back, then it keeps to the calendar across the clock change and ends before the given now', async () => {
    const { problems, records, recordDays } = await contradictions(seeded.db, now)
    expect(problems).toEqual([])
    expect(records).toBeGreaterThanOrEqual(300)
    expect(recordDays[0]! < '2026-03-29' && recordDays.at(-1)! > '2026-03-29').toBe(true)
    const last = new Date((await seeded.db.select({ m: max(s.timeRecords.endedAt) }).from(s.timeRecords))[0]!.m!)
    expect(last <= new Date('2026-04-10T16:00:00Z')).toBe(true)
  })
})

describe('the demo seeded on a Friday night in December', () => {
  // Friday 4 December 2026, 01:45 in London: nine days on is Sunday 13 December, so the lathe's service moves to Monday 14;
  // seventeen days on, the stocktake, is Monday 21 December.
  const now = new Date('2026-12-04T01:45:00Z')
  const seeded = seededOn(now)
  lastWeekTests(() => ({ db: seeded.db, now }))
  takenAndSentTests(() => ({ db: seeded.db, now }))

  it('when its metal is read back, then a job bag’s piece weighed out again is still what the bag was first weighed out as', async () => {
    // The bench's own rule (README, Metal): a customer's piece stays the customer's metal at every step, stock stays stock.
    const issued = await seeded.db
      .select({ jobBagId: s.metalMovements.jobBagId, source: s.metalMovements.source, at: s.metalMovements.recordedAt, id: s.metalMovements.id })
      .from(s.metalMovements)
      .where(eq(s.metalMovements.kind, 'issued'))
    const first = new Map<number, string>()
    const wrong: string[] = []
    for (const m of [...issued].sort((a, b) => new Date(a.at as unknown as string).getTime() - new Date(b.at as unknown as string).getTime() || a.id - b.id)) {
      if (m.jobBagId === null) continue
      const was = first.get(m.jobBagId)
      if (was === undefined) first.set(m.jobBagId, String(m.source))
      else if (was !== String(m.source)) wrong.push(`job bag ${m.jobBagId}: first out as ${was}, later as ${m.source}`)
    }
    expect([...first.values()].filter((v) => v === 'customer').length, 'the demo has customers’ pieces').toBeGreaterThan(0)
    expect(wrong).toEqual([])
  })

  it('when its calendar is read back, then the downtime and the stocktake fall on weekdays and the bank holidays are closures', async () => {
    const down = await seeded.db.select({ startsAt: s.benchDowntime.startsAt }).from(s.benchDowntime)
    expect(down.map((d) => new Date(d.startsAt).toISOString().slice(0, 10))).toEqual(['2026-12-14'])
    const closed = (await seeded.db.select({ name: s.closures.name, startsOn: s.closures.startsOn }).from(s.closures))
      .map((c) => `${c.startsOn} ${c.name}`)
      .sort()
    // England and Wales bank holidays from four months back to six months ahead (the UK government's published list, from
    // memory): 31 Aug 2026; 25 and 28 (Boxing Day's substitute) Dec 2026; 1 Jan, 26 and 29 Mar, 3 and 31 May 2027.
    expect(closed.filter((c) => c.includes('Bank holiday')).map((c) => c.slice(0, 10))).toEqual([
      '2026-08-31',
      '2026-12-25',
      '2026-12-28',
      '2027-01-01',
      '2027-03-26',
      '2027-03-29',
      '2027-05-03',
      '2027-05-31',
    ])
    expect(closed).toContain('2026-12-21 Workshop closed: stocktake')
    const { problems } = await contradictions(seeded.db, now)
    expect(problems).toEqual([])
  })
})

describe('the demo seeded on a Saturday evening in June', () => {
  // Saturday 20 June 2026, 19:30 in London (18:30 UTC, summer time): the workshop has been shut since Friday 17:00, and orders
  // the demo takes over the last days must still fall in its opening hours, not at this hour of a Saturday or a Sunday.
  const now = new Date('2026-06-20T18:30:00Z')
  const seeded = seededOn(now)
  takenAndSentTests(() => ({ db: seeded.db, now }))
})
