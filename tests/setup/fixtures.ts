// Named builders for database fixtures in the API and browser tests, written with Drizzle on the schema so a renamed column fails the type check.
import { and, asc, desc, eq, gte, inArray, isNull, lt, max, notInArray, sql, type SQL } from 'drizzle-orm'
import { intersect, walkWorkingTime } from '../../server/scheduler/calendar.ts'
import { loadPlanningData } from '../../server/planning/problem'
import type { Db } from '../../server/db/client'
import * as s from '../../server/db/schema/index'

/** The VAT terms of an order or payment written by a fixture where VAT plays no part: the demo workshop's, not registered. */
export const WITHOUT_VAT = { vatRegistered: false, vatNumber: '', vatRateBasisPoints: 2000 } as const

/** The demo workshop (the first one). */
export async function firstWorkshopId(db: Db): Promise<number> {
  const [w] = await db.select({ id: s.workshops.id }).from(s.workshops).orderBy(asc(s.workshops.id)).limit(1)
  return w!.id
}

/** The first customer (of one workshop, when given). */
export async function firstCustomerId(db: Db, workshopId?: number): Promise<number> {
  const [c] = await db
    .select({ id: s.customers.id })
    .from(s.customers)
    .where(workshopId == null ? undefined : eq(s.customers.workshopId, workshopId))
    .orderBy(asc(s.customers.id))
    .limit(1)
  return c!.id
}

/** A routing by its code, or the first one. */
export async function routingId(db: Db, code?: string): Promise<number> {
  const [r] = await db
    .select({ id: s.routings.id })
    .from(s.routings)
    .where(code == null ? undefined : eq(s.routings.code, code))
    .orderBy(asc(s.routings.id))
    .limit(1)
  if (!r) throw new Error(`no routing ${code ?? ''} in the test database`)
  return r.id
}

export async function benchIdByName(db: Db, name: string): Promise<number> {
  const [b] = await db.select({ id: s.benches.id }).from(s.benches).where(eq(s.benches.name, name))
  if (!b) throw new Error(`no bench named ${name}`)
  return b.id
}

export async function userIdByEmail(db: Db, email: string): Promise<number> {
  const [u] = await db.select({ id: s.users.id }).from(s.users).where(eq(s.users.email, email))
  if (!u) throw new Error(`no user ${email}`)
  return u.id
}

/** The person at a bench who signs in with this e-mail. */
export async function personIdByEmail(db: Db, email: string): Promise<number> {
  const [p] = await db.select({ id: s.people.id }).from(s.people).innerJoin(s.users, eq(s.users.id, s.people.userId)).where(eq(s.users.email, email))
  if (!p) throw new Error(`no person for ${email}`)
  return p.id
}

/** Marks every predecessor of the operation (transitively, by its `after` keys) done, finished yesterday so any wait-after is long over. */
export async function finishPredecessors(db: Db, operationId: number): Promise<number[]> {
  const [me] = await db.select({ jobBagId: s.operations.jobBagId }).from(s.operations).where(eq(s.operations.id, operationId))
  if (!me) throw new Error(`no operation ${operationId}`)
  const ops = await db
    .select({ id: s.operations.id, key: s.operations.key, after: s.operations.after })
    .from(s.operations)
    .where(eq(s.operations.jobBagId, me.jobBagId))
  const byKey = new Map(ops.map((o) => [o.key, o]))
  const seen = new Set<number>()
  const stack = [...ops.find((o) => o.id === operationId)!.after]
  while (stack.length) {
    const p = byKey.get(stack.pop()!)
    if (!p || seen.has(p.id)) continue
    seen.add(p.id)
    stack.push(...p.after)
  }
  if (seen.size)
    await db
      .update(s.operations)
      .set({ status: 'done', finishedAt: sql`now() - interval '1 day'` })
      .where(inArray(s.operations.id, [...seen]))
  return [...seen]
}

/** Finishes the operation's predecessors and makes it ready and unclaimed, straight in the database. */
export async function readyStep(db: Db, operationId: number): Promise<void> {
  await finishPredecessors(db, operationId)
  await db.update(s.operations).set({ status: 'ready', claimedBy: null }).where(eq(s.operations.id, operationId))
}

