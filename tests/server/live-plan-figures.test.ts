// The live plan's figures (lateness, pieces late, finish) after changes by hand: stored from its bars as they stand, used by
// every comparison with the live plan (the versions list, a draft's comparison, a planner run's verdict); and the
// comparison naming each change by job bag and step.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { and, desc, eq, inArray, isNotNull, max, ne, or } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { waitForRun } from '../../server/planning/runs'
import { dayjs } from '../../server/lib/time'
import { createTestApp, signedIn, type Agent, type TestApp } from '../setup/app'
import { firstCustomerId, firstWorkshopId, routingId as firstRoutingId } from '../setup/fixtures'

let t: TestApp
let manager: Agent
let workshopId: number
const TZ = 'Europe/London'
const from = dayjs().tz(TZ).startOf('isoWeek').format('YYYY-MM-DD')
const to = dayjs(from).add(27, 'day').format('YYYY-MM-DD')
const OPEN = ['pending', 'ready', 'claimed', 'paused', 'running'] as const

async function runPlanner(seconds = 1) {
  const r = await manager.post('/api/plans/runs', { timeLimitSeconds: seconds, stability: 'small-changes' })
  expect(r.status, JSON.stringify(r.body)).toBe(202)
  const done = await waitForRun(t.db, r.body.id)
  expect(done?.status, JSON.stringify(done)).toBe('done')
  return done!
}

const board = async () => {
  const r = await manager.get(`/api/board?from=${from}&to=${to}`)
  expect(r.status).toBe(200)
  return r.body
}
const livePlan = async () => ((await manager.get('/api/plans')).body as any[]).find((v) => v.status === 'published')

/**
 * The live plan's figures worked out here from the database: per job bag the board counts as open work, the end of its last
 * open planned step against midnight after its promised (else due) date in the workshop's zone, each minute late weighted by
 * the order's priority 1–5. Working time late is the board's own per-bag figure, added up over the late bags.
 */
async function figuresFromBars() {
  const b = await board()
  const bags = (b.jobs as any[]).filter((j) => j.expectedCompletion !== null)
  const bars = await t.db
    .select({ bag: s.operations.jobBagId, end: s.operations.plannedEnd })
    .from(s.operations)
    .where(
      and(
        inArray(
          s.operations.jobBagId,
          bags.map((j) => j.jobBagId),
        ),
        isNotNull(s.operations.plannedStart),
        inArray(s.operations.status, [...OPEN]),
      ),
    )
  const orders = await t.db
    .select({ bag: s.jobBags.id, promised: s.orders.promisedDate, due: s.orders.dueDate, priority: s.orders.priority })
    .from(s.jobBags)
    .innerJoin(s.orders, eq(s.orders.id, s.jobBags.orderId))
  const orderOf = new Map(orders.map((o) => [o.bag, o]))
  let weighted = 0,
    lateJobs = 0,
    lateWorking = 0,
    worst = 0,
    last = -Infinity
  const finish = new Map<number, number>()
  for (const x of bars) finish.set(x.bag, Math.max(finish.get(x.bag) ?? -Infinity, new Date(x.end!).getTime()))
  for (const j of bags) {
    const end = finish.get(j.jobBagId)!
    // The board's finish is the same bar's end.
    expect(new Date(j.expectedCompletion).getTime()).toBe(end)
    last = Math.max(last, end)
    const o = orderOf.get(j.jobBagId)!
    const due = dayjs
      .tz(`${o.promised ?? o.due} 00:00`, TZ)
      .add(1, 'day')
      .valueOf()
    if (end <= due) continue
    weighted += Math.min(5, Math.max(1, o.priority)) * ((end - due) / 60_000)
    lateJobs++
    lateWorking += j.lateWorkingMinutes
    worst = Math.max(worst, j.lateWorkingMinutes)
  }
  return {
    weightedTardiness: weighted,
    weightedTardinessHours: Math.round((weighted / 60) * 10) / 10,
    lateJobs,
    lateWorkingMinutes: lateWorking,
    worstLateWorkingMinutes: worst,
    completion: new Date(last).toISOString(),
    jobs: bags.length,
    operations: bars.length,
  }
}

/** When the bench or the person of a bar is next free: the latest end of anything open planned on either. */
async function busyUntil(benchId: number, personId: number) {
  const o = s.operations
  const [r] = await t.db
    .select({ until: max(o.plannedEnd) })
    .from(o)
    .where(and(isNotNull(o.plannedStart), inArray(o.status, [...OPEN]), or(eq(o.plannedBenchId, benchId), eq(o.plannedPersonId, personId))))
  return new Date(r!.until!).getTime()
}

beforeAll(async () => {
  t = await createTestApp()
  manager = await signedIn(t.app, 'manager')
  workshopId = await firstWorkshopId(t.db)
  const first = await runPlanner()
  expect((await manager.post(`/api/plans/${first.planId}/publish`)).status).toBe(200)
})
afterAll(async () => {
  await t?.close()
})

