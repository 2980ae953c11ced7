// Sign-in, sign-out, CSRF and session behaviour against real PostgreSQL.
import { sql } from 'drizzle-orm'
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest'
import { loadConfig } from '../../server/config'
import { createSessionStore } from '../../server/middleware/auth'
import { Agent, DEMO_EMAIL, createTestApp, signedIn, type TestApp } from '../setup/app'

let t: TestApp
beforeAll(async () => {
  t = await createTestApp()
})
afterAll(async () => {
  await t.close()
})

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

// Idle expiry with the default settings (server/config.ts): SESSION_IDLE_MINUTES 720 (12 h), BENCH_SESSION_DAYS 30.
// A session's expiry is moved a full window ahead once less than the window minus one step is left, the step being
// min(window / 20, 10 min): for 12 h, min(36 min, 10 min) = 10 min, so the threshold is 11 h 50 min left;
// for 30 days, min(36 h, 10 min) = 10 min, so the threshold is 29 days 23 h 50 min left.
const MIN = 60_000
const HOUR = 60 * MIN
const DAY = 24 * HOUR
const IDLE = 12 * HOUR

/** The session id inside the signed cookie `millgrain.sid=s%3A<sid>.<signature>`. */
function sidOf(setCookie: string[] | string | undefined): string {
  const c = (Array.isArray(setCookie) ? setCookie : [setCookie ?? '']).find((x) => x.startsWith('millgrain.sid='))
  if (!c) throw new Error('no session cookie was set')
  const v = decodeURIComponent(c.split(';')[0]!.slice('millgrain.sid='.length))
  return v.slice(2, v.lastIndexOf('.'))
}
function cookieExpires(setCookie: string[] | string | undefined): number | null {
  const c = (Array.isArray(setCookie) ? setCookie : [setCookie ?? '']).find((x) => x.startsWith('millgrain.sid='))
  const m = c?.match(/Expires=([^;]+)/i)
  return m ? Date.parse(m[1]!) : null
}

// Raw SQL on purpose: user_sessions is connect-pg-simple's table (expire, xmin, the sess JSON), not part of our schema.
async function row(sid: string) {
  const r = await t.db.execute(sql`select extract(epoch from expire) * 1000 as expire, xmin::text as xmin, sess from user_sessions where sid = ${sid}`)
  const x = r.rows[0] as { expire: string; xmin: string; sess: { cookie: { expires: string } } } | undefined
  return x ? { expire: Number(x.expire), xmin: x.xmin, cookieExpires: Date.parse(x.sess.cookie.expires) } : null
}
/** Sets a session's expiry as if its last extension were longer ago: the row keeps it in the expire column and in the saved cookie. */
async function setExpiry(sid: string, at: number) {
  const iso = new Date(at).toISOString()
  await t.db.execute(
    sql`update user_sessions set expire = ${iso}::timestamptz, sess = jsonb_set(sess::jsonb, '{cookie,expires}', to_jsonb(${iso}::text))::json where sid = ${sid}`,
  )
}

/** Counts the app's writes to the session table while `fn` runs (the store and express-session use the app's pool). */
async function sessionWrites(fn: () => Promise<void>): Promise<number> {
  const spy = vi.spyOn(t.pool, 'query')
  try {
    await fn()
    return spy.mock.calls.filter(([q]) => {
      const text = typeof q === 'string' ? q : ((q as { text?: string } | undefined)?.text ?? '')
      return /^\s*(update|insert\s+into)\s+"?user_sessions"?\s/i.test(text)
    }).length
  } finally {
    spy.mockRestore()
  }
}

async function signInSid(role: keyof typeof DEMO_EMAIL) {
  const a = new Agent(t.app)
  const before = Date.now()
  const r = await a.signIn(DEMO_EMAIL[role])
  expect(r.status).toBe(200)
  return { a, sid: sidOf(r.headers['set-cookie']), before, after: Date.now() }
}

