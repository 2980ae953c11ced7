// Bench floor API against real PostgreSQL: next for me, claim / start / pause / resume / finish, refusals, replays, 50 claims at once, time corrections.
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest'
import { HAZARD_CAUTIONS, HAZARD_FOOTER } from '../../shared/domain/status'
import { and, arrayContains, asc, count, eq, inArray, isNull } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { createTestApp, signedIn, type Agent, type TestApp } from '../setup/app'
import { auditRows, expectCleanError, expectFieldError } from './helpers'
import { benchId, extraSetters, freshReady, makeReady, openOps, personIdOf, reserveOp, rid } from './bench-fixtures'

let t: TestApp
let pavePendantSet: { id: number; jobBagId: number } | undefined
let setter: Agent
let trainee: Agent
let manager: Agent
let sales: Agent
let setA: number
let polishing: number
let fab1: number
let setterPerson: number

beforeAll(async () => {
  t = await createTestApp()
  setter = await signedIn(t.app, 'bench')
  manager = await signedIn(t.app, 'manager')
  sales = await signedIn(t.app, 'sales')
  trainee = new (setter.constructor as typeof Agent)(t.app)
  await trainee.signIn('trainee@wrenfield.test')
  setA = await benchId(t, 'Setting bench A')
  polishing = await benchId(t, 'Polishing station')
  fab1 = await benchId(t, 'Fabrication bench 1')
  setterPerson = await personIdOf(t, 'setter@wrenfield.test')
  // Kept for the pavé pendant test before any other test takes open setting steps (which they take by due date, so which ones
  // depends on the day the demo workshop is seeded).
  ;[pavePendantSet] = await t.db
    .select({ id: s.operations.id, jobBagId: s.operations.jobBagId })
    .from(s.operations)
    .innerJoin(s.jobBags, eq(s.jobBags.id, s.operations.jobBagId))
    .innerJoin(s.routings, eq(s.routings.id, s.jobBags.routingId))
    .innerJoin(s.orders, eq(s.orders.id, s.jobBags.orderId))
    .where(
      and(
        eq(s.routings.code, 'pave-pendant'),
        eq(s.operations.key, 'set'),
        inArray(s.operations.status, ['pending', 'ready']),
        isNull(s.operations.claimedBy),
        eq(s.orders.status, 'open'),
      ),
    )
    .orderBy(asc(s.jobBags.id))
    .limit(1)
  if (pavePendantSet) reserveOp(pavePendantSet.id)
})
afterAll(async () => {
  await t?.close()
})

const records = async (operationId: number) =>
  t.db.select().from(s.timeRecords).where(eq(s.timeRecords.operationId, operationId)).orderBy(asc(s.timeRecords.id))
const opRow = async (id: number) => (await t.db.select().from(s.operations).where(eq(s.operations.id, id)))[0]!
const ago = (minutes: number) => new Date(Date.now() - minutes * 60_000).toISOString()
const setOp = (id: number, v: Partial<typeof s.operations.$inferInsert>) => t.db.update(s.operations).set(v).where(eq(s.operations.id, id))
const setRecord = (id: number, v: Partial<typeof s.timeRecords.$inferInsert>) => t.db.update(s.timeRecords).set(v).where(eq(s.timeRecords.id, id))
const setBag = (id: number, v: Partial<typeof s.jobBags.$inferInsert>) => t.db.update(s.jobBags).set(v).where(eq(s.jobBags.id, id))
const mergeParams = async (id: number, extra: Partial<(typeof s.jobBags.$inferSelect)['params']>) => {
  const [b] = await t.db.select({ params: s.jobBags.params }).from(s.jobBags).where(eq(s.jobBags.id, id))
  await setBag(id, { params: { ...b!.params, ...extra } })
}

/** Whether the steps of a job bag, as the bench reads them, work on the customer's own piece (one answer per different value). */
const pieceOf = async (bagId: number) => {
  const r = await setter.get(`/api/job-bags/${bagId}`)
  expect(r.status, JSON.stringify(r.body)).toBe(200)
  return [...new Set(r.body.operations.map((o: { customerPiece: boolean }) => o.customerPiece))]
}
/** A routing of the given kind with two bench steps, and the job bag of a new order on it. */
const bagOnRouting = async (routing: { code: string; name: string; kind: string }) => {
  const kinds = Object.fromEntries(((await manager.get('/api/operation-kinds')).body as { code: string; id: number }[]).map((k) => [k.code, k.id]))
  const made = await manager.post('/api/routings', {
    ...routing,
    steps: [
      { key: 'solder', kindId: kinds.soldering, name: 'Solder', baseMinutes: 20 },
      { key: 'polish', kindId: kinds.polishing, name: 'Polish', baseMinutes: 15, after: ['solder'] },
    ],
  })
  expect(made.status, JSON.stringify(made.body)).toBe(201)
  const customerId = (await t.db.select({ id: s.customers.id }).from(s.customers).orderBy(asc(s.customers.id)).limit(1))[0]!.id
  const order = await sales.post('/api/orders', {
    customerId,
    title: routing.name,
    dueDate: '2031-10-01',
    pieces: [{ routingId: made.body.id, piece: routing.name, params: { metal: 'gold-9ct' } }],
  })
  expect(order.status, JSON.stringify(order.body)).toBe(201)
  return order.body.jobBags[0].id as number
}

