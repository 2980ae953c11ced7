// The sign-in limit counts failures (per address and per account), and a write without a session is 401 before any CSRF check.
import request from 'supertest'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { DEMO_PASSWORD } from '../../server/db/seed'
import { allRoutes } from '../../server/routes/index'
import { Agent, DEMO_EMAIL, createTestApp, signedIn, type TestApp } from '../setup/app'

// The production default (server/config.ts: LOGIN_ATTEMPTS_PER_15_MIN defaults to 20), not the test setup's 1000.
const LIMIT = 20

let t: TestApp
beforeAll(async () => {
  t = await createTestApp({ LOGIN_ATTEMPTS_PER_15_MIN: String(LIMIT) })
})
afterAll(async () => {
  await t?.close()
})

/** Signs in from a given address (the app trusts X-Forwarded-For from loopback, as behind a local proxy). */
async function signInFrom(address: string, email: string, password: string) {
  const a = request.agent(t.app)
  const s = await a.get('/api/session').set('x-forwarded-for', address)
  return a.post('/api/session').set('x-forwarded-for', address).set('x-csrf-token', s.body.csrfToken).send({ email, password })
}

describe('sign-in limit', () => {
  it('when 30 good sign-ins (and a few typos) come from one address, then every good one succeeds', async () => {
    // 30 + 5 attempts is more than the limit of 20; only the 5 failures count, which is under it.
    const statuses: number[] = []
    for (let i = 0; i < 30; i++) {
      if (i % 6 === 0) expect((await signInFrom('10.1.0.1', DEMO_EMAIL.bench, 'typo')).status).toBe(401)
      statuses.push((await signInFrom('10.1.0.1', DEMO_EMAIL.bench, DEMO_PASSWORD)).status)
    }
    expect(statuses).toEqual(Array(30).fill(200))
  })

  it('when one address fails again and again (on any accounts), then it gets 429, even with the right password, and other addresses do not', async () => {
    for (let i = 0; i < LIMIT; i++) expect((await signInFrom('10.2.0.1', `nobody-${i}@example.test`, 'guess')).status).toBe(401)
    const blocked = await signInFrom('10.2.0.1', DEMO_EMAIL.sales, DEMO_PASSWORD)
    expect(blocked.status).toBe(429)
    expect(blocked.body).toMatchObject({ code: 'rate-limited', error: expect.stringMatching(/failed sign-ins from this address/) })
    expect((await signInFrom('10.2.0.2', DEMO_EMAIL.sales, DEMO_PASSWORD)).status).toBe(200)
  })

  it('when one account fails again and again from many addresses, then it gets 429 from a new address too, and other accounts do not', async () => {
    for (let i = 0; i < LIMIT; i++) expect((await signInFrom(`10.3.0.${i + 1}`, ` ${DEMO_EMAIL.owner.toUpperCase()}`, 'guess')).status).toBe(401)
    const blocked = await signInFrom('10.3.1.1', DEMO_EMAIL.owner, DEMO_PASSWORD)
    expect(blocked.status).toBe(429)
    expect(blocked.body.error).toMatch(/failed sign-ins for this account/)
    expect((await signInFrom('10.3.1.1', DEMO_EMAIL.manager, DEMO_PASSWORD)).status).toBe(200)
  })
})

describe('a write without a session', () => {
  it('when nobody is signed in and no token is sent, then a write answers 401 (sign in), not 403', async () => {
    const r = await request(t.app).post('/api/closures').send({ startsOn: '2030-01-01', endsOn: '2030-01-01', name: 'x' })
    expect(r.status).toBe(401)
    expect(r.body.code).toBe('unauthenticated')
  })

  it('when an anonymous session holds a token but it is not sent, then it is still 401', async () => {
    const a = new Agent(t.app)
    await a.refreshCsrf()
    const r = await a.agent.post('/api/customers').send({ name: 'x' })
    expect(r.status).toBe(401)
  })

  it('when any route that needs a role is written to without a session or token, then it answers 401', async () => {
    const writes = allRoutes.filter((r) => r.method !== 'get' && r.roles !== 'public')
    expect(writes.length).toBeGreaterThan(10)
    for (const r of writes) {
      const path = `/api${r.path.replace(/:[a-zA-Z]+/g, '1')}`
      const res = await request(t.app)[r.method](path).send({})
      expect(res.status, `${r.method.toUpperCase()} ${r.path} → ${res.status} ${JSON.stringify(res.body)}`).toBe(401)
    }
  })

  it('when someone is signed in but sends no token, then the write is still refused as out of date (403, csrf)', async () => {
    const a = await signedIn(t.app, 'sales')
    const r = await a.agent.post('/api/customers').send({ name: 'x' })
    expect(r.status).toBe(403)
    expect(r.body.details).toEqual({ reason: 'csrf' })
  })

  it('when signing in without the token, then it is refused with 403 (sign-in keeps its CSRF check)', async () => {
    const r = await request(t.app).post('/api/session').set('x-forwarded-for', '10.4.0.1').send({ email: DEMO_EMAIL.manager, password: DEMO_PASSWORD })
    expect(r.status).toBe(403)
  })
})
