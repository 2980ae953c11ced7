// The whole step model through the API: a routing's learning curve, stone size bands and per-mm minutes reach the job
// bag's step minutes and the promise check alike; the routing API keeps and validates them.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { count, eq } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { createTestApp, signedIn, type Agent, type TestApp } from '../setup/app'
import { firstCustomerId } from '../setup/fixtures'
import { auditRows, expectFieldError } from './helpers'

let t: TestApp
let manager: Agent
let sales: Agent
let kinds: Record<string, number>
let customerId: number
let run: { id: number; version: number }
let oneOff: { id: number; version: number }

const estimates = (ops: { key: string; estimateMinutes: number }[]) => Object.fromEntries(ops.map((o) => [o.key, o.estimateMinutes]))

beforeAll(async () => {
  t = await createTestApp()
  manager = await signedIn(t.app, 'manager')
  sales = await signedIn(t.app, 'sales')
  kinds = Object.fromEntries((await manager.get('/api/operation-kinds')).body.map((k: { code: string; id: number }) => [k.code, k.id]))
  customerId = await firstCustomerId(t.db)
  const a = await manager.post('/api/routings', {
    code: 'run-fixture',
    name: 'Fixture: production run',
    learningRate: 0.85,
    steps: [{ key: 'finish', kindId: kinds.filing, name: 'Finish each piece', baseMinutes: 12 }],
  })
  expect(a.status, JSON.stringify(a.body)).toBe(201)
  run = a.body
  const b = await manager.post('/api/routings', {
    code: 'model-fixture',
    name: 'Fixture: set and polish by size',
    steps: [
      { key: 'set', kindId: kinds.setting, name: 'Set stones', baseMinutes: 30, perStoneMinutes: 7, sizeBandFactors: { melee: 1.2, large: 1.5 } },
      { key: 'polish', kindId: kinds.polishing, name: 'Polish', baseMinutes: 20, perMmMinutes: 0.25, after: ['set'] },
    ],
  })
  expect(b.status, JSON.stringify(b.body)).toBe(201)
  oneOff = b.body
})
afterAll(async () => {
  await t?.close()
})

describe('a production run with a learning curve', () => {
  it('when 40 pieces of a 12-minute step are ordered on an 85 % routing, then the job bag step takes Wright’s total of 202.1 min', async () => {
    // Wright 1936 (cumulative-average form, TRADE.md): T(N) = a·N^(1+b), b = log₂ r.
    // a = 12 min, r = 0.85, N = 40: b = ln 0.85 / ln 2 = −0.162519 / 0.693147 = −0.234465; 1 + b = 0.765535;
    // 40^0.765535 = 10^(0.765535 × 1.602060) = 10^1.226433 = 16.8435; T(40) = 12 × 16.8435 = 202.12 min
    // (calculator, outside the code), against 12 × 40 = 480 min without a curve.
    const r = await sales.post('/api/orders', {
      customerId,
      title: 'Run of 40',
      dueDate: '2031-08-01',
      pieces: [{ routingId: run.id, piece: '40 pieces', params: { quantity: 40 } }],
    })
    expect(r.status, JSON.stringify(r.body)).toBe(201)
    const [op] = r.body.jobBags[0].operations
    expect(op.estimateSource).toBe('routing')
    expect(Math.abs(op.estimateMinutes - 202.12)).toBeLessThanOrEqual(0.1)
  })

  it('when one piece is ordered on the same routing, then it takes the first piece’s 12 min (no curve for one piece)', async () => {
    const r = await sales.post('/api/orders', {
      customerId,
      title: 'One piece',
      dueDate: '2031-08-01',
      pieces: [{ routingId: run.id, piece: 'one', params: { quantity: 1 } }],
    })
    expect(estimates(r.body.jobBags[0].operations)).toEqual({ finish: 12 })
  })

  it('when the promise is checked for the same 40 pieces, then its step minutes are the same Wright total', async () => {
    const r = await sales.post('/api/promise/check', { routingId: run.id, params: { quantity: 40 } })
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    // Same hand-worked T(40) = 202.12 min as above.
    expect(Math.abs(r.body.operations[0].minutes - 202.12)).toBeLessThanOrEqual(0.1)
  })

  it('when the learning rate is taken off, then 40 pieces take 40 × 12 = 480 min again', async () => {
    const cur = (await manager.get(`/api/routings/${run.id}`)).body
    const put = await manager.put(`/api/routings/${run.id}`, { ...cur, learningRate: null })
    expect(put.status, JSON.stringify(put.body)).toBe(200)
    expect(put.body.learningRate).toBeNull()
    expect((await auditRows(t, 'routing', run.id))[0]).toMatchObject({ action: 'update', details: { learningRate: null } })
    const r = await sales.post('/api/orders', {
      customerId,
      title: 'Run of 40, flat',
      dueDate: '2031-08-01',
      pieces: [{ routingId: run.id, piece: '40 pieces', params: { quantity: 40 } }],
    })
    expect(estimates(r.body.jobBags[0].operations)).toEqual({ finish: 480 })
  })
})