describe('next for me', () => {
  it('when a predecessor has just finished and its wait-after is still running, then the step is not offered and cannot be taken yet', async () => {
    // Pavé pendant: "File and emery" follows "Solder bail", which has a 20 min pickle wait after it (seeded routing).
    const files = await openOps(t, 'filing', { key: 'file', status: 'pending' })
    const soldered = await t.db
      .select({ jobBagId: s.operations.jobBagId })
      .from(s.operations)
      .where(
        and(
          eq(s.operations.key, 'solder'),
          inArray(
            s.operations.jobBagId,
            files.map((f) => f.job_bag_id),
          ),
        ),
      )
    const file = files.find((f) => soldered.some((x) => x.jobBagId === f.job_bag_id))!
    expect(file, 'an open pavé pendant whose "File and emery" is still pending').toBeDefined()
    await makeReady(t, file.id)
    const solder = (
      await t.db
        .select({ id: s.operations.id, waitAfterMinutes: s.operations.waitAfterMinutes })
        .from(s.operations)
        .where(and(eq(s.operations.jobBagId, file.job_bag_id), eq(s.operations.key, 'solder')))
    )[0]!
    expect(solder.waitAfterMinutes).toBeGreaterThan(0)
    await setOp(solder.id, { finishedAt: ago(0) })
    const next = await trainee.get(`/api/bench/next?benchId=${fab1}`)
    expect(next.status).toBe(200)
    expect(next.body.items.map((i: { id: number }) => i.id)).not.toContain(file.id)
    const r = await trainee.post(`/api/bench/operations/${file.id}/claim`, { requestId: rid(), benchId: fab1 })
    expect(r.status).toBe(422)
    expect(r.body.error).toMatch(/can start in \d+ min: “Solder bail” has a 20 min wait after it/)
    // Finished just now with a 20-min wait: 20 min to go, 19 once a minute boundary has passed during the test.
    expect(Number(/can start in (\d+) min/.exec(r.body.error)![1])).toBeGreaterThanOrEqual(19)
    expect(Number(/can start in (\d+) min/.exec(r.body.error)![1])).toBeLessThanOrEqual(20)
    // Once the wait is over, it is offered again.
    await setOp(solder.id, { finishedAt: ago(60) })
    const later = await trainee.get(`/api/bench/next?benchId=${fab1}`)
    expect(later.body.items.map((i: { id: number }) => i.id)).toContain(file.id)
  })

  it('when setting steps are ready, then the setter sees them at a setting bench in plan order (due date, then priority, then number), the trainee does not see level-2 steps', async () => {
    const sets = (await openOps(t, 'setting', { key: 'set' })).slice(0, 3)
    for (const s of sets) await makeReady(t, s.id)
    const r = await setter.get(`/api/bench/next?benchId=${setA}`)
    expect(r.status).toBe(200)
    expect(r.body.person.id).toBe(setterPerson)
    const ids = r.body.items.map((x: { id: number }) => x.id)
    for (const s of sets) expect(ids).toContain(s.id)
    // The plan's order without planned starts: due date ascending, then priority (5 = most urgent first), then job bag number.
    const items = r.body.items as { dueDate: string; priority: number; jobBagNumber: string; plannedStart: string | null; kindCode: string; status: string }[]
    const unplanned = items.filter((x) => !x.plannedStart)
    expect(unplanned.length, 'at least the three steps made ready have no planned start').toBeGreaterThanOrEqual(3)
    // Sorted here by that rule, apart from the server: the unplanned steps keep exactly this order.
    const byRule = [...unplanned].sort((a, b) =>
      a.dueDate < b.dueDate
        ? -1
        : a.dueDate > b.dueDate
          ? 1
          : b.priority - a.priority || (a.jobBagNumber < b.jobBagNumber ? -1 : a.jobBagNumber > b.jobBagNumber ? 1 : 0),
    )
    expect(unplanned.map((x) => [x.dueDate, x.priority, x.jobBagNumber])).toEqual(byRule.map((x) => [x.dueDate, x.priority, x.jobBagNumber]))
    expect(items.every((x) => x.status === 'ready' && ['setting', 'inspection'].includes(x.kindCode))).toBe(true)
    const tr = await trainee.get(`/api/bench/next?benchId=${setA}`)
    expect(tr.status).toBe(200)
    expect(tr.body.items.filter((x: { id: number }) => sets.some((s) => s.id === x.id))).toEqual([])
  })

  it('when a planned start is set, then that step comes first', async () => {
    const [, second] = await openOps(t, 'setting', { key: 'set', status: 'ready' })
    await setOp(second!.id, { plannedStart: ago(-60) })
    const r = await setter.get(`/api/bench/next?benchId=${setA}`)
    expect(r.body.items[0].id).toBe(second!.id)
    await setOp(second!.id, { plannedStart: null })
  })

  it('when the bench is unknown or missing, then 400 names benchId', async () => {
    expectFieldError(await setter.get('/api/bench/next?benchId=999999'), 'benchId')
    expectFieldError(await setter.get('/api/bench/next'), 'benchId')
  })

  it('when a sales user asks for a queue, then 403', async () => {
    expectCleanError(await sales.get(`/api/bench/next?benchId=${setA}`), 403)
  })
})

