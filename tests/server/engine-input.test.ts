// What the planner cannot work with, arriving through the API or the database: impossible skills and absurd durations
// answer 422 naming the job bag and the step; routings that go round in a circle cannot be saved at all.
import { afterEach, beforeEach, describe, expect, it } from 'vitest'
import { MAX_OPERATION_MINUTES } from '../../server/scheduler/check'
import { createTestApp, signedIn, type Agent, type TestApp } from '../setup/app'
import { expectCleanError, expectFieldError } from './helpers'

let t: TestApp
let manager: Agent
beforeEach(async () => {
  t = await createTestApp()
  manager = await signedIn(t.app, 'manager')
})
afterEach(async () => { await t?.close() })

/** A step still to do on a job bag of an open order, done at a bench (not outside work). */
async function openStep(kindCode?: string) {
  const { rows: [op] } = await t.pool.query(
    `select o.id, o.name, o.version, o.kind_id, jb.id as bag_id, jb.number, jb.version as bag_version
       from operations o join job_bags jb on jb.id = o.job_bag_id join orders ord on ord.id = jb.order_id join operation_kinds k on k.id = o.kind_id
      where ord.status = 'open' and jb.status not in ('complete', 'cancelled') and o.status in ('pending', 'ready') and not k.outside and ($1::text is null or k.code = $1)
      order by ord.due_date, jb.number, o.seq limit 1`, [kindCode ?? null])
  expect(op, 'the demo data has an open step').toBeTruthy()
  return op as { id: number; name: string; version: number; kind_id: number; bag_id: number; number: string; bag_version: number }
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
    const add = await manager.post(`/api/job-bags/${step.bag_id}/operations`, { kindId: kind.body.id, name: 'Enamel the bezel', estimateMinutes: 90, reason: 'customer asked for colour', version: step.bag_version })
    expect(add.status, JSON.stringify(add.body)).toBe(201)
    const { rows: [added] } = await t.pool.query(`select id, name from operations where job_bag_id = $1 and kind_id = $2`, [step.bag_id, kind.body.id])
    const r = await planRun()
    expectNamed(r, { number: step.number, id: step.bag_id }, added, 'no-option')
    expect(r.body.error).toMatch(/add the skill to someone or a suitable bench/)
  })

  it('when a step requires a level that no person with that skill reaches, then starting the planner answers 422 naming the job bag and the step', async () => {
    const step = await openStep()
    // Everybody who has this kind of work is at most level 2; the step asks for level 3 (set through the API).
    await t.pool.query('update person_skills set level = least(level, 2) where kind_id = $1', [step.kind_id])
    const patch = await manager.patch(`/api/job-bags/${step.bag_id}/operations/${step.id}`, { requiredLevel: 3, version: step.version })
    expect(patch.status, JSON.stringify(patch.body)).toBe(200)
    expectNamed(await planRun(), { number: step.number, id: step.bag_id }, step, 'no-option')
  })
})

describe('absurd durations', () => {
  it('when an estimate of 10^7 minutes is written straight into the database, then starting the planner answers 422 naming the job bag and the step', async () => {
    const step = await openStep()
    await t.pool.query('update operations set estimate_minutes = 10000000 where id = $1', [step.id])
    const r = await planRun()
    expectNamed(r, { number: step.number, id: step.bag_id }, step, 'bad-duration')
    expect(r.body.error).toContain(`at most ${MAX_OPERATION_MINUTES}`)
  })

  it('when the API is asked for 10^7 minutes, then it refuses with a 400 on estimateMinutes; its own maximum still plans as a 422 naming the step, not a 500', async () => {
    const step = await openStep()
    const tooMuch = await manager.patch(`/api/job-bags/${step.bag_id}/operations/${step.id}`, { estimateMinutes: 1e7, reason: 'typo on the tablet', version: step.version })
    expectFieldError(tooMuch, 'estimateMinutes', /at most/)
    // 100,000 minutes passes the field check but is over the engine's limit for one operation (60 working days of 8 h).
    const max = await manager.patch(`/api/job-bags/${step.bag_id}/operations/${step.id}`, { estimateMinutes: 100_000, reason: 'a very long job', version: step.version })
    expect(max.status, JSON.stringify(max.body)).toBe(200)
    expectNamed(await planRun(), { number: step.number, id: step.bag_id }, step, 'bad-duration')
  })

  it('when a template step would take 10000 base minutes plus 240 per stone on 2000 stones, then checking a promise answers 422 naming the step, not a 500', async () => {
    const { rows: [k] } = await t.pool.query(`select id from operation_kinds where code = 'setting'`)
    const tpl = await manager.post('/api/templates', { code: 'pave-everything', name: 'Pavé everything', steps: [{ key: 'set', kindId: k.id, name: 'Set every stone', baseMinutes: 10000, perStoneMinutes: 240 }] })
    expect(tpl.status, JSON.stringify(tpl.body)).toBe(201)
    const r = await manager.post('/api/promise/check', { templateId: tpl.body.id, params: { stoneCount: 2000, stoneSizeMm: 1 } })
    expect(r.status, JSON.stringify(r.body)).toBe(422)
    expectCleanError(r, 422)
    expect(r.body.error).toContain('Set every stone')
  })
})

