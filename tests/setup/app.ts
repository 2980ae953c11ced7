// The app in-process on a private database, and signed-in Supertest agents for each role.
import request from 'supertest'
import type { Role } from '../../shared/domain/roles'
import { createApp } from '../../server/app'
import { loadConfig } from '../../server/config'
import { Realtime } from '../../server/realtime/hub'
import { DEMO_PASSWORD } from '../../server/db/seed'
import { createTestDb, type TestDb } from './db'
import { createAppJobs, type Jobs } from '../../server/jobs/index'
import type { Deps } from '../../server/lib/route'

export const DEMO_EMAIL: Record<Role, string> = {
  owner: 'owner@wrenfield.test',
  manager: 'manager@wrenfield.test',
  bench: 'setter@wrenfield.test',
  sales: 'sales@wrenfield.test',
}

export interface TestApp extends TestDb {
  app: ReturnType<typeof createApp>['app']
  realtime: Realtime
  deps: Deps
  jobs: Jobs
  close(): Promise<void>
}

export async function createTestApp(overrides: Record<string, string> = {}): Promise<TestApp> {
  const tdb = await createTestDb()
  const config = loadConfig({
    DATABASE_URL: tdb.url,
    SESSION_SECRET: 'test-secret-test-secret',
    NODE_ENV: 'test',
    LOGIN_ATTEMPTS_PER_15_MIN: '1000',
    ...overrides,
  })
  const realtime = new Realtime()
  // The job queue runs in the test process as it does in the server (planner runs, e-mails, the daily mail).
  const jobs = createAppJobs(config)
  const { app, deps } = createApp({ db: tdb.db, pool: tdb.pool, config, realtime, jobs })
  await jobs.start(deps)
  return {
    ...tdb,
    app,
    realtime,
    deps,
    jobs,
    async close() {
      await jobs.stop()
      await realtime.close()
      await tdb.drop()
    },
  }
}

/** An agent that keeps cookies and sends the CSRF token on writes. */
export class Agent {
  readonly agent: ReturnType<typeof request.agent>
  csrf = ''
  constructor(app: TestApp['app']) {
    this.agent = request.agent(app)
  }
  async refreshCsrf() {
    const r = await this.agent.get('/api/session')
    this.csrf = r.body.csrfToken
    return r
  }
  async signIn(email: string, password = DEMO_PASSWORD) {
    await this.refreshCsrf()
    const r = await this.agent.post('/api/session').set('x-csrf-token', this.csrf).send({ email, password })
    if (r.body?.csrfToken) this.csrf = r.body.csrfToken
    return r
  }
  get(path: string) {
    return this.agent.get(path)
  }
  post(path: string, body?: unknown) {
    return this.agent
      .post(path)
      .set('x-csrf-token', this.csrf)
      .send(body as object)
  }
  put(path: string, body?: unknown) {
    return this.agent
      .put(path)
      .set('x-csrf-token', this.csrf)
      .send(body as object)
  }
  patch(path: string, body?: unknown) {
    return this.agent
      .patch(path)
      .set('x-csrf-token', this.csrf)
      .send(body as object)
  }
  delete(path: string) {
    return this.agent.delete(path).set('x-csrf-token', this.csrf)
  }
}

export async function signedIn(app: TestApp['app'], role: Role): Promise<Agent> {
  const a = new Agent(app)
  const r = await a.signIn(DEMO_EMAIL[role])
  if (r.status !== 200) throw new Error(`sign-in as ${role} failed: ${r.status} ${JSON.stringify(r.body)}`)
  return a
}

/** The real server (HTTP + Socket.IO) on a free loopback port, on a private database. */
export async function startTestServer(overrides: Record<string, string> = {}) {
  const { startServer } = await import('../../server/index')
  const tdb = await createTestDb()
  await tdb.pool.end()
  const server = await startServer(
    loadConfig({
      DATABASE_URL: tdb.url,
      PORT: '0',
      SESSION_SECRET: 'test-secret-test-secret',
      NODE_ENV: 'test',
      LOGIN_ATTEMPTS_PER_15_MIN: '1000',
      ...overrides,
    }),
  )
  return {
    ...server,
    async stop() {
      await server.close()
      await tdb.drop().catch(() => {})
    },
  }
}

/** Signs in over real HTTP and returns the session cookie and CSRF token (for socket.io-client and fetch). */
export async function httpSignIn(baseUrl: string, role: Role) {
  let cookie = ''
  const keep = (r: Response) => {
    const c = r.headers.get('set-cookie')
    if (c) cookie = c.split(';')[0]!
  }
  const s1 = await fetch(`${baseUrl}/api/session`)
  keep(s1)
  const { csrfToken } = (await s1.json()) as { csrfToken: string }
  const s2 = await fetch(`${baseUrl}/api/session`, {
    method: 'POST',
    headers: { 'content-type': 'application/json', 'x-csrf-token': csrfToken, cookie },
    body: JSON.stringify({ email: DEMO_EMAIL[role], password: DEMO_PASSWORD }),
  })
  keep(s2)
  const body = (await s2.json()) as { csrfToken: string }
  return { cookie, csrf: body.csrfToken }
}