describe('stone size bands and per-mm minutes', () => {
  it('when a routing is read back, then its learning rate, per-mm minutes and band factors are as saved', async () => {
    const got = (await manager.get(`/api/routings/${oneOff.id}`)).body
    expect(got.learningRate).toBeNull()
    expect(got.steps[0]).toMatchObject({ key: 'set', perMmMinutes: 0, sizeBandFactors: { melee: 1.2, large: 1.5 } })
    expect(got.steps[1]).toMatchObject({ key: 'polish', perMmMinutes: 0.25, sizeBandFactors: {} })
    const runGot = (await manager.get('/api/routings')).body.find((x: { code: string }) => x.code === 'stud-run')
    // The demo stud run learns at 85 % (seed.ts; common practice, no source).
    expect(runGot.learningRate).toBeCloseTo(0.85, 6)
  })

  it('when three 4 mm stones and a 62 mm piece are ordered twice over, then setting uses the large band and polishing the size', async () => {
    const r = await sales.post('/api/orders', {
      customerId,
      title: 'Two large-stone pieces',
      dueDate: '2031-08-02',
      pieces: [{ routingId: oneOff.id, piece: 'pair', params: { stoneCount: 3, stoneSizeMm: 4, sizeMm: 62, quantity: 2 } }],
    })
    expect(r.status, JSON.stringify(r.body)).toBe(201)
    // Hand-worked: 4 mm is over 3 mm, the large band (×1.5): set = (30 + 7 × 3 × 1.5) × 2 = (30 + 31.5) × 2 = 123;
    // polish = (20 + 0.25 × 62) × 2 = (20 + 15.5) × 2 = 71. No learning rate on this routing: plain × 2.
    expect(estimates(r.body.jobBags[0].operations)).toEqual({ set: 123, polish: 71 })
  })

  it('when the stones are 1.3 mm melee, then the melee factor applies; a band not given counts 1', async () => {
    // Hand-worked: set = 30 + 7 × 10 × 1.2 = 114 (melee); 2 mm (small, no factor) = 30 + 7 × 10 = 100; polish with size 0 = 20.
    const melee = await sales.post('/api/orders', {
      customerId,
      title: 'Melee',
      dueDate: '2031-08-02',
      pieces: [{ routingId: oneOff.id, piece: 'melee', params: { stoneCount: 10, stoneSizeMm: 1.3 } }],
    })
    expect(estimates(melee.body.jobBags[0].operations)).toEqual({ set: 114, polish: 20 })
    const small = await sales.post('/api/orders', {
      customerId,
      title: 'Small',
      dueDate: '2031-08-02',
      pieces: [{ routingId: oneOff.id, piece: 'small', params: { stoneCount: 10, stoneSizeMm: 2 } }],
    })
    expect(estimates(small.body.jobBags[0].operations)).toEqual({ set: 100, polish: 20 })
  })

  it('when the promise is checked for the large-stone pair, then it shows the same 123 and 71 minutes', async () => {
    const r = await sales.post('/api/promise/check', { routingId: oneOff.id, params: { stoneCount: 3, stoneSizeMm: 4, sizeMm: 62, quantity: 2 } })
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    // Same hand-worked figures as the order above.
    expect(Object.fromEntries(r.body.operations.map((o: { key: string; minutes: number }) => [o.key, o.minutes]))).toEqual({ set: 123, polish: 71 })
  })
})

describe('refused routing input', () => {
  const base = () => ({ code: 'bad-fixture', name: 'Bad', steps: [{ key: 'a', kindId: kinds.filing, name: 'A', baseMinutes: 5, perStoneMinutes: 1 }] })
  const step = (extra: Record<string, unknown>) => ({ ...base(), steps: [{ ...base().steps[0], ...extra }] })

  it('when the learning rate is 0.5 or less, above 1 or not a number, then 400 naming learningRate', async () => {
    expectFieldError(await manager.post('/api/routings', { ...base(), learningRate: 0.5 }), 'learningRate', /above 0\.5/)
    expectFieldError(await manager.post('/api/routings', { ...base(), learningRate: 0.2 }), 'learningRate', /above 0\.5/)
    expectFieldError(await manager.post('/api/routings', { ...base(), learningRate: 1.2 }), 'learningRate', /at most 1/)
    expectFieldError(await manager.post('/api/routings', { ...base(), learningRate: 'fast' }), 'learningRate', /number/)
    const cur = (await manager.get(`/api/routings/${oneOff.id}`)).body
    expectFieldError(await manager.put(`/api/routings/${oneOff.id}`, { ...cur, learningRate: 1.5 }), 'learningRate', /at most 1/)
    // Exactly 1 (no learning) is allowed.
    expect((await manager.post('/api/routings', { ...base(), code: 'flat-fixture', learningRate: 1 })).status).toBe(201)
  })

  it('when a band factor is outside 0.2–5, names an unknown band, or per-mm minutes are negative, then 400 naming the field', async () => {
    expectFieldError(await manager.post('/api/routings', step({ sizeBandFactors: { large: 6 } })), 'steps.0.sizeBandFactors.large', /at most 5/)
    expectFieldError(await manager.post('/api/routings', step({ sizeBandFactors: { melee: 0.1 } })), 'steps.0.sizeBandFactors.melee', /at least 0\.2/)
    expectFieldError(await manager.post('/api/routings', step({ sizeBandFactors: { huge: 2 } })), 'steps.0.sizeBandFactors', /melee, small and large/)
    expectFieldError(await manager.post('/api/routings', step({ perMmMinutes: -0.5 })), 'steps.0.perMmMinutes', /negative/)
    const [n] = await t.db.select({ n: count() }).from(s.routings).where(eq(s.routings.code, 'bad-fixture'))
    expect(n!.n).toBe(0)
  })
})
