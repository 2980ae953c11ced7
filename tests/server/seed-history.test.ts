// The demo's finished work keeps to the demo's own calendar: every time record inside the workshop's open hours and its
// person's own pattern, on no closure or leave day, no person at two jobs at once, and nothing finished after the seed's now.
// The working-time check is written here from the clock alone (Intl time zones), not with the app's working-time code.
import { randomBytes } from 'node:crypto'
import pg from 'pg'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { createDb } from '../../server/db/client'
import { runMigrations } from '../../server/db/migrate'
import { seedDemo } from '../../server/db/seed'
import { createTestDb, type TestDb } from '../setup/db'

interface Span { weekday: number; start: string; end: string }
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
  const parts = Object.fromEntries(new Intl.DateTimeFormat('en-GB', {
    timeZone: zone, year: 'numeric', month: '2-digit', day: '2-digit', weekday: 'short', hour: '2-digit', minute: '2-digit', second: '2-digit', hourCycle: 'h23',
  }).formatToParts(at).map((p) => [p.type, p.value]))
  return { day: `${parts.year}-${parts.month}-${parts.day}`, weekday: WEEKDAY[parts.weekday!]!, minute: Number(parts.hour) * 60 + Number(parts.minute) + Number(parts.second) / 60 }
}

/** Why [start, end] is not working time for this person (or null when it is): one local day, inside one span of both patterns, no closure, no leave. */
function outsideWorkingTime(cal: Calendar, personId: number | null, start: Date, end: Date): string | null {
  if (!(end > start)) return 'does not end after it starts'
  const a = local(start, cal.zone), b = local(end, cal.zone)
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

async function calendarOf(pool: pg.Pool): Promise<Calendar> {
  const [w] = (await pool.query(`select id, time_zone, week_pattern from workshops`)).rows
  const closures = (await pool.query(`select starts_on::text, ends_on::text from closures where workshop_id = $1`, [w.id])).rows
  const people = (await pool.query(`select id, name, week_pattern from people where workshop_id = $1`, [w.id])).rows
  const leave = (await pool.query(`select person_id, starts_on::text, ends_on::text from leave`)).rows
  return {
    zone: w.time_zone, workshop: w.week_pattern,
    closures: closures.map((c) => ({ startsOn: c.starts_on, endsOn: c.ends_on })),
    people: new Map(people.map((p) => [p.id, { name: p.name, pattern: p.week_pattern, leave: leave.filter((l) => l.person_id === p.id).map((l) => ({ startsOn: l.starts_on, endsOn: l.ends_on })) }])),
  }
}

/** Every contradiction between the seeded history and its calendar or `now`, in words (empty when there is none). */
async function contradictions(pool: pg.Pool, now: Date): Promise<{ problems: string[]; records: number; cal: Calendar; recordDays: string[] }> {
  const cal = await calendarOf(pool)
  const problems: string[] = []
  const records = (await pool.query(`select id, operation_id, person_id, started_at, ended_at from time_records order by person_id, started_at`)).rows
  for (const r of records) {
    if (!r.ended_at) { problems.push(`record ${r.id} is still running`); continue }
    const why = outsideWorkingTime(cal, r.person_id, r.started_at, r.ended_at)
    if (why) problems.push(`record ${r.id}: ${why}`)
    if (r.ended_at > now) problems.push(`record ${r.id} ends ${r.ended_at.toISOString()}, after now ${now.toISOString()}`)
  }
  for (let i = 1; i < records.length; i++) {
    const [p, r] = [records[i - 1]!, records[i]!]
    if (p.person_id === r.person_id && r.started_at < p.ended_at) problems.push(`${cal.people.get(r.person_id)!.name} is at two jobs at once (records ${p.id} and ${r.id})`)
  }
  const ops = (await pool.query(`select o.id, o.status, o.lead_days, o.finished_at, (select max(t.ended_at) from time_records t where t.operation_id = o.id) as last_record from operations o`)).rows
  for (const o of ops) {
    if (o.status === 'done' && !o.finished_at) problems.push(`operation ${o.id} is done but has no finishing time`)
    if (o.finished_at && o.finished_at > now) problems.push(`operation ${o.id} finished ${o.finished_at.toISOString()}, after now`)
    if (o.last_record && o.finished_at && o.finished_at.getTime() !== o.last_record.getTime()) problems.push(`operation ${o.id} finished at ${o.finished_at.toISOString()}, not when its last record ended`)
    // Outside work comes back to the workshop while it is open.
    if (o.lead_days > 0 && o.finished_at) {
      const at = local(o.finished_at, cal.zone)
      const open = cal.workshop.some((s) => s.weekday === at.weekday && hhmm(s.start) <= at.minute && at.minute <= hhmm(s.end)) && !cal.closures.some((c) => c.startsOn <= at.day && at.day <= c.endsOn)
      if (!open) problems.push(`outside work ${o.id} came back ${at.day} (weekday ${at.weekday}) ${fmt(at.minute)}, when the workshop is not open`)
    }
  }
  const orders = (await pool.query(`select o.number, o.status, o.created_at, o.updated_at, (select bool_and(x.status in ('done', 'skipped')) from operations x join job_bags b on b.id = x.job_bag_id where b.order_id = o.id) as all_done,
    (select max(x.finished_at) from operations x join job_bags b on b.id = x.job_bag_id where b.order_id = o.id) as finished from orders o`)).rows
  for (const o of orders) {
    if (o.created_at > now) problems.push(`order ${o.number} was taken after now`)
    if (o.updated_at > now) problems.push(`order ${o.number} was last changed after now`)
    if (o.status === 'collected') {
      if (!o.all_done) problems.push(`order ${o.number} is collected with work not done`)
      if (!o.finished || o.finished > now) problems.push(`order ${o.number} is collected but finished ${o.finished?.toISOString()}`)
      if (o.updated_at < o.finished) problems.push(`order ${o.number} was collected before its last step was done`)
    }
  }
  const recordDays = [...new Set(records.map((r) => local(r.started_at, cal.zone).day))].sort()
  return { problems, records: records.length, cal, recordDays }
}

describe('the check itself', () => {
  it('when moments either side of the clock change are read in Europe/London, then they fall on the right side of the open hours', () => {
    // UK summer time starts at 01:00 UTC on the last Sunday in March (29 March 2026) and ends on the last Sunday in October
    // (Summer Time Order 2002; gov.uk "When do the clocks change?"). The workshop opens 08:30–12:30 and 13:15–17:00, Mon–Fri.
    const cal: Calendar = { zone: 'Europe/London', workshop: [1, 2, 3, 4, 5].flatMap((weekday) => [{ weekday, start: '08:30', end: '12:30' }, { weekday, start: '13:15', end: '17:00' }]), closures: [], people: new Map() }
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

describe('the seeded demo in the template database', () => {
  let t: TestDb
  beforeAll(async () => { t = await createTestDb() })
  afterAll(async () => { await t?.drop() })

  it('when its history is read back, then every time record is working time for its person, nobody is at two jobs at once and nothing is finished after now', async () => {
    // The seed ran (with the real clock) in the transaction that created the workshop, so the workshop's creation is not before the seed's now.
    const [{ created_at: seededAt }] = (await t.pool.query(`select created_at from workshops`)).rows
    const { problems, records, cal, recordDays } = await contradictions(t.pool, seededAt)
    expect(problems).toEqual([])
    expect(records).toBeGreaterThanOrEqual(300)
    // The check has something to bite on: a past closure and someone's past leave fall inside the history, and people with their own pattern worked in it.
    const within = (x: { startsOn: string; endsOn: string }) => recordDays[0]! <= x.startsOn && x.endsOn <= recordDays.at(-1)!
    expect(cal.closures.filter(within).length).toBeGreaterThan(0)
    expect([...cal.people.values()].flatMap((p) => p.leave).filter(within).length).toBeGreaterThan(0)
    const own = [...cal.people.entries()].filter(([, p]) => p.pattern).map(([id]) => id)
    expect((await t.pool.query(`select count(distinct person_id)::int as n from time_records where person_id = any($1)`, [own])).rows[0].n).toBe(own.length)
  })
})

describe('the demo seeded with a clock it is given', () => {
  // Monday 13 April 2026, 07:45 in London, before opening: the history runs over the clocks going forward (29 March) and
  // the last open minute before now was Friday 10 April at 17:00 BST (16:00 UTC).
  const now = new Date('2026-04-13T06:45:00Z')
  const name = `h_${randomBytes(6).toString('hex')}`
  const admin = () => new pg.Client({ connectionString: `postgres://postgres@127.0.0.1:${process.env.TEST_PG_PORT}/postgres` })
  let pool: pg.Pool
  beforeAll(async () => {
    const c = admin()
    await c.connect()
    await c.query(`create database ${name}`) // Raw SQL on purpose: making a database is not a table write
    await c.end()
    const made = createDb(`postgres://postgres@127.0.0.1:${process.env.TEST_PG_PORT}/${name}`, 2)
    pool = made.pool
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

  it('when its history is read back, then it keeps to the calendar across the clock change and ends before the given now', async () => {
    const { problems, records, recordDays } = await contradictions(pool, now)
    expect(problems).toEqual([])
    expect(records).toBeGreaterThanOrEqual(300)
    expect(recordDays[0]! < '2026-03-29' && recordDays.at(-1)! > '2026-03-29').toBe(true)
    const last = (await pool.query(`select max(ended_at) as m from time_records`)).rows[0].m as Date
    expect(last <= new Date('2026-04-10T16:00:00Z')).toBe(true)
  })
})