describe('claim → start → pause → resume → finish', () => {
  let op: { id: number; job_bag_id: number; key: string }
  it('when the setter claims a ready step, then it is hers, audited and pushed live', async () => {
    op = await freshReady(t, 'setting', 'set')
    const emit = vi.spyOn(t.realtime, 'emit')
    const r = await setter.post(`/api/bench/operations/${op.id}/claim`, { requestId: rid(), benchId: setA })
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    expect(r.body.operation).toMatchObject({ id: op.id, status: 'claimed', claimedBy: setterPerson, claimedByName: 'Ines Harrowby' })
    expect(r.body.jobBag.status).toBe('in-work')
    expect(emit).toHaveBeenCalledWith(expect.any(Number), 'operation:changed', { id: op.id, version: r.body.operation.version, status: 'claimed' })
    expect(emit).toHaveBeenCalledWith(expect.any(Number), 'jobBag:changed', expect.objectContaining({ id: op.job_bag_id, status: 'in-work' }))
    emit.mockRestore()
    const a = await auditRows(t, 'operation', op.id)
    expect(a[0]).toMatchObject({ action: 'claim', details: expect.objectContaining({ from: 'ready', to: 'claimed', personId: setterPerson, benchId: setA }) })
    expect(await records(op.id)).toEqual([])
    const mine = await setter.get('/api/bench/mine')
    expect(mine.body.items.map((x: { id: number }) => x.id)).toContain(op.id)
  })

  it('when someone else claims the same step, then 409 names who has it', async () => {
    const [other] = await extraSetters(t, 1, 'late')
    const r = await other!.agent.post(`/api/bench/operations/${op.id}/claim`, { requestId: rid(), benchId: setA })
    expectCleanError(r, 409)
    expect(r.body.error).toMatch(/Ines Harrowby/)
    expect(r.body.details).toMatchObject({ claimedByName: 'Ines Harrowby' })
  })

  it('when pausing before starting, then 409 says it must be running', async () => {
    const r = await setter.post(`/api/bench/operations/${op.id}/pause`, { requestId: rid(), reason: 'end-of-day' })
    expectCleanError(r, 409)
    expect(r.body.error).toMatch(/claimed; it must be running/)
  })

  it('when the setter starts, then a time record opens at this bench and the step runs', async () => {
    const r = await setter.post(`/api/bench/operations/${op.id}/start`, { requestId: rid(), benchId: setA })
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    expect(r.body.operation.status).toBe('running')
    expect(r.body.operation.runningSince).toEqual(expect.any(String))
    const recs = await records(op.id)
    expect(recs).toHaveLength(1)
    expect(recs[0]).toMatchObject({ personId: setterPerson, endedAt: null })
  })

  it('when she starts a second step while one runs, then 409 names the running one', async () => {
    const other = await freshReady(t, 'setting', 'tighten')
    expect((await setter.post(`/api/bench/operations/${other.id}/claim`, { requestId: rid(), benchId: setA })).status).toBe(200)
    const r = await setter.post(`/api/bench/operations/${other.id}/start`, { requestId: rid(), benchId: setA })
    expectCleanError(r, 409)
    expect(r.body.error).toMatch(/working on “.+” \(job bag .+\) already/)
    expect(r.body.details.runningOperationId).toBe(op.id)
    // Give it back so it stays in the queue for others.
    const back = await setter.post(`/api/bench/operations/${other.id}/release`, { requestId: rid() })
    expect(back.status).toBe(200)
    expect(back.body.operation).toMatchObject({ status: 'ready', claimedBy: null })
  })

  it('when pausing with reason "other" and no note, then 400 asks for the note; an unknown reason is refused', async () => {
    expectFieldError(await setter.post(`/api/bench/operations/${op.id}/pause`, { requestId: rid(), reason: 'other' }), 'note')
    expectFieldError(await setter.post(`/api/bench/operations/${op.id}/pause`, { requestId: rid(), reason: 'tea' }), 'reason')
    expectFieldError(await setter.post(`/api/bench/operations/${op.id}/pause`, { requestId: 'not-a-uuid', reason: 'end-of-day' }), 'requestId')
  })

  it('when she pauses waiting for parts, then the record closes with that reason', async () => {
    const r = await setter.post(`/api/bench/operations/${op.id}/pause`, { requestId: rid(), reason: 'waiting-for-parts', note: 'stones not matched' })
    expect(r.status).toBe(200)
    expect(r.body.operation.status).toBe('paused')
    const recs = await records(op.id)
    expect(recs[0]).toMatchObject({ endReason: 'waiting-for-parts', note: 'stones not matched' })
    expect(recs[0]!.endedAt).not.toBeNull()
  })

  it('when she resumes and finishes, then a second record opens and closes, actual minutes are their sum, and the next step becomes ready in the same step', async () => {
    expect((await setter.post(`/api/bench/operations/${op.id}/resume`, { requestId: rid(), benchId: setA })).body.operation.status).toBe('running')
    expect(await records(op.id)).toHaveLength(2)
    // Back-date both records a little so minutes are measurable.
    const recs = await records(op.id)
    await setRecord(recs[0]!.id, { startedAt: ago(50), endedAt: ago(30) })
    await setRecord(recs[1]!.id, { startedAt: ago(15) })
    const emit = vi.spyOn(t.realtime, 'emit')
    const r = await setter.post(`/api/bench/operations/${op.id}/finish`, { requestId: rid(), note: 'all stones tight' })
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    expect(r.body.operation.status).toBe('done')
    // 20 min + ~15 min.
    expect(r.body.operation.actualMinutes).toBeGreaterThanOrEqual(34.9)
    expect(r.body.operation.actualMinutes).toBeLessThan(36)
    const after = await records(op.id)
    expect(after[1]).toMatchObject({ endReason: 'finished', note: 'all stones tight' })
    const successor = await t.db
      .select({ id: s.operations.id, status: s.operations.status })
      .from(s.operations)
      .where(and(eq(s.operations.jobBagId, op.job_bag_id), arrayContains(s.operations.after, [op.key])))
    expect(successor.length).toBeGreaterThan(0)
    for (const s of successor) expect(s.status).toBe('ready')
    expect(r.body.readied.sort()).toEqual(successor.map((x) => x.id).sort())
    for (const s of successor)
      expect(emit).toHaveBeenCalledWith(expect.any(Number), 'operation:changed', expect.objectContaining({ id: s.id, status: 'ready' }))
    emit.mockRestore()
    const actions = (await auditRows(t, 'operation', op.id)).map((a) => a.action).reverse()
    expect(actions).toEqual(['claim', 'start', 'pause', 'resume', 'finish'])
    expect((await auditRows(t, 'operation', successor[0]!.id))[0]).toMatchObject({
      action: 'ready',
      details: expect.objectContaining({ from: 'pending', to: 'ready' }),
    })
  })

  it('when the planner reads a finished step, then it knows when the step finished (its last record), so a wait after it still holds', async () => {
    const { loadPlanningData } = await import('../../server/planning/problem')
    const data = await loadPlanningData(t.db, 1, new Date())
    const done = data.problem.operations.find((o) => o.id === String(op.id))
    expect(done?.done).toBe(true)
    const recs = await records(op.id)
    const last = recs.map((r) => new Date(r.endedAt!).getTime()).sort((a, b) => b - a)[0]!
    const row = await opRow(op.id)
    // The step's own finish time, or the end of its last record; either is within a minute of the last record.
    expect(done!.finishedAt).toBe(data.clock.toMinute(row.finishedAt ?? new Date(last).toISOString()))
    expect(Math.abs(done!.finishedAt! - data.clock.toMinute(new Date(last).toISOString()))).toBeLessThanOrEqual(1)
  })

  it('when finishing twice (new request id), then 409 says it is finished already', async () => {
    const r = await setter.post(`/api/bench/operations/${op.id}/finish`, { requestId: rid() })
    expectCleanError(r, 409)
    expect(r.body.error).toMatch(/finished already/)
  })
})

