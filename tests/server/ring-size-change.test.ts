// A job bag's ring size changed after ordering, against real PostgreSQL: the new size kept in the customer's scale with the version
// checked (409 when stale), audited with from, to and why; a bad size refused naming the field; a resize keeps both its sizes.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { createTestApp, signedIn, type Agent, type TestApp } from '../setup/app'
import { firstCustomerId, routingId } from '../setup/fixtures'
import { auditRows, expectCleanError, expectFieldError, secondWorkshop } from './helpers'

let t: TestApp
let sales: Agent
let manager: Agent
let ringBag: { id: number; version: number }
let resizeBag: { id: number; version: number }
interface Bag {
  id: number
  version: number
  params: Record<string, unknown>
  history: { action: string; details: Record<string, unknown> }[]
}
const bag = async (id: number) => (await manager.get(`/api/job-bags/${id}`)).body as Bag

beforeAll(async () => {
  t = await createTestApp()
  sales = await signedIn(t.app, 'sales')
  manager = await signedIn(t.app, 'manager')
  const c = { id: await firstCustomerId(t.db) }
  const signet = { id: await routingId(t.db, 'signet-ring') }
  const resize = { id: await routingId(t.db, 'ring-resize') }
  const r = await sales.post('/api/orders', {
    customerId: c.id,
    title: 'Signet ring and a resize',
    dueDate: '2031-09-01',
    pieces: [
      { routingId: signet.id, piece: 'Signet ring', params: { metal: 'gold-9ct', ringSize: { scale: 'uk', value: 'N' } } },
      {
        routingId: resize.id,
        piece: 'Resize L to N',
        params: { metal: 'silver-925', resizeFrom: { scale: 'uk', value: 'L' }, resizeTo: { scale: 'uk', value: 'N' } },
      },
    ],
  })
  expect(r.status, JSON.stringify(r.body)).toBe(201)
  ringBag = r.body.jobBags[0]
  resizeBag = r.body.jobBags[1]
})
afterAll(async () => {
  await t?.close()
})

describe('changing a ring size after ordering', () => {
  it('when sales gives the new size with the version read, then the bag keeps it, its version moves on and the change is audited with from, to and why', async () => {
    const r = await sales.put(`/api/job-bags/${ringBag.id}/ring-size`, {
      ringSize: { scale: 'us', value: '7½' },
      reason: 'measured again at the counter',
      version: ringBag.version,
    })
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    expect(r.body.params.ringSize).toEqual({ scale: 'us', value: '7½' })
    expect(r.body.version).toBe(ringBag.version + 1)
    const [a] = await auditRows(t, 'job-bag', ringBag.id)
    expect(a).toMatchObject({
      action: 'ring-size',
      details: { changes: { ringSize: { from: { scale: 'uk', value: 'N' }, to: { scale: 'us', value: '7½' } } }, reason: 'measured again at the counter' },
    })
    // US 7½: (0.458 + 0.032 × 7.5) in × 25.4 = 17.7292 mm across, × π = 55.70 mm round the inside → ISO 55.7; the pinned chart's nearest letter
    // to 55.7 mm is O½ (55.7). UK N is 53.8 mm: ISO 53.8, Ø 53.8 / π = 17.1 mm, US (17.125 / 25.4 − 0.458) / 0.032 = 6.76 → 6¾.
    expect(a!.details.summary).toBe('ring size UK N · ISO 53.8 (Ø 17.1 mm) · US 6¾ → US 7½ · ISO 55.7 (Ø 17.7 mm) · UK O½')
    expect((await bag(ringBag.id)).history.some((h) => h.action === 'ring-size')).toBe(true)
    ringBag = { id: ringBag.id, version: r.body.version }
  })

  it('when the version is stale, then 409 and the size stays', async () => {
    expectCleanError(await manager.put(`/api/job-bags/${ringBag.id}/ring-size`, { ringSize: { scale: 'uk', value: 'P' }, version: ringBag.version - 1 }), 409)
    expect((await bag(ringBag.id)).params.ringSize).toEqual({ scale: 'us', value: '7½' })
  })

  it('when the size is not a size of its scale, or the same as before, then 400 names the field', async () => {
    expectFieldError(
      await sales.put(`/api/job-bags/${ringBag.id}/ring-size`, { ringSize: { scale: 'us', value: '20' }, version: ringBag.version }),
      'ringSize.value',
      /not a size in that scale/,
    )
    expectFieldError(
      await sales.put(`/api/job-bags/${ringBag.id}/ring-size`, { ringSize: { scale: 'mm', value: '54' }, version: ringBag.version }),
      'ringSize.scale',
    )
    expectFieldError(await sales.put(`/api/job-bags/${ringBag.id}/ring-size`, { version: ringBag.version }), 'ringSize', /give the ring size/)
    expectFieldError(
      await sales.put(`/api/job-bags/${ringBag.id}/ring-size`, { ringSize: { scale: 'us', value: '7½' }, version: ringBag.version }),
      'ringSize',
      /already says/,
    )
    expect((await bag(ringBag.id)).version).toBe(ringBag.version)
  })

  it('when a resize’s target changes, then it keeps recording from and to; it may not lose one of them or end where it starts', async () => {
    const r = await sales.put(`/api/job-bags/${resizeBag.id}/ring-size`, {
      resizeTo: { scale: 'uk', value: 'O' },
      reason: 'customer wants it a little bigger',
      version: resizeBag.version,
    })
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    expect(r.body.params).toMatchObject({ resizeFrom: { scale: 'uk', value: 'L' }, resizeTo: { scale: 'uk', value: 'O' } })
    const v = r.body.version as number
    expectFieldError(
      await sales.put(`/api/job-bags/${resizeBag.id}/ring-size`, { resizeFrom: null, version: v }),
      'resizeFrom',
      /both the size the ring was and the size it is to be/,
    )
    // UK L is 51.2 mm on the pinned chart; ISO 51.2 is the same size written another way.
    expectFieldError(
      await sales.put(`/api/job-bags/${resizeBag.id}/ring-size`, { resizeTo: { scale: 'iso', value: '51.2' }, version: v }),
      'resizeTo',
      /same size/,
    )
    const after = await bag(resizeBag.id)
    expect(after.version).toBe(v)
    expect(after.params).toMatchObject({ resizeFrom: { scale: 'uk', value: 'L' }, resizeTo: { scale: 'uk', value: 'O' } })
  })

  it('when the bench tries, then 403; another workshop gets 404', async () => {
    const bench = await signedIn(t.app, 'bench')
    expectCleanError(await bench.put(`/api/job-bags/${ringBag.id}/ring-size`, { ringSize: { scale: 'uk', value: 'P' }, version: ringBag.version }), 403)
    const other = await secondWorkshop(t, 'ring')
    expectCleanError(await other.agent.put(`/api/job-bags/${ringBag.id}/ring-size`, { ringSize: { scale: 'uk', value: 'P' }, version: ringBag.version }), 404)
  })
})
