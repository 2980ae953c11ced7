// Shared set-up for the load benchmarks: the demo data on a scratch cluster with a published plan, the real server, signed-in sessions.
import { loadConfig } from '../server/config'
import { DEMO_PASSWORD } from '../server/db/seed'
import { startServer } from '../server/index'
import { scratchDatabase } from './scratch-db'

export interface HttpSession { cookie: string; csrf: string; userId: number }

export async function benchServer(dbName: string) {
  const { url, stop } = await scratchDatabase(dbName)
  const server = await startServer(loadConfig({ DATABASE_URL: url, PORT: '0', SESSION_SECRET: 'bench-secret-bench-secret', NODE_ENV: 'production', LOGIN_ATTEMPTS_PER_15_MIN: '100000' }))
  const signIn = async (email: string): Promise<HttpSession> => {
    let cookie = ''
    const keep = (r: Response) => { const c = r.headers.get('set-cookie'); if (c) cookie = c.split(';')[0]! }
    const a = await fetch(`${server.url}/api/session`); keep(a)
    const { csrfToken } = (await a.json()) as { csrfToken: string }
    const b = await fetch(`${server.url}/api/session`, { method: 'POST', headers: { 'content-type': 'application/json', 'x-csrf-token': csrfToken, cookie }, body: JSON.stringify({ email, password: DEMO_PASSWORD }) })
    keep(b)
    const body = (await b.json()) as { csrfToken: string; user: { id: number } }
    if (b.status !== 200) throw new Error(`sign-in ${email}: ${b.status}`)
    return { cookie, csrf: body.csrfToken, userId: body.user.id }
  }
  const call = async (s: HttpSession, method: string, path: string, body?: unknown) => {
    const r = await fetch(`${server.url}/api${path}`, { method, headers: { 'content-type': 'application/json', cookie: s.cookie, 'x-csrf-token': s.csrf }, body: body === undefined ? undefined : JSON.stringify(body) })
    const text = await r.text()
    return { status: r.status, body: text ? JSON.parse(text) : null }
  }
  /** Runs the planner for a few seconds and publishes the draft, so the board and the bench queues have a plan. */
  const publishPlan = async (manager: HttpSession, seconds = 3) => {
    const run = await call(manager, 'POST', '/plans/runs', { timeLimitSeconds: seconds })
    if (run.status !== 202) throw new Error(`planner run: ${run.status} ${JSON.stringify(run.body)}`)
    let state: { status: string; planId: number | null }
    do {
      await new Promise((r) => setTimeout(r, 250))
      state = (await call(manager, 'GET', `/plans/runs/${run.body.id}`)).body
    } while (state.status === 'running')
    if (state.status !== 'done') throw new Error(`planner run ended ${state.status}`)
    const p = await call(manager, 'POST', `/plans/${state.planId}/publish`)
    if (p.status !== 200) throw new Error(`publish: ${p.status}`)
  }
  return { server, url, signIn, call, publishPlan, async stop() { await server.close(); stop() } }
}

export const pct = (sorted: number[], p: number) => (sorted.length ? sorted[Math.min(sorted.length - 1, Math.floor(p * sorted.length))]! : NaN)