describe('refusals', () => {
  it('when a step waits for an unfinished one, then claiming it is refused with 422 naming that step', async () => {
    const pending = (await openOps(t, 'setting', { key: 'set', status: 'pending' }))[0]!
    const r = await setter.post(`/api/bench/operations/${pending.id}/claim`, { requestId: rid(), benchId: setA })
    expectCleanError(r, 422)
    expect(r.body.error).toMatch(/not ready: “Drill and cut seats”|not ready: “.+” must be finished first/)
    expect(r.body.details.waitingFor.length).toBeGreaterThan(0)
  })

  it('when the person’s skill level is below the step’s, then 422 gives both levels', async () => {
    const op = (await openOps(t, 'setting', { key: 'set', status: 'ready' }))[0]!
    expect(op.required_level).toBeGreaterThan(1)
    const r = await trainee.post(`/api/bench/operations/${op.id}/claim`, { requestId: rid(), benchId: setA })
    expectCleanError(r, 422)
    expect(r.body.error).toMatch(/is not skilled for “.+” of job bag \S+: it needs stone setting at level \d; their level is 1/)
    expect(r.body.details).toMatchObject({ rule: 'skill', level: 1 })
  })

  it('when the person has no skill for the kind at all, then 422 says so', async () => {
    const polish = await freshReady(t, 'polishing')
    const r = await setter.post(`/api/bench/operations/${polish.id}/claim`, { requestId: rid(), benchId: polishing })
    expectCleanError(r, 422)
    expect(r.body.error).toMatch(/needs polishing at level \d; none is recorded for them/)
    expect(r.body.details).toMatchObject({ rule: 'skill', level: 0 })
  })

  it('when the bench is not equipped for the kind, then 422 names the bench', async () => {
    const op = (await openOps(t, 'setting', { key: 'set', status: 'ready' }))[0]!
    const r = await setter.post(`/api/bench/operations/${op.id}/claim`, { requestId: rid(), benchId: fab1 })
    expectCleanError(r, 422)
    expect(r.body.error).toMatch(/Fabrication bench 1 is not equipped for stone setting/)
    expect(r.body.details.rule).toBe('bench capability')
  })

  it('when the trainee opens a bag whose next step needs setting at level 2 or more, then the page says why in the claim’s words instead of offering it', async () => {
    const bagOf = async (who: Agent, bagId: number, bench: number) => {
      const r = await who.get(`/api/job-bags/${bagId}?benchId=${bench}`)
      expect(r.status, JSON.stringify(r.body)).toBe(200)
      return r.body as { number: string; nextOperationId: number | null; nextStepRefusal: string | null; operations: { id: number; name: string }[] }
    }
    let found: { op: { id: number; job_bag_id: number; required_level: number }; bag: Awaited<ReturnType<typeof bagOf>> } | undefined
    for (const op of await openOps(t, 'setting', { key: 'set', status: 'ready' })) {
      const bag = await bagOf(setter, op.job_bag_id, setA)
      if (op.required_level > 1 && bag.nextOperationId === op.id && bag.nextStepRefusal === null) {
        found = { op, bag }
        break
      }
    }
    expect(found, 'a bag whose next step is a ready setting step at level 2 or more, which the setter may take').toBeDefined()
    const { op, bag } = found!
    const name = bag.operations.find((o) => o.id === op.id)!.name
    const trainee1 = (
      await t.db
        .select({ name: s.people.name })
        .from(s.people)
        .where(eq(s.people.id, await personIdOf(t, 'trainee@wrenfield.test')))
    )[0]!.name
    // Hand-worked from the seeded trainee (stone setting at level 1) and the step's required level.
    const expected = `${trainee1} is not skilled for “${name}” of job bag ${bag.number}: it needs stone setting at level ${op.required_level}; their level is 1.`
    expect((await bagOf(trainee, op.job_bag_id, setA)).nextStepRefusal).toBe(expected)
    // The setter is skilled, but not at a fabrication bench: the bench is named as the claim would name it.
    expect((await bagOf(setter, op.job_bag_id, fab1)).nextStepRefusal).toBe(
      `Fabrication bench 1 is not equipped for stone setting (“${name}” of job bag ${bag.number}). Take it at a bench that is.`,
    )
    // Same words as the claim's refusal, and nothing was taken by asking.
    const r = await trainee.post(`/api/bench/operations/${op.id}/claim`, { requestId: rid(), benchId: setA })
    expectCleanError(r, 422)
    expect(r.body.error).toBe(expected)
    expect((await opRow(op.id)).status).toBe('ready')
  })

  it('when a bench user tries to act for someone else, then 403', async () => {
    const op = (await openOps(t, 'setting', { key: 'set', status: 'ready' }))[0]!
    const other = await personIdOf(t, 'trainee@wrenfield.test')
    expectCleanError(await setter.post(`/api/bench/operations/${op.id}/claim`, { requestId: rid(), benchId: setA, personId: other }), 403)
  })

  it('when the job bag is on hold, then claiming is refused with 422', async () => {
    const op = (await openOps(t, 'setting', { key: 'set', status: 'ready' }))[0]!
    await setBag(op.job_bag_id, { status: 'on-hold' })
    const r = await setter.post(`/api/bench/operations/${op.id}/claim`, { requestId: rid(), benchId: setA })
    expectCleanError(r, 422)
    expect(r.body.error).toMatch(/on hold/)
    await setBag(op.job_bag_id, { status: 'waiting' })
  })

  it('when the operation does not exist or belongs to nobody here, then 404', async () => {
    expectCleanError(await setter.post('/api/bench/operations/999999/claim', { requestId: rid(), benchId: setA }), 404)
  })

  it('when the account has no person, then 422 explains that', async () => {
    const owner = await signedIn(t.app, 'owner')
    const op = (await openOps(t, 'setting', { key: 'set', status: 'ready' }))[0]!
    const r = await owner.post(`/api/bench/operations/${op.id}/claim`, { requestId: rid(), benchId: setA })
    expectCleanError(r, 422)
    expect(r.body.error).toMatch(/not linked to a person/)
  })
})

describe('hazardous steps', () => {
  it('when a polishing step (lathe) is started without acknowledging, then 422 carries the cautions; acknowledged, it starts', async () => {
    const ruth = new (setter.constructor as typeof Agent)(t.app)
    await ruth.signIn('ruth@wrenfield.test')
    const polish = await freshReady(t, 'polishing')
    const c = await ruth.post(`/api/bench/operations/${polish.id}/claim`, { requestId: rid(), benchId: polishing })
    expect(c.status, JSON.stringify(c.body)).toBe(200)
    // The caution text is the project's own (shared/domain/status.ts), from the sources in TRADE.md (WorkSafe WA, lathe entanglement).
    expect(c.body.cautions).toEqual([HAZARD_CAUTIONS.lathe, HAZARD_FOOTER])
    const r = await ruth.post(`/api/bench/operations/${polish.id}/start`, { requestId: rid(), benchId: polishing })
    expectCleanError(r, 422)
    expect(r.body.details).toMatchObject({ needsAcknowledgement: true, hazards: ['lathe'], cautions: [HAZARD_CAUTIONS.lathe, HAZARD_FOOTER] })
    expect(await records(polish.id)).toEqual([])
    const ok = await ruth.post(`/api/bench/operations/${polish.id}/start`, { requestId: rid(), benchId: polishing, acknowledgeHazards: true })
    expect(ok.status).toBe(200)
    expect((await auditRows(t, 'operation', polish.id))[0]).toMatchObject({
      action: 'start',
      details: expect.objectContaining({ acknowledgedHazards: ['lathe'] }),
    })
  })
})

