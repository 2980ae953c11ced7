// Sign-in, sign-out, CSRF and session behaviour against real PostgreSQL.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { Agent, DEMO_EMAIL, createTestApp, signedIn, type TestApp } from '../setup/app'

let t: TestApp
beforeAll(async () => { t = await createTestApp() })
afterAll(async () => { await t.close() })

describe('session', () => {
  it('when the health check is called without sign-in, then it answers ok after asking the database', async () => {
    const r = await new Agent(t.app).get('/api/health')
    expect(r.status).toBe(200)
    expect(r.body).toEqual({ ok: true })
  })

  it('when the password is wrong, then sign-in answers 401 with a clear message', async () => {
    const a = new Agent(t.app)
    const r = await a.signIn(DEMO_EMAIL.manager, 'not-the-password')
    expect(r.status).toBe(401)
    expect(r.body.error).toMatch(/e-mail or password is not right/)
    expect(JSON.stringify(r.body)).not.toContain('passwordHash')
  })

  it('when fields are missing, then sign-in answers 400 naming them', async () => {
    const a = new Agent(t.app)
    await a.refreshCsrf()
    const r = await a.post('/api/session', { email: 'nope' })
    expect(r.status).toBe(400)
    expect(r.body.fields).toMatchObject({ email: expect.any(String), password: 'is required' })
  })

  it('when signing in, then the session id changes (no fixation) and the user is returned without secrets', async () => {
    const a = new Agent(t.app)
    const before = (await a.refreshCsrf()).headers['set-cookie']?.[0]?.split(';')[0]
    const r = await a.signIn(DEMO_EMAIL.owner)
    const after = r.headers['set-cookie']?.[0]?.split(';')[0]
    expect(r.status).toBe(200)
    expect(r.body.user).toMatchObject({ role: 'owner', workshopName: 'Wrenfield Street Workshop' })
    expect(r.body.user.passwordHash).toBeUndefined()
    expect(after).toBeDefined()
    expect(after).not.toEqual(before)
    expect(r.headers['set-cookie']?.[0]).toMatch(/HttpOnly/i)
    expect(r.headers['set-cookie']?.[0]).toMatch(/SameSite=Lax/i)
  })

  it('when a write comes without the CSRF token, then it is refused with 403', async () => {
    const a = await signedIn(t.app, 'manager')
    const r = await a.agent.post('/api/closures').send({ startsOn: '2030-01-01', endsOn: '2030-01-01', name: 'x' })
    expect(r.status).toBe(403)
    expect(r.body.error).toMatch(/security token/)
  })

  it('when signing out, then the old cookie no longer works on the server', async () => {
    const a = await signedIn(t.app, 'manager')
    const cookie = (await a.get('/api/session')).headers['set-cookie']
    expect((await a.get('/api/benches')).status).toBe(200)
    expect((await a.delete('/api/session')).status).toBe(200)
    expect((await a.get('/api/benches')).status).toBe(401)
    void cookie
  })

  it('when an owner switches a user off, then that user is signed out at once', async () => {
    const owner = await signedIn(t.app, 'owner')
    const sales = await signedIn(t.app, 'sales')
    const users = (await owner.get('/api/users')).body as { id: number; role: string; version: number }[]
    const s = users.find((u) => u.role === 'sales')!
    expect((await owner.patch(`/api/users/${s.id}`, { active: false, version: s.version })).status).toBe(200)
    expect((await sales.get('/api/orders')).status).toBe(401)
    const again = await new Agent(t.app).signIn(DEMO_EMAIL.sales)
    expect(again.status).toBe(401)
    expect(again.body.error).toMatch(/switched off/)
  })

  it('when the response is sent, then helmet security headers are present', async () => {
    const r = await new Agent(t.app).get('/api/health')
    expect(r.headers['x-content-type-options']).toBe('nosniff')
    expect(r.headers['content-security-policy']).toContain("default-src 'self'")
    expect(r.headers['x-powered-by']).toBeUndefined()
  })
})
