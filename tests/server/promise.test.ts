// Promise dates: the check on the live plan and on a quick plan, the P50/P80/P95 range, and accepting it as an order.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { format, parseISO } from 'date-fns'
import { startFakeSmtp, type FakeSmtp } from '../../server/mail/fake-smtp'
import { intersect, walkWorkingTime } from '../../server/scheduler/calendar.ts'
import { loadPlanningData } from '../../server/services/planning/problem'
import { createTestApp, signedIn, type Agent, type TestApp } from '../setup/app'
import { expectFieldError } from './helpers'

let t: TestApp
let fake: FakeSmtp
let sales: Agent
let templateId: number
const params = { metal: 'gold-18ct', stoneCount: 3, stoneSizeMm: 2, sizeMm: 54, finish: 'polished', quantity: 1 }

beforeAll(async () => {
  fake = await startFakeSmtp()
  t = await createTestApp({ SMTP_URL: fake.url })
  fake.useDb(t.db)
  sales = await signedIn(t.app, 'sales')
  const { rows } = await t.pool.query(`select t.id from routing_templates t order by t.id limit 1`)
  templateId = rows[0].id
})
afterAll(async () => { await t?.close(); await fake?.close() })

describe('promise check', () => {
  it('when nothing is published yet, then it answers from a quick plan with a completion after now and a re-planned answer', async () => {
    const r = await sales.post('/api/promise/check', { templateId, params })
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    expect(r.body.basis).toBe('quick-plan')
    expect(Date.parse(r.body.fixedPlan.at)).toBeGreaterThan(Date.parse(r.body.now))
    expect(Date.parse(r.body.replanned.at)).toBeGreaterThan(Date.parse(r.body.now))
    expect(r.body.fixedPlan.date).toMatch(/^\d{4}-\d{2}-\d{2}$/)
    expect(r.body.operations.length).toBeGreaterThan(0)
    expect(r.body.range).toBeNull()
  })

  it('when a template is not the workshop’s or the params are bad, then it is refused naming the field', async () => {
    expectFieldError(await sales.post('/api/promise/check', { templateId: 999999, params }), 'templateId')
    expectFieldError(await sales.post('/api/promise/check', { templateId, params: { ...params, quantity: 0 } }), 'params.quantity')
  })

  it('when bench users ask, then they are refused (sales, managers and owners only)', async () => {
    const bench = await signedIn(t.app, 'bench')
    expect((await bench.post('/api/promise/check', { templateId, params })).status).toBe(403)
  })

  it('when every person with the first step’s skill is booked on the live plan, then the promise does not finish before they are free', async () => {
    const now = new Date()
    const data = await loadPlanningData(t.db, 1, now)
    const { rows: steps } = await t.pool.query(`select kind_id, required_level, lead_days from template_steps where template_id = $1 order by seq`, [templateId])
    const first = steps.find((s: { lead_days: number }) => s.lead_days === 0)
    const able = data.meta.skills.filter((k) => k.kindId === first.kind_id && k.level >= first.required_level && data.meta.people.has(String(k.personId)))
    const benchIds = data.meta.capabilities.filter((c) => c.kindId === first.kind_id && data.meta.benches.has(String(c.benchId))).map((c) => String(c.benchId))
    expect(able.length).toBeGreaterThan(0)
    // Book each skilled person (on a bench of their own) for 3 working days from their next working minute.
    const { rows: open } = await t.pool.query(`select o.id from operations o join job_bags b on b.id = o.job_bag_id join orders r on r.id = b.order_id where r.status = 'open' and o.status in ('ready','pending') and o.lead_days = 0 order by o.id limit $1`, [able.length])
    const allBenches = data.problem.benches.map((b) => b.id)
    let freeAt = Infinity
    for (const [i, k] of able.entries()) {
      const person = data.problem.people.find((p) => p.id === String(k.personId))!
      const benchId = allBenches[i % allBenches.length]!
      const w = intersect(data.problem.benches.find((b) => b.id === benchId)!.available, person.available)
      const segs = walkWorkingTime(w, data.problem.now, 3 * 8 * 60)!
      const start = segs[0]!.start, end = segs[segs.length - 1]!.end
      // Free for this skill once the person is free, on any capable bench.
      freeAt = Math.min(freeAt, end)
      await t.pool.query(`update operations set planned_bench_id = $1, planned_person_id = $2, planned_start = $3, planned_end = $4 where id = $5`,
        [Number(benchId), k.personId, data.clock.toDate(start).toISOString(), data.clock.toDate(end).toISOString(), open[i].id])
    }
    expect(benchIds.length).toBeGreaterThan(0)
    // Written straight into the database: announce the change as the services do, so cached answers are dropped.
    t.realtime.emit(1, 'plan:changed', { id: 0, operationId: 0 })
    const r = await sales.post('/api/promise/check', { templateId, params })
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    expect(r.body.basis).toBe('live-plan')
    expect(r.body.fixedPlan.feasible).toBe(true)
    const completion = data.clock.toMinute(r.body.fixedPlan.at)
    expect(completion).toBeGreaterThan(data.problem.now)
    expect(completion).toBeGreaterThanOrEqual(freeAt)
    await t.pool.query(`update operations set planned_bench_id = null, planned_person_id = null, planned_start = null, planned_end = null where id = any($1)`, [open.map((o: { id: number }) => o.id)])
  })

  it('when the range is asked for, then P50 ≤ P80 ≤ P95, P50 is before P95, and the stated assumption comes with it', async () => {
    const r = await sales.post('/api/promise/check', { templateId, params, range: true, runs: 500, seed: 7, sample: true })
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    const g = r.body.range
    expect(g.runs).toBe(500)
    expect(g.sampleMinutes).toHaveLength(500)
    expect(Date.parse(g.p50.at)).toBeLessThanOrEqual(Date.parse(g.p80.at))
    expect(Date.parse(g.p80.at)).toBeLessThanOrEqual(Date.parse(g.p95.at))
    expect(Date.parse(g.p50.at)).toBeGreaterThan(Date.parse(r.body.now))
    // The quantiles against known answers are in promise-range.test.ts (jstat's closed form); here: the range is a range.
    expect(g.quantileMinutes.p50).toBeLessThan(g.quantileMinutes.p95)
    expect(Math.min(...g.sampleMinutes)).toBeLessThan(Math.max(...g.sampleMinutes))
    expect(g.assumption).toMatch(/log-normal .*σ = 0\.35/)
    expect(g.kinds.length).toBeGreaterThan(0)
    expect(g.kinds.some((k: { source: string }) => k.source === 'history')).toBe(true)
    // Seeded: the same seed gives the same range.
    const again = await sales.post('/api/promise/check', { templateId, params, range: true, runs: 500, seed: 7 })
    expect(again.body.range.quantileMinutes).toEqual(g.quantileMinutes)
  })
})