describe('replays', () => {
  it('when a tablet replays the same finish (same requestId), then the first answer comes back and only one record is closed', async () => {
    const op = await freshReady(t, 'setting', 'set')
    expect((await setter.post(`/api/bench/operations/${op.id}/claim`, { requestId: rid(), benchId: setA })).status).toBe(200)
    const startId = rid()
    const s1 = await setter.post(`/api/bench/operations/${op.id}/start`, { requestId: startId, benchId: setA })
    const s2 = await setter.post(`/api/bench/operations/${op.id}/start`, { requestId: startId, benchId: setA })
    expect(s2.status).toBe(200)
    expect(s2.body).toEqual(s1.body)
    expect(await records(op.id)).toHaveLength(1)
    const finishId = rid()
    const [f1, f2] = await Promise.all([
      setter.post(`/api/bench/operations/${op.id}/finish`, { requestId: finishId, note: 'done' }),
      setter.post(`/api/bench/operations/${op.id}/finish`, { requestId: finishId, note: 'done' }),
    ])
    expect(f1.status).toBe(200)
    expect(f2.status).toBe(200)
    expect(f2.body).toEqual(f1.body)
    const f3 = await setter.post(`/api/bench/operations/${op.id}/finish`, { requestId: finishId, note: 'done' })
    expect(f3.body).toEqual(f1.body)
    const recs = await records(op.id)
    expect(recs).toHaveLength(1)
    expect(recs[0]!.endReason).toBe('finished')
    expect((await auditRows(t, 'operation', op.id)).filter((a) => a.action === 'finish')).toHaveLength(1)
  })

  it('when a refused request is replayed, then the same refusal comes back', async () => {
    const pending = (await openOps(t, 'setting', { key: 'set', status: 'pending' }))[0]!
    const id = rid()
    const a = await setter.post(`/api/bench/operations/${pending.id}/claim`, { requestId: id, benchId: setA })
    const b = await setter.post(`/api/bench/operations/${pending.id}/claim`, { requestId: id, benchId: setA })
    expect(a.status).toBe(422)
    expect(b.status).toBe(422)
    expect(b.body.error).toBe(a.body.error)
  })

  it('when a request id is reused for a different action, then 409', async () => {
    const op = (await openOps(t, 'setting', { key: 'set', status: 'ready' }))[0]!
    const id = rid()
    expect((await setter.post(`/api/bench/operations/${op.id}/claim`, { requestId: id, benchId: setA })).status).toBe(200)
    const r = await setter.post(`/api/bench/operations/${op.id}/release`, { requestId: id })
    expectCleanError(r, 409)
    expect(r.body.error).toMatch(/different request/)
    expect((await setter.post(`/api/bench/operations/${op.id}/release`, { requestId: rid() })).status).toBe(200)
  })
})

describe('50 claims at once', () => {
  it('when 50 signed-in setters claim the same ready step at the same moment, then exactly one gets it and 49 are told who has it', async () => {
    const crowd = await extraSetters(t, 50, 'crowd')
    const op = await freshReady(t, 'setting', 'set')
    const claimsBefore = (await auditRows(t, 'operation', op.id)).filter((a) => a.action === 'claim').length
    const requestIds = crowd.map(() => rid())
    const answers = await Promise.all(crowd.map((c, i) => c.agent.post(`/api/bench/operations/${op.id}/claim`, { requestId: requestIds[i], benchId: setA })))
    const ok = answers.filter((r) => r.status === 200)
    const refused = answers.filter((r) => r.status === 409)
    expect(ok).toHaveLength(1)
    expect(refused).toHaveLength(49)
    const winner = crowd.find((c) => c.personId === ok[0]!.body.operation.claimedBy)!
    for (const r of refused) expect(r.body.error).toContain(winner.name)
    const row = await opRow(op.id)
    expect(row).toMatchObject({ status: 'claimed', claimedBy: winner.personId })
    expect((await auditRows(t, 'operation', op.id)).filter((a) => a.action === 'claim')).toHaveLength(claimsBefore + 1)
    expect(await records(op.id)).toEqual([])
    const stored = await t.db
      .select({ status: s.benchRequests.status, n: count() })
      .from(s.benchRequests)
      .where(inArray(s.benchRequests.requestId, requestIds))
      .groupBy(s.benchRequests.status)
      .orderBy(asc(s.benchRequests.status))
    expect(stored, JSON.stringify(stored)).toEqual([
      { status: 200, n: 1 },
      { status: 409, n: 49 },
    ])
  })
})

describe('time record corrections', () => {
  let opId: number
  let recordId: number
  beforeAll(async () => {
    const op = await freshReady(t, 'setting', 'tighten')
    opId = op.id
    await setter.post(`/api/bench/operations/${opId}/claim`, { requestId: rid(), benchId: setA })
    await setter.post(`/api/bench/operations/${opId}/start`, { requestId: rid(), benchId: setA })
    await setter.post(`/api/bench/operations/${opId}/pause`, { requestId: rid(), reason: 'end-of-day' })
    recordId = (await records(opId))[0]!.id
    await setRecord(recordId, { startedAt: '2025-01-07T09:00:00Z', endedAt: '2025-01-07T09:10:00Z' })
  })

  it('when a manager corrects the end of a record, then the actual minutes use it, the record itself is unchanged, and who and why are kept', async () => {
    const r = await manager.post(`/api/time-records/${recordId}/corrections`, {
      endedAt: '2025-01-07T10:30:00Z',
      reason: 'forgot to pause at lunch; worked till half ten',
    })
    expect(r.status, JSON.stringify(r.body)).toBe(201)
    // 09:00 → 10:30 = 90 minutes.
    expect(r.body).toMatchObject({ minutes: 90, recordedEndedAt: '2025-01-07T09:10:00.000Z', endedAt: '2025-01-07T10:30:00.000Z' })
    expect(r.body.corrections[0]).toMatchObject({ kind: 'change', by: 'Sam Ottery', reason: expect.stringMatching(/lunch/) })
    const raw = await records(opId)
    expect(raw[0]!.endedAt).toBe('2025-01-07T09:10:00.000Z')
    const bag = await manager.get(`/api/job-bags/${(await opRow(opId)).jobBagId}`)
    expect(bag.body.operations.find((o: { id: number }) => o.id === opId).actualMinutes).toBe(90)
    expect((await auditRows(t, 'operation', opId))[0]).toMatchObject({ action: 'correct-time' })
  })

  it('when a second correction is made, then the newest wins and both are listed', async () => {
    const r = await manager.post(`/api/time-records/${recordId}/corrections`, { startedAt: '2025-01-07T09:30:00Z', reason: 'started after the briefing' })
    expect(r.body.minutes).toBe(60)
    expect(r.body.corrections).toHaveLength(2)
  })

  it('when a manager adds a missing record, then it counts and is marked as added with the reason', async () => {
    const r = await manager.post(`/api/operations/${opId}/time-records`, {
      personId: setterPerson,
      benchId: setA,
      startedAt: '2025-01-08T09:00:00Z',
      endedAt: '2025-01-08T09:45:00Z',
      endReason: 'end-of-day',
      reason: 'tablet was flat',
    })
    expect(r.status, JSON.stringify(r.body)).toBe(201)
    expect(r.body.minutes).toBe(45)
    expect(r.body.corrections[0]).toMatchObject({ kind: 'add', reason: 'tablet was flat' })
    const bag = await manager.get(`/api/job-bags/${(await opRow(opId)).jobBagId}`)
    expect(bag.body.operations.find((o: { id: number }) => o.id === opId).actualMinutes).toBe(105)
  })

  it('when a record is voided, then it no longer counts', async () => {
    const r = await manager.post(`/api/time-records/${recordId}/corrections`, { void: true, reason: 'booked on the wrong bag' })
    expect(r.body).toMatchObject({ voided: true, minutes: 0 })
  })

  it('when a correction has no reason or ends before it starts, then 400 names the field; a bench user may not correct', async () => {
    expectFieldError(await manager.post(`/api/time-records/${recordId}/corrections`, { endedAt: '2025-01-07T10:30:00Z' }), 'reason')
    expectFieldError(
      await manager.post(`/api/time-records/${recordId}/corrections`, {
        endedAt: '2025-01-07T08:00:00Z',
        startedAt: '2025-01-07T09:00:00Z',
        reason: 'typo fix',
      }),
      'endedAt',
    )
    expectFieldError(
      await manager.post(`/api/operations/${opId}/time-records`, {
        personId: setterPerson,
        startedAt: '2025-01-08T09:00:00Z',
        endedAt: '2025-01-08T08:00:00Z',
        reason: 'x-y-z',
      }),
      'endedAt',
    )
    expectCleanError(await setter.post(`/api/time-records/${recordId}/corrections`, { endedAt: '2025-01-07T10:30:00Z', reason: 'my own fix' }), 403)
  })
})