describe("the live plan's figures after changes by hand", () => {
  it("when a late job bag's last step is moved later by hand and pinned, then the live plan's figures are those its bars now give", async () => {
    const b = await board()
    const ops = await t.db.select().from(s.operations)
    const late = new Map((b.jobs as any[]).filter((j) => j.state === 'late').map((j) => [j.jobBagId, j]))
    // A bar that is its late job bag's finish (nothing of the bag ends after it), not running, at a bench with a person.
    const candidates = (b.items as any[]).filter(
      (i) =>
        !i.outside &&
        i.status !== 'running' &&
        i.benchId &&
        i.personId &&
        late.has(i.jobBagId) &&
        new Date(late.get(i.jobBagId).expectedCompletion).getTime() === new Date(i.end).getTime() &&
        !ops.some((o) => o.jobBagId === i.jobBagId && o.after.includes(ops.find((x) => x.id === i.id)!.key)),
    )
    expect(candidates.length, 'the demo plan has late job bags finishing in the first weeks').toBeGreaterThan(0)
    let bar: any = null,
      free = Infinity
    for (const i of candidates) {
      const u = await busyUntil(i.benchId, i.personId)
      if (u < free) [bar, free] = [i, u]
    }
    const before = await livePlan()
    // An hour after everything booked on its bench and person: no double booking, no successor, the bag ends later.
    const r = await manager.patch(`/api/board/operations/${bar.id}`, { start: new Date(free + 3_600_000).toISOString(), version: bar.version })
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    expect(new Date(r.body.end).getTime()).toBeGreaterThan(new Date(bar.end).getTime())

    const expected = await figuresFromBars()
    const after = await livePlan()
    expect(after.id).toBe(before.id)
    expect(after.score.weightedTardinessHours).toBeGreaterThan(before.score.weightedTardinessHours)
    expect(after.score).toMatchObject(expected)

    const pin = await manager.patch(`/api/board/operations/${bar.id}`, { pinned: true, version: r.body.version })
    expect(pin.status, JSON.stringify(pin.body)).toBe(200)
    expect((await livePlan()).score).toMatchObject(await figuresFromBars())
  })

  it('when a draft is compared with the live plan, then every change names its job bag number and step', async () => {
    const live = await livePlan()
    const bars = await t.db
      .select({
        id: s.operations.id,
        bench: s.operations.plannedBenchId,
        person: s.operations.plannedPersonId,
        start: s.operations.plannedStart,
        end: s.operations.plannedEnd,
      })
      .from(s.operations)
      .innerJoin(s.jobBags, eq(s.jobBags.id, s.operations.jobBagId))
      .where(and(eq(s.jobBags.workshopId, workshopId), isNotNull(s.operations.plannedStart), inArray(s.operations.status, [...OPEN])))
    expect(bars.length).toBeGreaterThan(20)
    // A draft that has every bar of the live plan a day later: each one is a change, most outside the board's window.
    const day = 86_400_000
    const assignments = Object.fromEntries(
      bars.map((x) => [
        String(x.id),
        {
          operationId: x.id,
          benchId: x.bench,
          personId: x.person,
          start: new Date(new Date(x.start!).getTime() + day).toISOString(),
          end: new Date(new Date(x.end!).getTime() + day).toISOString(),
        },
      ]),
    )
    const [last] = await t.db
      .select({ n: s.planVersions.number })
      .from(s.planVersions)
      .where(eq(s.planVersions.workshopId, workshopId))
      .orderBy(desc(s.planVersions.number))
      .limit(1)
    const [draft] = await t.db
      .insert(s.planVersions)
      .values({ workshopId, number: last!.n + 1, status: 'draft', score: { feasible: true, basedOnPlanId: live.id }, assignments })
      .returning({ id: s.planVersions.id })
    const cmp = await manager.get(`/api/plans/${draft!.id}/compare`)
    expect(cmp.status, JSON.stringify(cmp.body)).toBe(200)
    const named = await t.db
      .select({ id: s.operations.id, name: s.operations.name, bag: s.jobBags.number, bagId: s.jobBags.id })
      .from(s.operations)
      .innerJoin(s.jobBags, eq(s.jobBags.id, s.operations.jobBagId))
    const byId = new Map(named.map((x) => [x.id, x]))
    expect(cmp.body.moves.length).toBe(bars.length)
    for (const m of cmp.body.moves) {
      const op = byId.get(m.operationId)!
      expect(m, `operation ${m.operationId}`).toMatchObject({ jobBagId: op.bagId, jobBagNumber: op.bag, name: op.name })
    }
    // Every piece with a step moved finishes a day later; none finishes earlier.
    expect(cmp.body.gains).toMatchObject({ earlier: 0, lessLate: 0 })
    expect(cmp.body.gains.later).toBeGreaterThan(0)
    await t.db.update(s.planVersions).set({ status: 'discarded' }).where(eq(s.planVersions.id, draft!.id))
  })

  it('when a step was moved later by hand and the planner finds the plan it replaced, then the run offers it as a draft, and its comparison counts the piece less late as the figures show', async () => {
    // One job bag of open work, its steps all still to start, every other order closed and off the plan: the plan the planner finds for it
    // (and the live plan kept as it is and re-timed from now) puts its steps back where nothing holds them.
    const all = await t.db
      .select({ op: s.operations, bag: s.jobBags, outside: s.operationKinds.outside })
      .from(s.operations)
      .innerJoin(s.jobBags, eq(s.jobBags.id, s.operations.jobBagId))
      .innerJoin(s.operationKinds, eq(s.operationKinds.id, s.operations.kindId))
      .where(eq(s.jobBags.workshopId, workshopId))
      .orderBy(s.jobBags.id)
    const stepsOf = (bagId: number) => all.filter((x) => x.bag.id === bagId)
    // A job bag with two or more bench steps, all planned, none started, pinned or sent out.
    const bag = all
      .map((x) => x.bag)
      .find((b) => {
        const st = stepsOf(b.id)
        return (
          st.length > 1 && st.every((x) => ['pending', 'ready'].includes(x.op.status) && x.op.plannedStart && !x.op.pinned && !x.outside && x.op.leadDays === 0)
        )
      })
    expect(bag, 'the demo plan has a job bag with its bench steps all still to start').toBeTruthy()
    await t.db
      .update(s.orders)
      .set({ status: 'cancelled' })
      .where(and(eq(s.orders.workshopId, workshopId), ne(s.orders.id, bag!.orderId)))
    await t.db
      .update(s.operations)
      .set({ plannedStart: null, plannedEnd: null, plannedBenchId: null, plannedPersonId: null, pinned: false })
      .where(ne(s.operations.jobBagId, bag!.id))
    // Promised a week before this week began: late whatever the plan.
    await t.db
      .update(s.orders)
      .set({ promisedDate: dayjs(from).subtract(7, 'day').format('YYYY-MM-DD') })
      .where(eq(s.orders.id, bag!.orderId))
    const settle = await runPlanner()
    if (settle.planId) expect((await manager.post(`/api/plans/${settle.planId}/publish`)).status).toBe(200)

    // Its last step an hour later by hand (nothing else of the workshop is open to clash with).
    const bars = await t.db
      .select()
      .from(s.operations)
      .where(and(eq(s.operations.jobBagId, bag!.id), isNotNull(s.operations.plannedStart)))
    const lastStep = bars.reduce((a, x) => (new Date(x.plannedEnd!).getTime() > new Date(a.plannedEnd!).getTime() ? x : a))
    const moved = await manager.patch(`/api/board/operations/${lastStep.id}`, {
      start: new Date(new Date(lastStep.plannedStart!).getTime() + 3_600_000).toISOString(),
      version: lastStep.version,
    })
    expect(moved.status, JSON.stringify(moved.body)).toBe(200)
    const live = await livePlan()
    expect(live.score).toMatchObject(await figuresFromBars())

    const run = await runPlanner()
    expect(run.note ?? '').not.toMatch(/No better plan/)
    expect(run.planId, 'a draft less late than the live plan as it stands').toEqual(expect.any(Number))
    const draft = ((await manager.get('/api/plans')).body as any[]).find((v) => v.id === run.planId)
    expect(draft.score.weightedTardiness).toBeLessThan(live.score.weightedTardiness)
    expect(draft.score.lateWorkingMinutes).toBeLessThan(live.score.lateWorkingMinutes)
    const cmp = (await manager.get(`/api/plans/${run.planId}/compare`)).body
    expect(cmp.gains).toMatchObject({ earlier: 1, later: 0, lessLate: 1, moreLate: 0 })
    expect(cmp.moves.find((m: any) => m.operationId === lastStep.id)).toMatchObject({ jobBagNumber: bag!.number, name: lastStep.name })
  })

  it("when a promise books a new job bag's steps onto the live plan, then the live plan's figures count it", async () => {
    const sales = await signedIn(t.app, 'sales')
    const routingId = await firstRoutingId(t.db)
    const params = { metal: 'gold-18ct', stoneCount: 3, stoneSizeMm: 2, sizeMm: 54, finish: 'polished', quantity: 1 }
    const check = await sales.post('/api/promise/check', { routingId, params })
    expect(check.body.basis, JSON.stringify(check.body)).toBe('live-plan')
    const before = await livePlan()
    const r = await sales.post('/api/promise/accept', {
      customerId: await firstCustomerId(t.db, workshopId),
      title: 'Booked bezel ring',
      routingId,
      params,
      promisedDate: check.body.fixedPlan.date,
      priority: 3,
      priceQuotedMinor: 125_050,
    })
    expect(r.status, JSON.stringify(r.body)).toBe(201)
    expect(r.body.booking.booked, JSON.stringify(r.body.booking)).toBe(true)
    const after = await livePlan()
    expect(after.score.jobs).toBe(before.score.jobs + 1)
    expect(after.score).toMatchObject(await figuresFromBars())
  })
})
