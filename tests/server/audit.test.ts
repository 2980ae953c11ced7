// The audit trail: who drafted, published, discarded and moved plans; who claimed, started, finished, added and corrected
// time; who changed estimates and users — and no API route can edit or delete it.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { and, asc, desc, eq, gt, inArray, isNotNull, lte, sql } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { allRoutes } from '../../server/routes/index'
import { waitForRun } from '../../server/planning/runs'
import { createTestApp, DEMO_EMAIL, signedIn, type Agent, type TestApp } from '../setup/app'
import { benchId, makeReady, openOps, personIdOf, rid } from './bench-fixtures'
import { userIdOf } from './helpers'
import { unplanOpenSteps } from '../setup/fixtures'

let t: TestApp
let owner: Agent
let manager: Agent
let setter: Agent
const who = {} as Record<'owner' | 'manager' | 'bench', number>

beforeAll(async () => {
  t = await createTestApp()
  owner = await signedIn(t.app, 'owner')
  manager = await signedIn(t.app, 'manager')
  setter = await signedIn(t.app, 'bench')
  for (const r of ['owner', 'manager', 'bench'] as const) who[r] = await userIdOf(t, DEMO_EMAIL[r])
})
afterAll(async () => {
  await t?.close()
})

interface Row {
  action: string
  entity: string
  entity_id: number | null
  user_id: number | null
  details: Record<string, any>
  at: Date
}
async function rows(entity: string, entityId: number, action?: string): Promise<Row[]> {
  const a = s.auditLog
  return t.db
    .select({ action: a.action, entity: a.entity, entity_id: a.entityId, user_id: a.userId, details: a.details, at: a.at })
    .from(a)
    .where(and(eq(a.entity, entity), eq(a.entityId, entityId), action ? eq(a.action, action) : undefined))
    .orderBy(desc(a.id))
}

async function draft(): Promise<number> {
  const r = await manager.post('/api/plans/runs', { timeLimitSeconds: 1 })
  expect(r.status, JSON.stringify(r.body)).toBe(202)
  const done = await waitForRun(t.db, r.body.id)
  expect(done?.status).toBe('done')
  return done!.planId!
}

describe('plans', () => {
  it('when the manager drafts, publishes, discards and pins or moves, then each is in the audit log with the manager as the one who did it', async () => {
    const first = await draft()
    expect(await rows('plan', first, 'draft')).toMatchObject([{ user_id: who.manager, details: { weightedTardiness: expect.any(Number) } }])
    expect((await manager.post(`/api/plans/${first}/publish`)).status).toBe(200)
    expect(await rows('plan', first, 'publish')).toMatchObject([{ user_id: who.manager }])

    const o = s.operations
    const op = (
      await t.db
        .select({ id: o.id, version: o.version, planned_start: o.plannedStart, planned_bench_id: o.plannedBenchId })
        .from(o)
        // A bar that starts an hour or more from now: moving it to its own start must not fall into the past while the test runs.
        .where(and(isNotNull(o.plannedStart), gt(o.plannedStart, sql`now() + interval '1 hour'`), inArray(o.status, ['pending', 'ready'])))
        .orderBy(asc(o.id))
        .limit(1)
    )[0]!
    const pin = await manager.patch(`/api/board/operations/${op.id}`, { pinned: true, version: op.version })
    expect(pin.status, JSON.stringify(pin.body)).toBe(200)
    expect((await rows('operation', op.id, 'pin'))[0]).toMatchObject({ user_id: who.manager, details: { pinned: true } })
    const move = await manager.patch(`/api/board/operations/${op.id}`, {
      start: new Date(op.planned_start!).toISOString(),
      benchId: op.planned_bench_id,
      version: pin.body.version,
    })
    expect(move.status, JSON.stringify(move.body)).toBe(200)
    expect((await rows('operation', op.id, 'move'))[0]).toMatchObject({
      user_id: who.manager,
      details: { benchId: op.planned_bench_id, start: expect.any(String) },
    })

    // The planner offers a draft only when it beats the live plan: empty the live plan's unpinned bars first.
    await unplanOpenSteps(t.db)
    const second = await draft()
    expect((await manager.post(`/api/plans/${second}/discard`)).status).toBe(200)
    expect(await rows('plan', second, 'discard')).toMatchObject([{ user_id: who.manager }])
  })
})

describe('time records', () => {
  it('when the setter claims, starts and finishes a step, and the manager adds and corrects time, then each is audited with who did it', async () => {
    const setA = await benchId(t, 'Setting bench A')
    const setterPerson = await personIdOf(t, DEMO_EMAIL.bench)
    const [op] = await openOps(t, 'setting', { key: 'set' })
    await makeReady(t, op!.id)
    for (const step of ['claim', 'start', 'finish'] as const) {
      const r = await setter.post(`/api/bench/operations/${op!.id}/${step}`, { requestId: rid(), benchId: setA, acknowledgeHazards: true })
      expect(r.status, `${step}: ${JSON.stringify(r.body)}`).toBe(200)
      expect((await rows('operation', op!.id, step))[0], step).toMatchObject({ user_id: who.bench })
    }
    const add = await manager.post(`/api/operations/${op!.id}/time-records`, {
      personId: setterPerson,
      benchId: setA,
      startedAt: '2026-01-05T09:00:00Z',
      endedAt: '2026-01-05T09:40:00Z',
      reason: 'forgot to tap start on Monday',
    })
    expect(add.status, JSON.stringify(add.body)).toBe(201)
    const added = (await rows('operation', op!.id, 'add-time'))[0]!
    expect(added).toMatchObject({ user_id: who.manager, details: { personId: setterPerson, reason: 'forgot to tap start on Monday' } })
    const recordId = added.details.timeRecordId as number
    const fix = await manager.post(`/api/time-records/${recordId}/corrections`, { endedAt: '2026-01-05T09:30:00Z', reason: 'left for lunch at half past' })
    expect(fix.status, JSON.stringify(fix.body)).toBe(201)
    expect((await rows('operation', op!.id, 'correct-time'))[0]).toMatchObject({
      user_id: who.manager,
      details: { timeRecordId: recordId, reason: 'left for lunch at half past' },
    })
    const voided = await manager.post(`/api/time-records/${recordId}/corrections`, { void: true, reason: 'double booking' })
    expect(voided.status).toBe(201)
    expect((await rows('operation', op!.id, 'void-time'))[0]).toMatchObject({ user_id: who.manager, details: { to: 'void' } })
  })
})