describe('acting on behalf and outside work', () => {
  it('when the manager claims and starts for the setter, then the records are hers and the audit names the manager', async () => {
    const op = await freshReady(t, 'setting', 'tighten')
    const c = await manager.post(`/api/bench/operations/${op.id}/claim`, { requestId: rid(), benchId: setA, personId: setterPerson })
    expect(c.status, JSON.stringify(c.body)).toBe(200)
    expect(c.body.operation.claimedByName).toBe('Ines Harrowby')
    const s = await manager.post(`/api/bench/operations/${op.id}/start`, { requestId: rid(), benchId: setA })
    // The setter has a paused step only (from the correction tests), so nothing else is running.
    expect(s.status, JSON.stringify(s.body)).toBe(200)
    expect((await records(op.id))[0]!.personId).toBe(setterPerson)
    const a = await auditRows(t, 'operation', op.id)
    expect(a[0]!.user_id).not.toBe(a[0]!.details.personId)
  })

  it('when hallmarking is sent out and booked back, then the next step is ready; a bench user cannot send out', async () => {
    const hm = await freshReady(t, 'hallmarking')
    expectCleanError(await setter.post(`/api/operations/${hm.id}/send-out`, { requestId: rid() }), 403)
    expectCleanError(await manager.post(`/api/bench/operations/${hm.id}/claim`, { requestId: rid(), benchId: setA, personId: setterPerson }), 422)
    const out = await manager.post(`/api/operations/${hm.id}/send-out`, { requestId: rid(), note: 'to the assay office' })
    expect(out.status, JSON.stringify(out.body)).toBe(200)
    expect(out.body.operation.status).toBe('running')
    // The planner keeps it away from the moment it left, for its working days.
    const sent = await opRow(hm.id)
    expect(Math.abs(new Date(sent.plannedStart!).getTime() - Date.now())).toBeLessThan(60_000)
    const { loadPlanningData } = await import('../../server/planning/problem')
    const data = await loadPlanningData(t.db, 1, new Date())
    const away = data.problem.operations.find((o) => o.id === String(hm.id))!
    expect(away.fixed?.start).toBe(data.clock.toMinute(sent.plannedStart!))
    expect(away.outsideWorkingDays).toBeGreaterThan(0)
    const back = await manager.post(`/api/operations/${hm.id}/receive`, { requestId: rid() })
    expect(back.body.operation.status).toBe('done')
    expect(back.body.readied.length).toBeGreaterThan(0)
  })
})