describe('routings in a circle', () => {
  const kindId = async () => (await t.pool.query(`select id from operation_kinds where code = 'polishing'`)).rows[0].id as number

  it('when a template whose steps follow each other in a circle is sent, then it is refused with 400 on steps and nothing is saved', async () => {
    const kid = await kindId()
    const steps = [
      { key: 'a', kindId: kid, name: 'First', baseMinutes: 10, after: ['c'] },
      { key: 'b', kindId: kid, name: 'Second', baseMinutes: 10, after: ['a'] },
      { key: 'c', kindId: kid, name: 'Third', baseMinutes: 10, after: ['b'] },
    ]
    const r = await manager.post('/api/templates', { code: 'round-and-round', name: 'Round and round', steps })
    expectFieldError(r, 'steps', /circle/)
    const self = await manager.post('/api/templates', { code: 'own-tail', name: 'Own tail', steps: [{ key: 'a', kindId: kid, name: 'Only', baseMinutes: 10, after: ['a'] }] })
    expectFieldError(self, 'steps.0.after', /itself/)
    const { rows: [n] } = await t.pool.query(`select count(*)::int n from routing_templates where code in ('round-and-round', 'own-tail')`)
    expect(n.n).toBe(0)
  })

  it('when an existing template is replaced by one with a circle, then it is refused with 400 and the saved steps stay as they were', async () => {
    const kid = await kindId()
    const list = await manager.get('/api/templates')
    const tpl = list.body[0]
    const before = await manager.get(`/api/templates/${tpl.id}`)
    const r = await manager.put(`/api/templates/${tpl.id}`, {
      version: tpl.version, code: tpl.code, name: tpl.name, description: '',
      steps: [{ key: 'x', kindId: kid, name: 'X', baseMinutes: 5, after: ['y'] }, { key: 'y', kindId: kid, name: 'Y', baseMinutes: 5, after: ['x'] }],
    })
    expectFieldError(r, 'steps', /circle/)
    expect((await manager.get(`/api/templates/${tpl.id}`)).body).toEqual(before.body)
  })

  it('when a job bag step is made to wait for a step that waits for it, then the change is refused naming "after" and the routing is unchanged', async () => {
    const { rows } = await t.pool.query(
      `select o.id, o.key, o.version, o.after, o.job_bag_id from operations o where o.job_bag_id = (
         select o2.job_bag_id from operations o2 join job_bags jb on jb.id = o2.job_bag_id join orders ord on ord.id = jb.order_id
          where ord.status = 'open' and o2.status = 'pending' and cardinality(o2.after) > 0 order by jb.number limit 1) order by o.seq`)
    const later = rows.find((o: { after: string[] }) => o.after.length > 0)!
    const earlier = rows.find((o: { key: string }) => o.key === later.after[0])!
    const r = await manager.patch(`/api/job-bags/${earlier.job_bag_id}/operations/${earlier.id}`, { after: [...earlier.after, later.key], version: earlier.version })
    expect([400, 422]).toContain(r.status)
    expectCleanError(r, r.status)
    expect(Object.keys(r.body.fields ?? {})).toContain('after')
    const { rows: [still] } = await t.pool.query('select after, version from operations where id = $1', [earlier.id])
    expect(still).toEqual({ after: earlier.after, version: earlier.version })
  })
})