describe('session idle expiry', () => {
  it('when a signed-in user makes 20 reads soon after signing in, then the session row is not written and no cookie is sent', async () => {
    const { a, sid } = await signInSid('manager')
    const before = await row(sid)
    const cookies: unknown[] = []
    // Hand-worked: signed in moments ago, so about 12 h are left, more than the 11 h 50 min threshold: no extension,
    // and nothing else changes the session, so 0 writes (the store touched the row after every request before, i.e. 20).
    const writes = await sessionWrites(async () => {
      for (let i = 0; i < 20; i++) {
        const r = await a.get(['/api/orders', '/api/benches', '/api/session'][i % 3]!)
        expect(r.status).toBe(200)
        if (r.headers['set-cookie']) cookies.push(r.headers['set-cookie'])
      }
    })
    expect(writes).toBe(0)
    expect(cookies).toEqual([])
    // The database agrees: the row version (xmin changes with every UPDATE) and the expiry are as they were.
    expect(await row(sid)).toEqual(before)
  })

  it('when more than 11 h 50 min of the 12 h window are left, then a request leaves the expiry where it is', async () => {
    const { a, sid } = await signInSid('manager')
    const at = Date.now() + 11 * HOUR + 51 * MIN
    await setExpiry(sid, at)
    const writes = await sessionWrites(async () => {
      expect((await a.get('/api/benches')).status).toBe(200)
    })
    expect(writes).toBe(0)
    expect((await row(sid))!.expire).toBe(at)
  })

  it('when less than 11 h 50 min are left, then the next request moves the expiry a full 12 h ahead, sends the cookie again, and the request after it writes nothing', async () => {
    const { a, sid } = await signInSid('manager')
    await setExpiry(sid, Date.now() + 11 * HOUR + 49 * MIN)
    let cookie: string[] | undefined
    const t0 = Date.now()
    const writes = await sessionWrites(async () => {
      const r = await a.get('/api/benches')
      expect(r.status).toBe(200)
      cookie = r.headers['set-cookie'] as unknown as string[] | undefined
    })
    const t1 = Date.now()
    expect(writes).toBe(1)
    const r = (await row(sid))!
    // Both the row and the cookie now end 12 h after the request (the cookie's Expires has whole seconds).
    expect(r.expire).toBeGreaterThanOrEqual(t0 + IDLE - 1000)
    expect(r.expire).toBeLessThanOrEqual(t1 + IDLE + 1000)
    expect(r.cookieExpires).toBeGreaterThanOrEqual(t0 + IDLE - 1000)
    expect(cookieExpires(cookie)).toBeGreaterThanOrEqual(t0 + IDLE - 1000)
    expect(cookieExpires(cookie)).toBeLessThanOrEqual(t1 + IDLE + 1000)
    expect(sidOf(cookie)).toBe(sid)
    expect(
      await sessionWrites(async () => {
        expect((await a.get('/api/benches')).status).toBe(200)
      }),
    ).toBe(0)
  })

  it('when the session has passed its expiry, then the next request answers 401', async () => {
    const { a, sid } = await signInSid('manager')
    await setExpiry(sid, Date.now() - 1000)
    const r = await a.get('/api/orders')
    expect(r.status).toBe(401)
    expect((await a.get('/api/session')).body.user).toBeNull()
  })

  it('when a bench tablet signs in, then its session lasts 30 days, 20 reads write nothing, and it moves a full 30 days ahead once less than 29 days 23 h 50 min are left', async () => {
    const { a, sid, before, after } = await signInSid('bench')
    const r0 = (await row(sid))!
    expect(r0.expire).toBeGreaterThanOrEqual(before + 30 * DAY - 1000)
    expect(r0.expire).toBeLessThanOrEqual(after + 30 * DAY + 1000)
    const reads = await sessionWrites(async () => {
      for (let i = 0; i < 20; i++) expect((await a.get(i % 2 ? '/api/benches' : '/api/bench/mine')).status).toBe(200)
    })
    expect(reads).toBe(0)
    await setExpiry(sid, Date.now() + 30 * DAY - 11 * MIN)
    const t0 = Date.now()
    expect(
      await sessionWrites(async () => {
        expect((await a.get('/api/benches')).status).toBe(200)
      }),
    ).toBe(1)
    const r1 = (await row(sid))!
    expect(r1.expire).toBeGreaterThanOrEqual(t0 + 30 * DAY - 1000)
    expect(r1.expire).toBeLessThanOrEqual(Date.now() + 30 * DAY + 1000)
  })

  it('when a user keeps working with pauses shorter than 12 h, then they stay signed in past 12 h; after a pause longer than 12 h they are signed out', async () => {
    // The clock of the app (express-session, the store and the test's cookie jar all read Date) is set by hand; timers stay real.
    const start = Date.now()
    vi.useFakeTimers({ toFake: ['Date'] })
    try {
      vi.setSystemTime(start)
      const a = await signedIn(t.app, 'manager')
      vi.setSystemTime(start + 11 * HOUR)
      expect((await a.get('/api/benches')).status).toBe(200)
      // 22 h after sign-in: a 12 h session that never moved would have ended 10 h ago (and the cookie with it).
      vi.setSystemTime(start + 22 * HOUR)
      expect((await a.get('/api/benches')).status).toBe(200)
      // Extended at 22 h to 34 h; a pause of 12 h and one second from the last request ends it.
      vi.setSystemTime(start + 34 * HOUR + 1000)
      expect((await a.get('/api/benches')).status).toBe(401)
    } finally {
      vi.useRealTimers()
    }
  })

  it('when a session read before sign-out is saved after it, then the signed-out session does not come back', async () => {
    const { sid } = await signInSid('manager')
    const store = createSessionStore(t.pool, loadConfig({ DATABASE_URL: t.url, SESSION_SECRET: 'test-secret-test-secret' }))
    const data = await new Promise<Record<string, unknown>>((res, rej) => store.get(sid, (e, s) => (e ? rej(e) : res(s as unknown as Record<string, unknown>))))
    // As express-session does for a request: the session object is made from what was read.
    const sess = store.createSession({ sessionID: sid, sessionStore: store } as never, data as never)
    await new Promise<void>((res) => store.destroy(sid, () => res()))
    ;(sess as unknown as { extendedAt: number }).extendedAt = Date.now()
    await new Promise<void>((res, rej) => store.set(sid, sess, (e) => (e ? rej(e) : res())))
    expect(await row(sid)).toBeNull()
    store.close()
  })
})