describe('what a running card shows', () => {
  it('when a setter starts setting a bag of 3 pieces with 14 stones of 1.25 mm each, then the operation carries 14 a piece × 3 = 42 stones, their size and the step’s planned minutes', async () => {
    const op = await freshReady(t, 'setting', 'set')
    // A bag without a stone list of its own: the piece figures are what is counted.
    await t.db.delete(s.jobBagStones).where(eq(s.jobBagStones.jobBagId, op.job_bag_id))
    await mergeParams(op.job_bag_id, { stoneCount: 14, stoneSizeMm: 1.25, quantity: 3 })
    const row = (
      await t.db
        .select({ estimateMinutes: s.operations.estimateMinutes, params: s.jobBags.params })
        .from(s.operations)
        .innerJoin(s.jobBags, eq(s.jobBags.id, s.operations.jobBagId))
        .where(eq(s.operations.id, op.id))
    )[0]!
    const [card] = await extraSetters(t, 1, 'card')
    expect((await card!.agent.post(`/api/bench/operations/${op.id}/claim`, { requestId: rid(), benchId: setA })).status).toBe(200)
    const r = await card!.agent.post(`/api/bench/operations/${op.id}/start`, { requestId: rid(), benchId: setA })
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    // Hand-worked: 14 stones per piece × 3 pieces = 42; the size is the bag's stoneSizeMm as recorded.
    const counted = { source: 'piece-figures', perPiece: 14, pieces: 3, total: 42, sizeMm: 1.25, sizeRangeMm: null, pieceFigures: null }
    expect(r.body.operation.stones).toEqual(counted)
    // Planned minutes are the operation's own estimate, as stored (not recomputed for the card).
    expect(r.body.operation.estimateMinutes).toBe(row.estimateMinutes)
    expect(r.body.operation.metal).toBe(row.params.metal)
    const mine = await card!.agent.get('/api/bench/mine')
    expect(mine.body.items.find((x: { id: number }) => x.id === op.id).stones).toEqual(counted)
  })

  it('when a bag records no stone size, then the size is null rather than 0 mm', async () => {
    const op = await freshReady(t, 'setting', 'set')
    await t.db.delete(s.jobBagStones).where(eq(s.jobBagStones.jobBagId, op.job_bag_id))
    await mergeParams(op.job_bag_id, { stoneCount: 6, stoneSizeMm: 0, quantity: 1 })
    const r = await setter.get(`/api/bench/next?benchId=${setA}`)
    expect(r.body.items.find((x: { id: number }) => x.id === op.id).stones).toMatchObject({
      source: 'piece-figures',
      perPiece: 6,
      pieces: 1,
      total: 6,
      sizeMm: null,
    })
  })

  it('when a pavé pendant’s stone list says 18 of 1.5 mm and its piece figures 12 of 1.3 mm × 2 pieces, then the card, the stone list and the setting estimate all count the list', async () => {
    const found = pavePendantSet
    expect(found, 'an open pavé pendant whose setting is not started').toBeDefined()
    const op = found!
    await makeReady(t, op.id)
    // The order was taken with 12 stones of 1.3 mm a piece, 2 pieces; the bag's own stone list then says 18 pavé of 1.5 mm.
    await t.db.delete(s.jobBagStones).where(eq(s.jobBagStones.jobBagId, op.jobBagId))
    await mergeParams(op.jobBagId, { stoneCount: 12, stoneSizeMm: 1.3, sizeMm: 22, quantity: 2 })
    const added = await manager.post(`/api/job-bags/${op.jobBagId}/stones`, { role: 'pave', sizeMm: 1.5, count: 18 })
    expect(added.status, JSON.stringify(added.body)).toBe(201)
    // The stone list as the bench's count-back panel shows it: 18 a piece × 2 pieces = 36 of 1.5 mm.
    expect(added.body.lines.map((l: { count: number; sizeMm: number }) => [l.count * added.body.quantity, l.sizeMm])).toEqual([[36, 1.5]])

    // Setting estimate, hand-worked from the seeded pavé pendant routing (set: base 30 + 7 min a stone, band factors melee 1.2,
    // large 1.5, none for 1.5–3 mm; no learning curve; pavé role factor 1, shared/domain/stones.ts, common practice, no source):
    //   from the list:    (30 + 7 × 18 × 1 × 1) × 2 = 156 × 2 = 312 min
    //   (from the figures it would be (30 + 7 × 12 × 1.2) × 2 = 130.8 × 2 = 261.6 min)
    expect((await opRow(op.id)).estimateMinutes).toBe(312)

    const [card] = await extraSetters(t, 1, 'list')
    expect((await card!.agent.post(`/api/bench/operations/${op.id}/claim`, { requestId: rid(), benchId: setA })).status).toBe(200)
    const r = await card!.agent.post(`/api/bench/operations/${op.id}/start`, { requestId: rid(), benchId: setA })
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    // Hand-worked: 18 a piece (the list) × 2 pieces (the figures' quantity) = 36 of 1.5 mm, not 12 × 2 = 24 of 1.3 mm;
    // the figures are named because they say otherwise.
    expect(r.body.operation.stones).toEqual({
      source: 'stone-list',
      perPiece: 18,
      pieces: 2,
      total: 36,
      sizeMm: 1.5,
      sizeRangeMm: null,
      pieceFigures: { perPiece: 12, sizeMm: 1.3 },
    })
    expect(r.body.operation).toMatchObject({ estimateMinutes: 312, estimateSource: 'routing', estimateCountsStones: true })
  })

  it('when the steps of the demo’s repairs are read, then each is work on the customer’s own piece; a new bezel ring is not, until a resize is recorded on it', async () => {
    const bagOf = async (routing: string) =>
      (
        await t.db
          .select({ id: s.jobBags.id })
          .from(s.jobBags)
          .innerJoin(s.routings, eq(s.routings.id, s.jobBags.routingId))
          .where(eq(s.routings.code, routing))
          .orderBy(asc(s.jobBags.id))
          .limit(1)
      )[0]!.id
    // The demo's routings of the repair kind (seed.ts): "Repair: chain link", "Repair: ring resize", "Repair: retip claws".
    for (const routing of ['chain-repair', 'ring-resize', 'retip-claws']) expect(await pieceOf(await bagOf(routing)), routing).toEqual([true])
    const ring = await bagOf('bezel-ring')
    expect(await pieceOf(ring)).toEqual([false])
    // A resize of the ring from UK N to UK P: the ring being resized is the customer's.
    await mergeParams(ring, { resizeFrom: { scale: 'uk', value: 'N' }, resizeTo: { scale: 'uk', value: 'P' } })
    expect(await pieceOf(ring)).toEqual([true])
  })

  it('when a routing of the repair kind has a name that says nothing of repair, then its steps work on the customer’s own piece', async () => {
    // The bench's weighing card starts such a bag's first weighing out from "Customer’s own" (tests/client/bench-metal-weigh.test.ts).
    const bag = await bagOnRouting({ code: 'link-mend', name: 'Curb chain: close a link', kind: 'repair' })
    expect(await pieceOf(bag)).toEqual([true])
  })

  it('when a routing of the new-piece kind is named like a repair, then its steps work on metal from stock: the name no longer decides', async () => {
    const bag = await bagOnRouting({ code: 'repair-style-signet', name: 'Repair-style signet', kind: 'piece' })
    expect(await pieceOf(bag)).toEqual([false])
  })

  it('when a repair routing is later made a new piece, then bags already taken in stay work on the customer’s piece; bags made after are from stock', async () => {
    const before = await bagOnRouting({ code: 'clasp-swap', name: 'Replace a bolt ring', kind: 'repair' })
    const [r] = await t.db
      .select({ id: s.routings.id, version: s.routings.version })
      .from(s.routings)
      .innerJoin(s.jobBags, eq(s.jobBags.routingId, s.routings.id))
      .where(eq(s.jobBags.id, before))
    const full = (await manager.get(`/api/routings/${r!.id}`)).body
    const changed = await manager.put(`/api/routings/${r!.id}`, {
      code: full.code,
      name: full.name,
      description: full.description,
      kind: 'piece',
      learningRate: null,
      steps: full.steps.map(({ id: _id, ...st }: { id: number }) => st),
      version: full.version,
    })
    expect(changed.status, JSON.stringify(changed.body)).toBe(200)
    // The customer's bracelet came in for the repair: its weighing out still starts from their piece.
    expect(await pieceOf(before)).toEqual([true])
    const customerId = (await t.db.select({ id: s.customers.id }).from(s.customers).orderBy(asc(s.customers.id)).limit(1))[0]!.id
    const order = await sales.post('/api/orders', {
      customerId,
      title: 'Bolt ring, new',
      dueDate: '2031-10-01',
      pieces: [{ routingId: r!.id, piece: 'Bolt ring', params: { metal: 'gold-9ct' } }],
    })
    expect(order.status, JSON.stringify(order.body)).toBe(201)
    expect(await pieceOf(order.body.jobBags[0].id)).toEqual([false])
  })
})