/** Books an operation on the board: bench, person and times (ISO or Date). */
export async function planStep(
  db: Db,
  operationId: number,
  at: { benchId: number | null; personId: number | null; start: string | Date; end: string | Date },
): Promise<void> {
  const iso = (d: string | Date) => (typeof d === 'string' ? d : d.toISOString())
  await db
    .update(s.operations)
    .set({ plannedBenchId: at.benchId, plannedPersonId: at.personId, plannedStart: iso(at.start), plannedEnd: iso(at.end) })
    .where(eq(s.operations.id, operationId))
}

const UNPLANNED = { plannedBenchId: null, plannedPersonId: null, plannedStart: null, plannedEnd: null }

/** Takes operations off the board (all of them when no ids are given). */
export async function unplanSteps(db: Db, ids?: number[]): Promise<void> {
  await db
    .update(s.operations)
    .set(UNPLANNED)
    .where(ids ? inArray(s.operations.id, ids) : undefined)
}

/** Takes every open, unpinned step off the board (what a first planner run starts from); running, finished and skipped ones keep their place. */
export async function unplanOpenSteps(db: Db): Promise<void> {
  await db
    .update(s.operations)
    .set(UNPLANNED)
    .where(and(notInArray(s.operations.status, ['running', 'done', 'skipped']), eq(s.operations.pinned, false)))
}

/** An open order's waiting or ready steps with no lead days, earliest first (the ones a promise check may book around). */
export async function openStepIds(db: Db, o: { limit?: number; unplanned?: boolean } = {}): Promise<number[]> {
  const q = db
    .select({ id: s.operations.id })
    .from(s.operations)
    .innerJoin(s.jobBags, eq(s.jobBags.id, s.operations.jobBagId))
    .innerJoin(s.orders, eq(s.orders.id, s.jobBags.orderId))
    .where(
      and(
        inArray(s.orders.status, ['open', 'in-work']),
        inArray(s.operations.status, ['ready', 'pending']),
        eq(s.operations.leadDays, 0),
        o.unplanned ? isNull(s.operations.plannedStart) : undefined,
      ),
    )
    .orderBy(asc(s.operations.id))
  return (await (o.limit ? q.limit(o.limit) : q)).map((r) => r.id)
}

/** An open, ready bench step of the demo (not outside work) with a person skilled for it and a bench that hosts it. */
export async function readyBenchStep(
  db: Db,
  skip: number[] = [],
): Promise<{ id: number; kindId: number; number: string; estimate: number; personId: number; benchId: number }> {
  const [op] = await db
    .select({
      id: s.operations.id,
      kindId: s.operations.kindId,
      requiredLevel: s.operations.requiredLevel,
      estimate: s.operations.estimateMinutes,
      number: s.jobBags.number,
    })
    .from(s.operations)
    .innerJoin(s.jobBags, eq(s.jobBags.id, s.operations.jobBagId))
    .innerJoin(s.orders, eq(s.orders.id, s.jobBags.orderId))
    .innerJoin(s.operationKinds, eq(s.operationKinds.id, s.operations.kindId))
    .where(
      and(
        eq(s.operations.status, 'ready'),
        inArray(s.orders.status, ['open', 'in-work']),
        eq(s.operationKinds.outside, false),
        eq(s.operations.leadDays, 0),
        skip.length ? notInArray(s.operations.id, skip) : undefined,
      ),
    )
    .orderBy(asc(s.operations.id))
    .limit(1)
  if (!op) throw new Error('no ready bench step left in the test database')
  const [who] = await db
    .select({ personId: s.personSkills.personId })
    .from(s.personSkills)
    .innerJoin(s.people, eq(s.people.id, s.personSkills.personId))
    .where(and(eq(s.personSkills.kindId, op.kindId), gte(s.personSkills.level, op.requiredLevel), eq(s.people.active, true)))
    .orderBy(asc(s.personSkills.personId))
    .limit(1)
  const [where] = await db
    .select({ benchId: s.benchCapabilities.benchId })
    .from(s.benchCapabilities)
    .innerJoin(s.benches, eq(s.benches.id, s.benchCapabilities.benchId))
    .where(and(eq(s.benchCapabilities.kindId, op.kindId), eq(s.benches.active, true)))
    .orderBy(asc(s.benchCapabilities.benchId))
    .limit(1)
  return { id: op.id, kindId: op.kindId, number: op.number, estimate: op.estimate, personId: who!.personId, benchId: where!.benchId }
}

