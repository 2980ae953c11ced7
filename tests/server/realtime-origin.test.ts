// Events name the browser tab whose request caused them (x-client-id), so that tab can skip its own echo; other sources name none.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { createTestApp, signedIn, type Agent, type TestApp } from '../setup/app'
import { withOrigin } from '../../server/realtime/origin'

let t: TestApp
let sales: Agent
let workshopId: number

beforeAll(async () => {
  t = await createTestApp()
  sales = await signedIn(t.app, 'sales')
  workshopId = (await sales.get('/api/session')).body.user.workshopId
})
afterAll(async () => {
  await t.close()
})

/** The recorded payload of the newest customer event for that customer. */
async function eventOf(customerId: number) {
  await t.realtime.flush()
  const all = await t.realtime.since(workshopId, 0, true)
  return all.filter((e) => e.event === 'masterdata:changed' && (e.payload as { id: number }).id === customerId).at(-1)?.payload as
    Record<string, unknown> | undefined
}

describe('origin of an event', () => {
  it('when a tab sends its id with a write, then the event it causes names that tab', async () => {
    const r = await sales.agent.post('/api/customers').set('x-csrf-token', sales.csrf).set('x-client-id', 't-abc123-tab0001').send({ name: 'Origin Tester' })
    expect(r.status).toBe(201)
    expect(await eventOf(r.body.id)).toMatchObject({ entity: 'customer', id: r.body.id, origin: 't-abc123-tab0001' })
  })

  it('when a write comes without an id, or with one that is not a short token, then the event names no tab', async () => {
    const a = await sales.post('/api/customers', { name: 'No Origin' })
    expect(a.status).toBe(201)
    expect(await eventOf(a.body.id)).not.toHaveProperty('origin')
    const b = await sales.agent.post('/api/customers').set('x-csrf-token', sales.csrf).set('x-client-id', '<script>').send({ name: 'Bad Origin' })
    expect(b.status).toBe(201)
    expect(await eventOf(b.body.id)).not.toHaveProperty('origin')
  })

  it('when work runs outside a request (a job, a timer), then only an explicit origin is named', async () => {
    t.realtime.emit(workshopId, 'masterdata:changed', { entity: 'customer', id: 999_001 })
    withOrigin('t-job-checks-01', () => t.realtime.emit(workshopId, 'masterdata:changed', { entity: 'customer', id: 999_002 }))
    expect(await eventOf(999_001)).not.toHaveProperty('origin')
    expect(await eventOf(999_002)).toMatchObject({ origin: 't-job-checks-01' })
  })
})
