// What the planner cannot work with, arriving through the API or the database: impossible skills and absurd durations
// answer 422 naming the job bag and the step; routings that go round in a circle cannot be saved at all.
import { afterEach, beforeEach, describe, expect, it } from 'vitest'
import { MAX_OPERATION_MINUTES } from '../../server/scheduler/check'
import { and, asc, count, eq, inArray, notInArray, sql } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { createTestApp, signedIn, type Agent, type TestApp } from '../setup/app'
import { expectCleanError, expectFieldError } from './helpers'
import { benchId, extraSetters, freshReady, personIdOf, rid } from './bench-fixtures'
import { loadPlanningData } from '../../server/planning/problem'
import { waitForRun } from '../../server/planning/runs'

let t: TestApp
let manager: Agent
beforeEach(async () => {
  t = await createTestApp()
  manager = await signedIn(t.app, 'manager')
})
afterEach(async () => {
  await t?.close()
})

/** A step still to do on a job bag of an open order, done at a bench (not outside work). */
async function openStep(kindCode?: string) {
  const o = s.operations,
    jb = s.jobBags,
    k = s.operationKinds
  const [op] = await t.db
    .select({ id: o.id, name: o.name, version: o.version, kind_id: o.kindId, bag_id: jb.id, number: jb.number, bag_version: jb.version })
    .from(o)
    .innerJoin(jb, eq(jb.id, o.jobBagId))
    .innerJoin(s.orders, eq(s.orders.id, jb.orderId))
    .innerJoin(k, eq(k.id, o.kindId))
    .where(
      and(
        eq(s.orders.status, 'open'),
        notInArray(jb.status, ['complete', 'cancelled']),
        inArray(o.status, ['pending', 'ready']),
        eq(k.outside, false),
        kindCode == null ? undefined : eq(k.code, kindCode),
      ),
    )
    .orderBy(asc(s.orders.dueDate), asc(jb.number), asc(o.seq))
    .limit(1)
  expect(op, 'the demo data has an open step').toBeTruthy()
  return op!
}

async function planRun() {
  return manager.post('/api/plans/runs', { timeLimitSeconds: 1 })
}

/** The 422 names the job bag by number and the step by name, and points at both ids. */
function expectNamed(r: Awaited<ReturnType<typeof planRun>>, bag: { number: string; id: number }, step: { name: string; id: number }, reason: string) {
  expectCleanError(r, 422)
  expect(r.body.code).toBe('unprocessable')
  expect(r.body.error).toContain(`Job bag ${bag.number}`)
  expect(r.body.error).toContain(`"${step.name}"`)
  expect(r.body.details).toMatchObject({ reason, jobBagId: bag.id, operationId: step.id })
}

describe('impossible skills', () => {
  it('when a step is added through the API with a kind of work nobody has, then starting the planner answers 422 naming the job bag and the step', async () => {
    const kind = await manager.post('/api/operation-kinds', { code: 'enamel-champleve', name: 'Champlevé enamel' })
    expect(kind.status, JSON.stringify(kind.body)).toBe(201)
    const step = await openStep()
    const add = await manager.post(`/api/job-bags/${step.bag_id}/operations`, {
      kindId: kind.body.id,
      name: 'Enamel the bezel',
      estimateMinutes: 90,
      reason: 'customer asked for colour',
      version: step.bag_version,
    })
    expect(add.status, JSON.stringify(add.body)).toBe(201)
    const [added] = await t.db
      .select({ id: s.operations.id, name: s.operations.name })
      .from(s.operations)
      .where(and(eq(s.operations.jobBagId, step.bag_id), eq(s.operations.kindId, kind.body.id)))
    const r = await planRun()
    expectNamed(r, { number: step.number, id: step.bag_id }, added!, 'no-option')
    expect(r.body.error).toMatch(/add the skill to someone or a suitable bench/)
  })

  it('when a step requires a level that no person with that skill reaches, then starting the planner answers 422 naming the job bag and the step', async () => {
    const step = await openStep()
    // Everybody who has this kind of work is at most level 2; the step asks for level 3 (set through the API).
    await t.db
      .update(s.personSkills)
      .set({ level: sql`least(${s.personSkills.level}, 2)` })
      .where(eq(s.personSkills.kindId, step.kind_id))
    const patch = await manager.patch(`/api/job-bags/${step.bag_id}/operations/${step.id}`, { requiredLevel: 3, version: step.version })
    expect(patch.status, JSON.stringify(patch.body)).toBe(200)
    expectNamed(await planRun(), { number: step.number, id: step.bag_id }, step, 'no-option')
  })
})