describe('the order follows its job bags', () => {
  it('when a step of an open order is taken up at a bench, then the order is in work, audited and pushed live; handed back, it is open again', async () => {
    const bagId = await bagOnRouting({ code: 'follow-bags', name: 'Toggle clasp', kind: 'piece' })
    const [bag] = await t.db.select({ orderId: s.jobBags.orderId }).from(s.jobBags).where(eq(s.jobBags.id, bagId))
    const orderOf = async () =>
      (await t.db.select({ status: s.orders.status, version: s.orders.version }).from(s.orders).where(eq(s.orders.id, bag!.orderId)))[0]!
    const before = await orderOf()
    expect(before.status).toBe('open')
    // Its first step (Solder) is ready; someone with soldering at a bench equipped for it takes it up.
    const [solder] = await t.db
      .select({ id: s.operations.id, kindId: s.operations.kindId })
      .from(s.operations)
      .where(and(eq(s.operations.jobBagId, bagId), eq(s.operations.key, 'solder')))
    const [who] = await t.db.select({ personId: s.personSkills.personId }).from(s.personSkills).where(eq(s.personSkills.kindId, solder!.kindId)).limit(1)
    const [where] = await t.db
      .select({ benchId: s.benchCapabilities.benchId })
      .from(s.benchCapabilities)
      .where(eq(s.benchCapabilities.kindId, solder!.kindId))
      .limit(1)
    const emit = vi.spyOn(t.realtime, 'emit')
    const c = await manager.post(`/api/bench/operations/${solder!.id}/claim`, { requestId: rid(), benchId: where!.benchId, personId: who!.personId })
    expect(c.status, JSON.stringify(c.body)).toBe(200)
    const working = await orderOf()
    expect(working).toEqual({ status: 'in-work', version: before.version + 1 })
    expect(emit).toHaveBeenCalledWith(expect.any(Number), 'order:updated', { id: bag!.orderId, version: working.version })
    emit.mockRestore()
    expect((await auditRows(t, 'order', bag!.orderId))[0]).toMatchObject({
      action: 'status',
      details: expect.objectContaining({ from: 'open', to: 'in-work' }),
    })
    // The sales list finds it under "In work".
    const listed = await sales.get('/api/orders?status=in-work&pageSize=100')
    expect(listed.body.items.map((o: { id: number }) => o.id)).toContain(bag!.orderId)
    // Handed back before anything was done: nothing of the order is in work any more.
    const r = await manager.post(`/api/bench/operations/${solder!.id}/release`, { requestId: rid(), personId: who!.personId })
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    expect((await orderOf()).status).toBe('open')
  })

  it('when a step is taken up while the office has the order open, then its change saves and the order stays in work; an edit by someone else since is still refused', async () => {
    const bagId = await bagOnRouting({ code: 'follow-office', name: 'Curb bracelet', kind: 'piece' })
    const [bag] = await t.db.select({ orderId: s.jobBags.orderId }).from(s.jobBags).where(eq(s.jobBags.id, bagId))
    const orderId = bag!.orderId
    const [solder] = await t.db
      .select({ id: s.operations.id, kindId: s.operations.kindId })
      .from(s.operations)
      .where(and(eq(s.operations.jobBagId, bagId), eq(s.operations.key, 'solder')))
    const [who] = await t.db.select({ personId: s.personSkills.personId }).from(s.personSkills).where(eq(s.personSkills.kindId, solder!.kindId)).limit(1)
    const [where] = await t.db
      .select({ benchId: s.benchCapabilities.benchId })
      .from(s.benchCapabilities)
      .where(eq(s.benchCapabilities.kindId, solder!.kindId))
      .limit(1)
    // The office opens the order: open, at the version it reads.
    const opened = (await sales.get(`/api/orders/${orderId}`)).body
    expect(opened.status).toBe('open')
    const c = await manager.post(`/api/bench/operations/${solder!.id}/claim`, { requestId: rid(), benchId: where!.benchId, personId: who!.personId })
    expect(c.status, JSON.stringify(c.body)).toBe(200)
    // The office saves its terms as its form holds them (the status it read among them), on the version it read.
    const emit = vi.spyOn(t.realtime, 'emit')
    const saved = await sales.patch(`/api/orders/${orderId}`, { status: 'open', dueDate: '2031-11-14', priority: 2, version: opened.version })
    expect(saved.status, JSON.stringify(saved.body)).toBe(200)
    // Two versions on: the bench's move and the office's change.
    expect(saved.body).toMatchObject({ status: 'in-work', dueDate: '2031-11-14', priority: 2, version: opened.version + 2 })
    expect(emit).toHaveBeenCalledWith(expect.any(Number), 'order:updated', { id: orderId, version: opened.version + 2 })
    emit.mockRestore()
    // Someone else saves over a version the office has since changed: refused, as before.
    const other = await manager.patch(`/api/orders/${orderId}`, { priority: 5, version: opened.version + 1 })
    expect(other.status, JSON.stringify(other.body)).toBe(409)
    const twice = await manager.patch(`/api/orders/${orderId}`, { priority: 5, version: opened.version })
    expect(twice.status, JSON.stringify(twice.body)).toBe(409)
    // Read in work, then the step is handed back (open again), and the office cancels it: both moved the status, refused.
    const inWork = (await sales.get(`/api/orders/${orderId}`)).body
    const r = await manager.post(`/api/bench/operations/${solder!.id}/release`, { requestId: rid(), personId: who!.personId })
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    const clash = await sales.patch(`/api/orders/${orderId}`, { status: 'cancelled', version: inWork.version })
    expect(clash.status, JSON.stringify(clash.body)).toBe(409)
    const [now] = await t.db.select({ status: s.orders.status, priority: s.orders.priority }).from(s.orders).where(eq(s.orders.id, orderId))
    expect(now).toEqual({ status: 'open', priority: 2 })
  })

  it('when the office has marked an order ready, then work at the bench leaves its status as the office set it', async () => {
    const bagId = await bagOnRouting({ code: 'follow-ready', name: 'Bolt ring', kind: 'piece' })
    const [bag] = await t.db.select({ orderId: s.jobBags.orderId }).from(s.jobBags).where(eq(s.jobBags.id, bagId))
    await t.db.update(s.orders).set({ status: 'ready' }).where(eq(s.orders.id, bag!.orderId))
    const [solder] = await t.db
      .select({ id: s.operations.id, kindId: s.operations.kindId })
      .from(s.operations)
      .where(and(eq(s.operations.jobBagId, bagId), eq(s.operations.key, 'solder')))
    const [who] = await t.db.select({ personId: s.personSkills.personId }).from(s.personSkills).where(eq(s.personSkills.kindId, solder!.kindId)).limit(1)
    const [where] = await t.db
      .select({ benchId: s.benchCapabilities.benchId })
      .from(s.benchCapabilities)
      .where(eq(s.benchCapabilities.kindId, solder!.kindId))
      .limit(1)
    const c = await manager.post(`/api/bench/operations/${solder!.id}/claim`, { requestId: rid(), benchId: where!.benchId, personId: who!.personId })
    expect(c.status, JSON.stringify(c.body)).toBe(200)
    expect((await t.db.select({ status: s.orders.status }).from(s.orders).where(eq(s.orders.id, bag!.orderId)))[0]!.status).toBe('ready')
  })
})