/** A workshop of its own (London time, Monday 09:00–17:00 unless told) with the given users. */
export async function addWorkshop(
  db: Db,
  o: {
    name: string
    weekPattern?: (typeof s.workshops.$inferInsert)['weekPattern']
    users?: { email: string; name: string; role: 'owner' | 'manager' | 'bench' | 'sales'; passwordHash: string }[]
  },
): Promise<{ workshopId: number; userIds: number[] }> {
  const [w] = await db
    .insert(s.workshops)
    .values({ name: o.name, timeZone: 'Europe/London', weekPattern: o.weekPattern ?? [{ weekday: 1, start: '09:00', end: '17:00' }] })
    .returning({ id: s.workshops.id })
  const users = o.users?.length
    ? await db
        .insert(s.users)
        .values(o.users.map((u) => ({ ...u, workshopId: w!.id })))
        .returning({ id: s.users.id })
    : []
  return { workshopId: w!.id, userIds: users.map((u) => u.id) }
}

/** A person at a bench (with an account when userId is given) and their skills by operation kind code. */
export async function addPerson(
  db: Db,
  o: { workshopId: number; name: string; userId?: number; skills?: { codes: string[]; level: number; speed?: number } },
): Promise<number> {
  const [p] = await db
    .insert(s.people)
    .values({ workshopId: o.workshopId, name: o.name, userId: o.userId ?? null })
    .returning({ id: s.people.id })
  if (o.skills) {
    const kinds = await db
      .select({ id: s.operationKinds.id })
      .from(s.operationKinds)
      .where(and(eq(s.operationKinds.workshopId, o.workshopId), inArray(s.operationKinds.code, o.skills.codes)))
    if (kinds.length)
      await db.insert(s.personSkills).values(kinds.map((k) => ({ personId: p!.id, kindId: k.id, level: o.skills!.level, speed: o.skills!.speed ?? 1 })))
  }
  return p!.id
}

/** The first open order (skipping `offset`) and its first job bag. */
export async function openOrder(db: Db, offset = 0): Promise<{ id: number; number: string; version: number; bagId: number; bagNumber: string }> {
  const [o] = await db
    .select({ id: s.orders.id, number: s.orders.number, version: s.orders.version })
    .from(s.orders)
    .where(eq(s.orders.status, 'open'))
    .orderBy(asc(s.orders.id))
    .offset(offset)
    .limit(1)
  if (!o) throw new Error('no open order left in the test database')
  const [b] = await db
    .select({ id: s.jobBags.id, number: s.jobBags.number })
    .from(s.jobBags)
    .where(eq(s.jobBags.orderId, o.id))
    .orderBy(asc(s.jobBags.id))
    .limit(1)
  return { ...o, bagId: b!.id, bagNumber: b!.number }
}

/**
 * Books a job bag's last bench step on the live plan past its order's promised date: on the first bench and person, `minutes` of their
 * shared working time from `fromMinute` working-calendar minutes after now, and the order promised on the date `promised(end)` gives.
 */
export async function bookLastStepLate(
  db: Db,
  o: { workshopId: number; orderId: number; bagId: number; fromMinute?: number; minutes?: number; promised: (end: Date) => string },
): Promise<{ operationId: number; start: Date; end: Date }> {
  const data = await loadPlanningData(db, o.workshopId, new Date())
  const b = data.problem.benches[0]!,
    p = data.problem.people[0]!
  const segs = walkWorkingTime(intersect(b.available, p.available), data.problem.now + (o.fromMinute ?? 0), o.minutes ?? 60)!
  const start = data.clock.toDate(segs[0]!.start),
    end = data.clock.toDate(segs.at(-1)!.end)
  await db
    .update(s.orders)
    .set({ promisedDate: o.promised(end) })
    .where(eq(s.orders.id, o.orderId))
  const [op] = await db
    .select({ id: s.operations.id })
    .from(s.operations)
    .where(and(eq(s.operations.jobBagId, o.bagId), eq(s.operations.leadDays, 0)))
    .orderBy(desc(s.operations.seq))
    .limit(1)
  await planStep(db, op!.id, { benchId: Number(b.id), personId: Number(p.id), start, end })
  return { operationId: op!.id, start, end }
}