describe('work in someone’s hands when their skills change', () => {
  /** A ready setting step the setter claims (and starts, when asked) at Setting bench A; her person, the bench and the step row. */
  async function setterTakes(start: boolean) {
    const setter = await signedIn(t.app, 'bench')
    const op = await freshReady(t, 'setting', 'set')
    const bench = await benchId(t, 'Setting bench A')
    const person = await personIdOf(t, 'setter@wrenfield.test')
    const claim = await setter.post(`/api/bench/operations/${op.id}/claim`, { requestId: rid(), benchId: bench })
    expect(claim.status, JSON.stringify(claim.body)).toBe(200)
    if (start) {
      const r = await setter.post(`/api/bench/operations/${op.id}/start`, { requestId: rid(), benchId: bench })
      expect(r.status, JSON.stringify(r.body)).toBe(200)
    }
    const [row] = await t.db
      .select({ kindId: s.operations.kindId, estimate: s.operations.estimateMinutes, level: s.operations.requiredLevel })
      .from(s.operations)
      .where(eq(s.operations.id, op.id))
    return { op, bench, person, row: row! }
  }
  /**
   * Replaces one person's skills through the API, as the manager's people screen does. A second setter (level 3) joins first:
   * the demo has one setter, and other setting steps must still have someone.
   */
  async function changeSkills(
    personId: number,
    change: (skills: { kindId: number; level: number; speed: number }[]) => { kindId: number; level: number; speed: number }[],
  ) {
    await extraSetters(t, 1, 'cover')
    const me = (await manager.get('/api/people')).body.find((p: { id: number }) => p.id === personId)
    const r = await manager.patch(`/api/people/${personId}`, { skills: change(me.skills), version: me.version })
    expect(r.status, JSON.stringify(r.body)).toBe(200)
  }
  async function plansThrough() {
    const r = await planRun()
    expect(r.status, JSON.stringify(r.body)).toBe(202)
    const done = await waitForRun(t.db, r.body.id)
    expect(done?.status, JSON.stringify(done)).toBe('done')
  }

  it('when the setter has started a step and her setting skill is then taken away, then the planner still plans and keeps the step with her at her bench', async () => {
    const { op, bench, person, row } = await setterTakes(true)
    await changeSkills(person, (skills) => skills.filter((k) => k.kindId !== row.kindId))
    await plansThrough()
    const data = await loadPlanningData(t.db, 1, new Date())
    const step = data.problem.operations.find((o) => o.id === String(op.id))!
    // Worked by hand: no skill record is left, so her speed counts as 1; she started seconds ago, so the minutes left are the
    // estimate itself (ceil(estimate − a fraction of a minute)), and only her bench and she can carry on.
    expect(step.options).toEqual([{ benchId: String(bench), personId: String(person), minutes: row.estimate }])
    expect(step.fixed).toMatchObject({ benchId: String(bench), personId: String(person) })
  })

  it('when the setter has claimed a step and her level is then lowered below the step’s, then the claim holds: her on every bench equipped for setting', async () => {
    const { op, person, row } = await setterTakes(false)
    expect(row.level, 'the demo’s stone-setting step asks for more than level 1').toBeGreaterThan(1)
    let speed = 0
    await changeSkills(person, (skills) =>
      skills.map((k) => {
        if (k.kindId !== row.kindId) return k
        speed = k.speed
        return { ...k, level: row.level - 1 }
      }),
    )
    expect(speed).toBeGreaterThan(0)
    await plansThrough()
    const equipped = await t.db
      .select({ id: s.benchCapabilities.benchId })
      .from(s.benchCapabilities)
      .innerJoin(s.benches, eq(s.benches.id, s.benchCapabilities.benchId))
      .where(and(eq(s.benchCapabilities.kindId, row.kindId), eq(s.benches.active, true)))
    const step = (await loadPlanningData(t.db, 1, new Date())).problem.operations.find((o) => o.id === String(op.id))!
    // Not started, so nothing worked yet: her minutes are ceil(estimate / her recorded speed).
    expect(step.options.map((o) => [o.benchId, o.personId, o.minutes]).sort()).toEqual(
      equipped.map((b) => [String(b.id), String(person), Math.max(5, Math.ceil(row.estimate / speed))]).sort(),
    )
    expect(step.fixed).toBeUndefined()
  })

  it('when someone holding a claimed step is taken off the staff list, then the step goes back to everyone able and the planner plans', async () => {
    const [gone] = await extraSetters(t, 1, 'leaving')
    const op = await freshReady(t, 'setting', 'set')
    const claim = await gone!.agent.post(`/api/bench/operations/${op.id}/claim`, { requestId: rid(), benchId: await benchId(t, 'Setting bench A') })
    expect(claim.status, JSON.stringify(claim.body)).toBe(200)
    const me = (await manager.get('/api/people')).body.find((p: { id: number }) => p.id === gone!.personId)
    expect((await manager.patch(`/api/people/${gone!.personId}`, { active: false, version: me.version })).status).toBe(200)
    await plansThrough()
    const step = (await loadPlanningData(t.db, 1, new Date())).problem.operations.find((o) => o.id === String(op.id))!
    const people = new Set(step.options.map((o) => o.personId))
    expect(people.has(String(gone!.personId))).toBe(false)
    expect(people.size).toBeGreaterThan(0)
  })
})

