// The app in-process on a private database, and signed-in Supertest agents for each role.
import request from 'supertest'
import type { Role } from '../../shared/domain/roles'
import { createApp } from '../../server/app'
import { loadConfig } from '../../server/config'
import { Realtime } from '../../server/realtime/hub'
import { DEMO_PASSWORD } from '../../server/db/seed'
import { createTestDb, type TestDb } from './db'

export const DEMO_EMAIL: Record<Role, string> = {
  owner: 'owner@wrenfield.test',
  manager: 'manager@wrenfield.test',
  bench: 'setter@wrenfield.test',
  sales: 'sales@wrenfield.test',
}

export interface TestApp extends TestDb { app: ReturnType<typeof createApp>['app']; realtime: Realtime; close(): Promise<void> }

export async function createTestApp(overrides: Record<string, string> = {}): Promise<TestApp> {
  const tdb = await createTestDb()
  const config = loadConfig({ DATABASE_URL: tdb.url, SESSION_SECRET: 'test-secret-test-secret', NODE_ENV: 'test', LOGIN_ATTEMPTS_PER_15_MIN: '1000', ...overrides })
  const realtime = new Realtime()
  const { app } = createApp({ db: tdb.db, pool: tdb.pool, config, realtime })
  return { ...tdb, app, realtime, close: () => tdb.drop() }
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
  get(path: string) { return this.agent.get(path) }
  post(path: string, body?: unknown) { return this.agent.post(path).set('x-csrf-token', this.csrf).send(body as object) }
  put(path: string, body?: unknown) { return this.agent.put(path).set('x-csrf-token', this.csrf).send(body as object) }
  patch(path: string, body?: unknown) { return this.agent.patch(path).set('x-csrf-token', this.csrf).send(body as object) }
  delete(path: string) { return this.agent.delete(path).set('x-csrf-token', this.csrf) }
}

export async function signedIn(app: TestApp['app'], role: Role): Promise<Agent> {
  const a = new Agent(app)
  const r = await a.signIn(DEMO_EMAIL[role])
  if (r.status !== 200) throw new Error(`sign-in as ${role} failed: ${r.status} ${JSON.stringify(r.body)}`)
  return a
}