describe('accepting a promise', () => {
  it('when sales turns the promise into an order, then the order keeps the promised date and the customer gets a confirmation with that date', async () => {
    const check = await sales.post('/api/promise/check', { templateId, params })
    const promisedDate: string = check.body.fixedPlan.date
    const { rows: [c] } = await t.pool.query(`select id, email from customers where workshop_id = 1 order by id limit 1`)
    const r = await sales.post('/api/promise/accept', { customerId: c.id, title: 'Bezel ring with three stones', templateId, params, promisedDate, priority: 2, priceQuoted: 640 })
    expect(r.status, JSON.stringify(r.body)).toBe(201)
    expect(r.body.order.promisedDate).toBe(promisedDate)
    expect(r.body.order.dueDate).toBe(promisedDate)
    expect(r.body.order.jobBags).toHaveLength(1)
    expect(['sent', 'delivered']).toContain(r.body.confirmation.status)
    const msg = await fake.waitFor((m) => m.to.includes(c.email) && m.subject.includes(r.body.order.number))
    // Reference: date-fns formats the long date independently of our dayjs template.
    const long = format(parseISO(promisedDate), 'EEEE d MMMM yyyy')
    expect(msg.text).toContain(long)
    expect(msg.text).toContain(promisedDate)
    const { rows: [o] } = await t.pool.query(`select * from outbox where order_id = $1 and kind = 'promise-confirmation'`, [r.body.order.id])
    expect(o.to).toBe(c.email)
    expect(o.status).toBe('delivered')
    expect(o.text).toContain(long)
  })

  it('when the due date is before the promised date, then it is refused on the field', async () => {
    const { rows: [c] } = await t.pool.query(`select id from customers where workshop_id = 1 order by id limit 1`)
    expectFieldError(await sales.post('/api/promise/accept', { customerId: c.id, title: 'x', templateId, params, promisedDate: '2031-05-10', dueDate: '2031-05-01', priority: 3, priceQuoted: 1 }), 'dueDate')
  })
})

describe('order forecast', () => {
  it('when an order has a job bag on the live plan past its promised date, then the forecast says late and why', async () => {
    const { rows: [o] } = await t.pool.query(`select r.id, b.id as bag_id from orders r join job_bags b on b.order_id = r.id where r.status = 'open' order by r.id limit 1`)
    const today = new Date().toISOString().slice(0, 10)
    await t.pool.query(`update orders set promised_date = $1::date - 3 where id = $2`, [today, o.id])
    const data = await loadPlanningData(t.db, 1, new Date())
    const { rows: [op] } = await t.pool.query(`select id from operations where job_bag_id = $1 and lead_days = 0 order by seq desc limit 1`, [o.bag_id])
    const b = data.problem.benches[0]!, p = data.problem.people[0]!
    const segs = walkWorkingTime(intersect(b.available, p.available), data.problem.now, 60)!
    await t.pool.query(`update operations set planned_bench_id = $1, planned_person_id = $2, planned_start = $3, planned_end = $4 where id = $5`,
      [Number(b.id), Number(p.id), data.clock.toDate(segs[0]!.start).toISOString(), data.clock.toDate(segs.at(-1)!.end).toISOString(), op.id])
    const r = await sales.get(`/api/orders/${o.id}/forecast`)
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    expect(r.body.state).toBe('late')
    expect(r.body.jobBags[0].state).toBe('late')
    expect(r.body.jobBags[0].why).toMatch(/after the end of/)
    expect((await sales.get('/api/orders/999999/forecast')).status).toBe(404)
  })
})