describe('absurd durations', () => {
  it('when an estimate of 10^7 minutes is written straight into the database, then starting the planner answers 422 naming the job bag and the step', async () => {
    const step = await openStep()
    await t.db.update(s.operations).set({ estimateMinutes: 10_000_000 }).where(eq(s.operations.id, step.id))
    const r = await planRun()
    expectNamed(r, { number: step.number, id: step.bag_id }, step, 'bad-duration')
    expect(r.body.error).toContain(`at most ${MAX_OPERATION_MINUTES}`)
  })

  it('when the API is asked for 10^7 minutes, then it refuses with a 400 on estimateMinutes; its own maximum still plans as a 422 naming the step, not a 500', async () => {
    const step = await openStep()
    const tooMuch = await manager.patch(`/api/job-bags/${step.bag_id}/operations/${step.id}`, {
      estimateMinutes: 1e7,
      reason: 'typo on the tablet',
      version: step.version,
    })
    expectFieldError(tooMuch, 'estimateMinutes', /at most/)
    // 100,000 minutes passes the field check but is over the engine's limit for one operation (60 working days of 8 h).
    const max = await manager.patch(`/api/job-bags/${step.bag_id}/operations/${step.id}`, {
      estimateMinutes: 100_000,
      reason: 'a very long job',
      version: step.version,
    })
    expect(max.status, JSON.stringify(max.body)).toBe(200)
    expectNamed(await planRun(), { number: step.number, id: step.bag_id }, step, 'bad-duration')
  })

  it('when a routing step would take 10000 base minutes plus 240 per stone on 2000 stones, then checking a promise answers 422 naming the step, not a 500', async () => {
    const [k] = await t.db.select({ id: s.operationKinds.id }).from(s.operationKinds).where(eq(s.operationKinds.code, 'setting'))
    const routing = await manager.post('/api/routings', {
      code: 'pave-everything',
      name: 'Pavé everything',
      steps: [{ key: 'set', kindId: k!.id, name: 'Set every stone', baseMinutes: 10000, perStoneMinutes: 240 }],
    })
    expect(routing.status, JSON.stringify(routing.body)).toBe(201)
    const r = await manager.post('/api/promise/check', { routingId: routing.body.id, params: { stoneCount: 2000, stoneSizeMm: 1 } })
    expect(r.status, JSON.stringify(r.body)).toBe(422)
    expectCleanError(r, 422)
    expect(r.body.error).toContain('Set every stone')
  })
})