describe('estimates', () => {
  it('when a step estimate is changed on a job bag and the owner accepts new routing minutes, then both are audited with from, to and why', async () => {
    const o = s.operations
    const op = (
      await t.db
        .select({ id: o.id, version: o.version, job_bag_id: o.jobBagId, estimate_minutes: o.estimateMinutes })
        .from(o)
        .innerJoin(s.jobBags, eq(s.jobBags.id, o.jobBagId))
        .innerJoin(s.orders, eq(s.orders.id, s.jobBags.orderId))
        .where(and(eq(s.orders.status, 'open'), eq(o.status, 'pending')))
        .orderBy(asc(o.id))
        .limit(1)
    )[0]!
    const r = await manager.patch(`/api/job-bags/${op.job_bag_id}/operations/${op.id}`, {
      estimateMinutes: Number(op.estimate_minutes) + 30,
      reason: 'heavier casting than usual',
      version: op.version,
    })
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    const step = (await rows('operation', op.id, 'update-step'))[0]
    expect(step).toMatchObject({ user_id: who.manager })
    expect(JSON.stringify(step!.details)).toContain('heavier casting than usual')
    expect(JSON.stringify(step!.details)).toContain(String(Number(op.estimate_minutes) + 30))

    const routing = (await owner.get('/api/routings')).body[0]
    const s0 = routing.steps[0]
    const acc = await owner.post('/api/estimates/accept', {
      routingId: routing.id,
      stepKey: s0.key,
      baseMinutes: s0.baseMinutes + 5,
      perStoneMinutes: s0.perStoneMinutes,
      routingVersion: routing.version,
      reason: 'our own times say so',
    })
    expect(acc.status, JSON.stringify(acc.body)).toBe(200)
    const a = (await rows('routing', routing.id, 'accept-estimate'))[0]
    expect(a).toMatchObject({ user_id: who.owner })
    expect(JSON.stringify(a!.details)).toContain(s0.key)
  })
})

describe('users', () => {
  it('when the owner creates a user, changes the role and resets the password, then it is audited without the password itself', async () => {
    const password = 'a-long-enough-secret-42'
    const c = await owner.post('/api/users', { email: 'polisher@wrenfield.test', name: 'New Polisher', role: 'bench', password })
    expect(c.status, JSON.stringify(c.body)).toBe(201)
    expect(await rows('user', c.body.id, 'create')).toMatchObject([{ user_id: who.owner, details: { email: 'polisher@wrenfield.test', role: 'bench' } }])
    const u = await owner.patch(`/api/users/${c.body.id}`, { role: 'sales', password: 'another-long-secret-43', version: c.body.version })
    expect(u.status, JSON.stringify(u.body)).toBe(200)
    const [upd] = await rows('user', c.body.id, 'update')
    expect(upd).toMatchObject({ user_id: who.owner, details: { role: 'sales', password: 'changed' } })
    const all = (await t.db.select({ details: s.auditLog.details }).from(s.auditLog).where(eq(s.auditLog.entity, 'user'))).map((r) => ({
      d: JSON.stringify(r.details),
    }))
    for (const r of all) {
      expect(r.d).not.toContain(password)
      expect(r.d).not.toContain('another-long-secret-43')
      expect(r.d).not.toMatch(/\$argon2/)
    }
  })
})

describe('the audit log itself', () => {
  it("when the route list is read, then no route writes, edits or deletes audit rows, and any route that reads them is the owner's", () => {
    const auditRoutes = allRoutes.filter((r) => /audit/i.test(r.path))
    expect(auditRoutes.filter((r) => r.method !== 'get').map((r) => `${r.method} ${r.path}`)).toEqual([])
    for (const r of auditRoutes) expect(r.roles, `${r.method} ${r.path}`).toEqual(['owner'])
  })

  it('when every write route is called by the owner with placeholder input, then the rows already in the audit log are unchanged', async () => {
    const a = s.auditLog
    const read = (upTo?: number) =>
      t.db
        .select({
          id: a.id,
          action: a.action,
          entity: a.entity,
          entityId: a.entityId,
          userId: a.userId,
          workshopId: a.workshopId,
          details: a.details,
          at: a.at,
        })
        .from(a)
        .where(upTo === undefined ? undefined : lte(a.id, upTo))
        .orderBy(asc(a.id))
    const before = await read()
    for (const r of allRoutes.filter((x) => x.method !== 'get' && x.path !== '/session')) {
      const path = `/api${r.path.replace(/:[a-zA-Z]+/g, '1')}`
      await (r.method === 'delete' ? owner.delete(path) : owner[r.method](path, { id: before[0]?.id ?? 1, auditId: 1, action: 'nothing happened' }))
    }
    const after = await read(before[before.length - 1]?.id ?? 0)
    expect(after).toEqual(before)
  })
})