/** An alloy of the workshop by its code (e.g. 'au750y'). */
export async function alloyIdByCode(db: Db, code: string): Promise<number> {
  const [a] = await db.select({ id: s.alloys.id }).from(s.alloys).where(eq(s.alloys.code, code)).orderBy(asc(s.alloys.id)).limit(1)
  if (!a) throw new Error(`no alloy ${code}`)
  return a.id
}

/** An order's first job bag. */
export async function jobBagOfOrder(db: Db, orderId: number): Promise<number> {
  const [b] = await db.select({ id: s.jobBags.id }).from(s.jobBags).where(eq(s.jobBags.orderId, orderId)).orderBy(asc(s.jobBags.id)).limit(1)
  if (!b) throw new Error(`order ${orderId} has no job bag`)
  return b.id
}

/** The steps of an order (or of one job bag), id by step key. */
export async function stepIdsByKey(db: Db, of: { orderId: number } | { jobBagId: number }): Promise<Record<string, number>> {
  const rows = await db
    .select({ key: s.operations.key, id: s.operations.id })
    .from(s.operations)
    .innerJoin(s.jobBags, eq(s.jobBags.id, s.operations.jobBagId))
    .where('orderId' in of ? eq(s.jobBags.orderId, of.orderId) : eq(s.operations.jobBagId, of.jobBagId))
  return Object.fromEntries(rows.map((r) => [r.key, r.id]))
}

/**
 * A step finished by hand: done at `finishedAt` (ISO, or SQL such as now()), its estimate when given, and one finished time record
 * per entry; gives the time records' ids.
 */
export async function finishedStep(
  db: Db,
  operationId: number,
  o: {
    finishedAt: string | SQL
    estimateMinutes?: number
    records?: { personId: number; start: string | SQL; end: string | SQL }[]
  },
): Promise<number[]> {
  await db
    .update(s.operations)
    .set({ status: 'done', finishedAt: o.finishedAt, ...(o.estimateMinutes == null ? {} : { estimateMinutes: o.estimateMinutes }) })
    .where(eq(s.operations.id, operationId))
  if (!o.records?.length) return []
  const rows = await db
    .insert(s.timeRecords)
    .values(o.records.map((r) => ({ operationId, personId: r.personId, startedAt: r.start, endedAt: r.end, endReason: 'finished' })))
    .returning({ id: s.timeRecords.id })
  return rows.map((r) => r.id)
}

/** A row of the metal ledger for a job bag, in that job bag's workshop. */
export async function addMetalMovement(
  db: Db,
  m: Omit<typeof s.metalMovements.$inferInsert, 'workshopId' | 'jobBagId' | 'recordedAt'> & { jobBagId: number; recordedAt: string | SQL },
): Promise<number> {
  const [bag] = await db.select({ workshopId: s.jobBags.workshopId }).from(s.jobBags).where(eq(s.jobBags.id, m.jobBagId))
  if (!bag) throw new Error(`no job bag ${m.jobBagId}`)
  const [row] = await db
    .insert(s.metalMovements)
    .values({ ...m, workshopId: bag.workshopId })
    .returning({ id: s.metalMovements.id })
  return row!.id
}

/** A line of a job bag's stone list, with the stones counted on it (issued, set, broken…) recorded at `recordedAt` (default now). */
export async function addStoneLine(
  db: Db,
  line: typeof s.jobBagStones.$inferInsert,
  movements: { kind: (typeof s.stoneMovements.$inferInsert)['kind']; count: number }[] = [],
  recordedAt: string | SQL = sql`now()`,
): Promise<number> {
  const [row] = await db.insert(s.jobBagStones).values(line).returning({ id: s.jobBagStones.id })
  if (movements.length) await db.insert(s.stoneMovements).values(movements.map((m) => ({ ...m, stoneLineId: row!.id, recordedAt })))
  return row!.id
}

/**
 * The first step of an open order matching a kind code, a step key, a routing code, a status (any when not given) and any
 * further condition on the operation, job bag or order, ordered by the order's due date and then the job bag's number
 * (or by job bag id, `order: 'bag'`).
 */