describe('routings in a circle', () => {
  const kindId = async () => (await t.db.select({ id: s.operationKinds.id }).from(s.operationKinds).where(eq(s.operationKinds.code, 'polishing')))[0]!.id

  it('when a routing whose steps follow each other in a circle is sent, then it is refused with 400 on steps and nothing is saved', async () => {
    const kid = await kindId()
    const steps = [
      { key: 'a', kindId: kid, name: 'First', baseMinutes: 10, after: ['c'] },
      { key: 'b', kindId: kid, name: 'Second', baseMinutes: 10, after: ['a'] },
      { key: 'c', kindId: kid, name: 'Third', baseMinutes: 10, after: ['b'] },
    ]
    const r = await manager.post('/api/routings', { code: 'round-and-round', name: 'Round and round', steps })
    expectFieldError(r, 'steps', /circle/)
    const self = await manager.post('/api/routings', {
      code: 'own-tail',
      name: 'Own tail',
      steps: [{ key: 'a', kindId: kid, name: 'Only', baseMinutes: 10, after: ['a'] }],
    })
    expectFieldError(self, 'steps.0.after', /itself/)
    const [n] = await t.db
      .select({ n: count() })
      .from(s.routings)
      .where(inArray(s.routings.code, ['round-and-round', 'own-tail']))
    expect(n!.n).toBe(0)
  })

  it('when an existing routing is replaced by one with a circle, then it is refused with 400 and the saved steps stay as they were', async () => {
    const kid = await kindId()
    const list = await manager.get('/api/routings')
    const routing = list.body[0]
    const before = await manager.get(`/api/routings/${routing.id}`)
    const r = await manager.put(`/api/routings/${routing.id}`, {
      version: routing.version,
      code: routing.code,
      name: routing.name,
      description: '',
      steps: [
        { key: 'x', kindId: kid, name: 'X', baseMinutes: 5, after: ['y'] },
        { key: 'y', kindId: kid, name: 'Y', baseMinutes: 5, after: ['x'] },
      ],
    })
    expectFieldError(r, 'steps', /circle/)
    expect((await manager.get(`/api/routings/${routing.id}`)).body).toEqual(before.body)
  })

  it('when a job bag step is made to wait for a step that waits for it, then the change is refused naming "after" and the routing is unchanged', async () => {
    const o = s.operations
    const [bag] = await t.db
      .select({ id: o.jobBagId })
      .from(o)
      .innerJoin(s.jobBags, eq(s.jobBags.id, o.jobBagId))
      .innerJoin(s.orders, eq(s.orders.id, s.jobBags.orderId))
      .where(and(eq(s.orders.status, 'open'), eq(o.status, 'pending'), sql`cardinality(${o.after}) > 0`))
      .orderBy(asc(s.jobBags.number))
      .limit(1)
    const rows = await t.db
      .select({ id: o.id, key: o.key, version: o.version, after: o.after, job_bag_id: o.jobBagId })
      .from(o)
      .where(eq(o.jobBagId, bag!.id))
      .orderBy(asc(o.seq))
    const later = rows.find((x) => x.after.length > 0)!
    const earlier = rows.find((x) => x.key === later.after[0])!
    const r = await manager.patch(`/api/job-bags/${earlier.job_bag_id}/operations/${earlier.id}`, {
      after: [...earlier.after, later.key],
      version: earlier.version,
    })
    expect([400, 422]).toContain(r.status)
    expectCleanError(r, r.status)
    expect(Object.keys(r.body.fields ?? {})).toContain('after')
    const [still] = await t.db.select({ after: o.after, version: o.version }).from(o).where(eq(o.id, earlier.id))
    expect(still).toEqual({ after: earlier.after, version: earlier.version })
  })
})