export async function openOrderStep(
  db: Db,
  o: { kind?: string; key?: string; routing?: string; status?: string; where?: SQL; order?: 'due' | 'bag' },
): Promise<{ id: number; jobBagId: number; name: string; after: string[]; params: (typeof s.jobBags.$inferSelect)['params'] } | undefined> {
  const [op] = await db
    .select({ id: s.operations.id, jobBagId: s.operations.jobBagId, name: s.operations.name, after: s.operations.after, params: s.jobBags.params })
    .from(s.operations)
    .innerJoin(s.operationKinds, eq(s.operationKinds.id, s.operations.kindId))
    .innerJoin(s.jobBags, eq(s.jobBags.id, s.operations.jobBagId))
    .innerJoin(s.orders, eq(s.orders.id, s.jobBags.orderId))
    .leftJoin(s.routings, eq(s.routings.id, s.jobBags.routingId))
    .where(
      and(
        inArray(s.orders.status, ['open', 'in-work']),
        o.kind == null ? undefined : eq(s.operationKinds.code, o.kind),
        o.key == null ? undefined : eq(s.operations.key, o.key),
        o.routing == null ? undefined : eq(s.routings.code, o.routing),
        o.status == null ? undefined : eq(s.operations.status, o.status),
        o.where,
      ),
    )
    .orderBy(...(o.order === 'bag' ? [asc(s.jobBags.id)] : [asc(s.orders.dueDate), asc(s.jobBags.number)]))
    .limit(1)
  return op
}

/** Marks steps of a job bag done, finished yesterday so any wait-after is long over: those before a step in routing order, or all but some keys. */
export async function finishSteps(db: Db, jobBagId: number, which: { before: number } | { exceptKeys: string[] }): Promise<void> {
  const before = 'before' in which ? (await db.select({ seq: s.operations.seq }).from(s.operations).where(eq(s.operations.id, which.before)))[0] : undefined
  if ('before' in which && !before) throw new Error(`no operation ${which.before}`)
  await db
    .update(s.operations)
    .set({ status: 'done', finishedAt: sql`now() - interval '1 day'` })
    .where(
      and(
        eq(s.operations.jobBagId, jobBagId),
        before ? lt(s.operations.seq, before.seq) : notInArray(s.operations.key, (which as { exceptKeys: string[] }).exceptKeys),
      ),
    )
}

/** Sets a step's status straight in the database (its neighbours untouched). */
export async function setStepStatus(db: Db, operationId: number, status: string): Promise<void> {
  await db.update(s.operations).set({ status }).where(eq(s.operations.id, operationId))
}

/** Changes some of a job bag's piece figures (stone count, ring size…) straight in the database, keeping the others. */
export async function setPieceParams(db: Db, jobBagId: number, patch: Partial<(typeof s.jobBags.$inferSelect)['params']>): Promise<void> {
  const [bag] = await db.select({ params: s.jobBags.params }).from(s.jobBags).where(eq(s.jobBags.id, jobBagId))
  if (!bag) throw new Error(`no job bag ${jobBagId}`)
  await db
    .update(s.jobBags)
    .set({ params: { ...bag.params, ...patch } })
    .where(eq(s.jobBags.id, jobBagId))
}

/** A draft (as a planner run saves it) of the first workshop, made from its live plan as it is now, holding the given bars. */
export async function addDraft(db: Db, bars: { operationId: number; benchId: number | null; personId: number | null; start: string; end: string }[]) {
  const workshopId = await firstWorkshopId(db)
  const [live] = await db
    .select({ id: s.planVersions.id })
    .from(s.planVersions)
    .where(and(eq(s.planVersions.workshopId, workshopId), eq(s.planVersions.status, 'published')))
  const [last] = await db
    .select({ n: max(s.planVersions.number) })
    .from(s.planVersions)
    .where(eq(s.planVersions.workshopId, workshopId))
  const [row] = await db
    .insert(s.planVersions)
    .values({
      workshopId,
      number: (last?.n ?? 0) + 1,
      status: 'draft',
      score: { feasible: true, violations: [], basedOnPlanId: live?.id ?? null },
      assignments: Object.fromEntries(bars.map((b) => [String(b.operationId), b])),
    })
    .returning({ id: s.planVersions.id })
  return row!.id
}
