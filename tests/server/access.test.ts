// The route × role matrix: every declared route has an agreed access entry, and each role is let in or kept out accordingly.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { ROLES, type Role } from '../../shared/domain/roles'
import type { Access, RouteSpec } from '../../server/lib/route'
import { allRoutes } from '../../server/routes/index'
import { Agent, DEMO_EMAIL, createTestApp, signedIn, type TestApp } from '../setup/app'

// Who may do what, from the product's roles: owner everything; manager planning, orders, people, benches;
// bench its own queue and time records; sales customers, orders, promise dates and a read-only plan.
const ALL: Role[] = ['owner', 'manager', 'bench', 'sales']
const STAFF: Role[] = ['owner', 'manager']
const FRONT: Role[] = ['owner', 'manager', 'sales']
const OWNER: Role[] = ['owner']
const WORKERS: Role[] = ['owner', 'manager', 'bench']

/**
 * The agreed access of every API route: "METHOD /path" → roles allowed, or 'public'.
 * A new route needs an entry here; a change of a route's roles must be made here too, on purpose.
 */
export const EXPECTED_ACCESS: Record<string, Access> = {
  // session
  'GET /health': 'public',
  'GET /session': 'public',
  'POST /session': 'public',
  'DELETE /session': ALL,
  // accounts: the owner invites; one-time links and reset requests need no session; everyone signs out everywhere and sets their own PIN;
  // a manager makes a tablet a bench station, where the station (bench role) takes PINs
  'GET /invitations': OWNER,
  'POST /invitations': OWNER,
  'POST /invitations/:id/resend': OWNER,
  'DELETE /invitations/:id': OWNER,
  'GET /account-links/:token': 'public',
  'POST /account-links/:token': 'public',
  'POST /password-reset': 'public',
  'DELETE /session/everywhere': ALL,
  'PUT /me/pin': ALL,
  'PUT /people/:id/pin': OWNER,
  'POST /bench-station': STAFF,
  'GET /bench-station/people': ['bench'],
  'POST /bench-station/pin': ['bench'],
  'DELETE /bench-station/pin': ['bench'],
  // operation kinds
  'GET /operation-kinds': ALL,
  'POST /operation-kinds': STAFF,
  'PATCH /operation-kinds/:id': STAFF,
  // benches
  'GET /benches': ALL,
  'POST /benches': STAFF,
  'PATCH /benches/:id': STAFF,
  'POST /benches/:id/downtime': STAFF,
  'DELETE /benches/:id/downtime/:childId': STAFF,
  // people
  'GET /people': ALL,
  'POST /people': STAFF,
  'PATCH /people/:id': STAFF,
  'POST /people/:id/leave': STAFF,
  'DELETE /people/:id/leave/:childId': STAFF,
  // calendar
  'GET /workshop': ALL,
  'PUT /workshop': OWNER,
  'GET /closures': ALL,
  'POST /closures': STAFF,
  'POST /closures/bank-holidays': STAFF,
  'DELETE /closures/:id': STAFF,
  // routings
  'GET /routings': ALL,
  'GET /routings/:id': ALL,
  'POST /routings': STAFF,
  'PUT /routings/:id': STAFF,
  // customers
  'GET /customers': FRONT,
  'GET /customers/:id': FRONT,
  'POST /customers': FRONT,
  'PATCH /customers/:id': FRONT,
  // users
  'GET /users': OWNER,
  'POST /users': OWNER,
  'PATCH /users/:id': OWNER,
  // orders
  'GET /orders': FRONT,
  'GET /orders/:id': FRONT,
  'POST /orders': FRONT,
  'PATCH /orders/:id': FRONT,
  'GET /orders/:id/customers-metal': FRONT,
  // planning: the manager plans; the owner and sales look on (read-only board and load)
  'POST /plans/runs': ['manager'],
  'GET /plans/runs/:runId': ['manager'],
  'DELETE /plans/runs/:runId': ['manager'],
  'GET /plans': FRONT,
  'GET /plans/:id/compare': FRONT,
  'POST /plans/:id/publish': ['manager'],
  'POST /plans/:id/discard': ['manager'],
  'GET /board': FRONT,
  'PATCH /board/operations/:id': ['manager'],
  'GET /load': FRONT,
  // job bags: everyone reads; the ticket is printed in the workshop; the routing and time corrections are the manager's
  'GET /job-bags': ALL,
  'GET /job-bags/:id': ALL,
  'GET /job-bags/:id/ticket.pdf': WORKERS,
  'POST /job-bags/:id/operations': STAFF,
  'PATCH /job-bags/:id/operations/:operationId': STAFF,
  'POST /job-bags/:id/operations/:operationId/skip': STAFF,
  'PUT /job-bags/:id/sequence': STAFF,
  'POST /job-bags/:id/status': STAFF,
  // a ring size given again by the customer: the office (front desk included), not the bench
  'PUT /job-bags/:id/ring-size': FRONT,
  'POST /operations/:id/time-records': STAFF,
  'POST /time-records/:id/corrections': STAFF,
  // the bench: own queue and own time (the manager and owner also work at benches)
  'GET /bench/next': WORKERS,
  'GET /bench/mine': WORKERS,
  'POST /bench/operations/:id/claim': WORKERS,
  'POST /bench/operations/:id/release': WORKERS,
  'POST /bench/operations/:id/start': WORKERS,
  'POST /bench/operations/:id/pause': WORKERS,
  'POST /bench/operations/:id/resume': WORKERS,
  'POST /bench/operations/:id/finish': WORKERS,
  // pause reasons: everyone reads them (bench dialog, job bag history); the owner keeps the list
  'GET /pause-reasons': ALL,
  'POST /pause-reasons': OWNER,
  'PATCH /pause-reasons/:id': OWNER,
  // outside work (casting, hallmarking) sent and booked back by the manager
  'POST /operations/:id/send-out': STAFF,
  'POST /operations/:id/receive': STAFF,
  // insights and estimating: the owner's figures (people, orders, money); managers read accuracy by kind and use three-point estimates when editing steps
  'GET /insights/comparison': OWNER,
  'GET /insights/kind-accuracy': STAFF,
  'GET /insights/records': OWNER,
  'GET /insights/scatter': OWNER,
  'GET /insights/bias-trend': OWNER,
  'GET /insights/costing': OWNER,
  'GET /orders/:id/costing': ['owner', 'manager', 'sales'],
  'POST /costing/estimate': ['owner', 'manager', 'sales'],
  'GET /insights/outside-costs': OWNER,
  'PUT /insights/routings/:id/outside-cost': OWNER,
  'PUT /insights/operations/:id/outside-cost': OWNER,
  'GET /estimates/learned': OWNER,
  'POST /estimates/accept': OWNER,
  'GET /estimates/changes': OWNER,
  'POST /estimates/three-point': STAFF,
  // promise dates for sales; the outbox; the managers' at-risk digest
  'POST /promise/check': FRONT,
  'POST /promise/accept': FRONT,
  'GET /orders/:id/forecast': FRONT,
  'GET /outbox': FRONT,
  'GET /outbox/:id': FRONT,
  'POST /mail/at-risk-digest': STAFF,
  // files: orders' files front office only; job bags' files everyone (bench: progress photos); removing is for managers
  'POST /orders/:id/files': FRONT,
  'POST /job-bags/:id/files': ALL,
  'GET /orders/:id/files': FRONT,
  'GET /job-bags/:id/files': ALL,
  'GET /files/:id': ALL,
  'GET /files/:id/thumbnail': ALL,
  'DELETE /files/:id': STAFF,
  // metal: everyone reads alloys, tolerances and a job bag's metal; the bench weighs out and back; stock and refining for owner and manager; prices, losses and adjustments the owner's
  'GET /alloys': ALL,
  'POST /alloys': OWNER,
  'PATCH /alloys/:id': OWNER,
  'GET /alloys/:id/prices': STAFF,
  'POST /alloys/:id/prices': OWNER,
  'GET /metal/movements': WORKERS,
  'POST /metal/issues': WORKERS,
  'POST /metal/returns': WORKERS,
  'POST /metal/movements/:id/corrections': WORKERS,
  'POST /metal/purchases': STAFF,
  'POST /metal/adjustments': OWNER,
  'GET /metal/stock': STAFF,
  'GET /metal/losses': OWNER,
  'GET /job-bags/:id/metal': ALL,
  'GET /metal/tolerances': ALL,
  'PUT /metal/tolerances/:id': OWNER,
  'GET /refining-lots': STAFF,
  'GET /refining-lots/:id': STAFF,
  'POST /refining-lots': STAFF,
  'POST /refining-lots/:id/items': STAFF,
  'POST /refining-lots/:id/send': STAFF,
  'POST /refining-lots/:id/settle': STAFF,
  // stones: everyone reads the list; the front office and managers keep it; the setter and managers count stones out and back; managers correct counts; the front office hands a customer's stones back
  'GET /job-bags/:id/stones': ALL,
  'POST /job-bags/:id/stones': FRONT,
  'PATCH /stones/:id': FRONT,
  'DELETE /stones/:id': FRONT,
  'POST /stones/:id/movements': WORKERS,
  'POST /stone-movements/:id/corrections': STAFF,
  'POST /stones/:id/check-back': FRONT,
  // money: the front office and managers quote and read money; the owner and sales take cash; the owner refunds and sees the figures; bench users see none of it
  'GET /quotes': FRONT,
  'GET /quotes/:id': FRONT,
  'POST /quotes': FRONT,
  'PATCH /quotes/:id': FRONT,
  'POST /quotes/:id/send': FRONT,
  'POST /quotes/:id/accept': FRONT,
  'POST /quotes/:id/withdraw': FRONT,
  'POST /quotes/:id/payment-links': FRONT,
  'GET /quotes/:id/pdf': FRONT,
  'GET /orders/:id/money': FRONT,
  'POST /orders/:id/payment-links': FRONT,
  'POST /orders/:id/payments': ['owner', 'sales'],
  'POST /payments/:id/refund': OWNER,
  'GET /payments/to-refund': FRONT,
  'GET /payments/summary': OWNER,
  'GET /payments/export.csv': OWNER,
}

/** Bodies for routes where an empty body would start long work; every other write gets {}. */
const PLACEHOLDER_BODY: Record<string, unknown> = {
  'POST /plans/runs': { timeLimitSeconds: 1 },
}

const keyOf = (r: Pick<RouteSpec, 'method' | 'path'>) => `${r.method.toUpperCase()} ${r.path}`
const norm = (a: Access) => (a === 'public' ? 'public' : [...a].sort())

/** Real ids from the seeded database, found by the path segment before the parameter; 999999 otherwise. */
const ID_SOURCES: Record<string, string> = {
  benches: 'select min(id) as id from benches',
  downtime: 'select min(id) as id from bench_downtime',
  people: 'select min(id) as id from people',
  leave: 'select min(id) as id from leave',
  'operation-kinds': 'select min(id) as id from operation_kinds',
  closures: 'select min(id) as id from closures',
  routings: 'select min(id) as id from routings',
  customers: 'select min(id) as id from customers',
  users: "select max(id) as id from users where role = 'bench'",
  orders: "select min(id) as id from orders where status = 'open'",
  'job-bags': "select min(id) as id from job_bags where status = 'waiting'",
  bags: "select min(id) as id from job_bags where status = 'waiting'",
  operations: "select min(id) as id from operations where status = 'ready'",
  'time-records': 'select min(id) as id from time_records',
  plans: 'select min(id) as id from plan_versions',
  stones: 'select min(id) as id from job_bag_stones',
  'stone-movements': 'select min(id) as id from stone_movements',
}
const ids: Record<string, number> = {}

function concretePath(path: string): string {
  const segs = path.split('/')
  return segs.map((s, i) => (s.startsWith(':') ? String(ids[segs[i - 1] ?? ''] ?? 999999) : s)).join('/')
}

function call(a: Agent, r: RouteSpec) {
  const url = `/api${concretePath(r.path)}`
  if (r.method === 'get') return a.get(url)
  if (r.method === 'delete') return a.delete(url)
  return a[r.method](url, PLACEHOLDER_BODY[keyOf(r)] ?? {})
}

let t: TestApp
const agents = {} as Record<Role, Agent>
let anonymous: Agent

beforeAll(async () => {
  t = await createTestApp()
  for (const [segment, q] of Object.entries(ID_SOURCES)) {
    try {
      const { rows } = await t.pool.query(q)
      if (rows[0]?.id != null) ids[segment] = Number(rows[0].id)
    } catch {
      // The table does not exist (yet): the placeholder id is used.
    }
  }
  for (const role of ROLES) agents[role] = await signedIn(t.app, role)
  anonymous = new Agent(t.app)
  await anonymous.refreshCsrf()
})
afterAll(async () => {
  await t?.close()
})

describe('access table', () => {
  it('when a route is declared, then it has an entry in the expected-access table', () => {
    const missing = allRoutes.filter((r) => !(keyOf(r) in EXPECTED_ACCESS))
    expect(
      missing.map((r) => `'${keyOf(r)}': ${JSON.stringify(r.roles)}`),
      'Routes without an entry: add each to EXPECTED_ACCESS in tests/server/access.test.ts with the roles the product intends',
    ).toEqual([])
  })

  it('when an entry is in the table, then the route still exists', () => {
    const declared = new Set(allRoutes.map(keyOf))
    expect(
      Object.keys(EXPECTED_ACCESS).filter((k) => !declared.has(k)),
      'Entries for routes that no longer exist: remove them from EXPECTED_ACCESS',
    ).toEqual([])
  })

  it('when a route declares its roles, then they equal the agreed access', () => {
    const differ = allRoutes
      .filter((r) => keyOf(r) in EXPECTED_ACCESS)
      .filter((r) => JSON.stringify(norm(r.roles)) !== JSON.stringify(norm(EXPECTED_ACCESS[keyOf(r)]!)))
      .map((r) => `${keyOf(r)}: declared ${JSON.stringify(r.roles)}, agreed ${JSON.stringify(EXPECTED_ACCESS[keyOf(r)])}`)
    expect(
      differ,
      "Declared roles differ from the agreed access: fix the route's roles, or, if the change is intended, change EXPECTED_ACCESS on purpose",
    ).toEqual([])
  })

  it('when routes are declared, then no two share a method and path, and none is public except health, session, one-time links and reset requests', () => {
    const keys = allRoutes.map(keyOf)
    expect(keys.filter((k, i) => keys.indexOf(k) !== i)).toEqual([])
    const PUBLIC = ['/health', '/session', '/account-links/:token', '/password-reset']
    expect(
      allRoutes
        .filter((r) => r.roles === 'public')
        .map((r) => r.path)
        .filter((p) => !PUBLIC.includes(p)),
    ).toEqual([])
    for (const r of allRoutes) if (r.roles !== 'public') expect(r.roles.length, `${keyOf(r)} lists no role`).toBeGreaterThan(0)
  })
})

// Sign-out ends the session: it runs last for each role so the rest of the walk stays signed in.
const walkOrder = [...allRoutes].sort((a, b) => Number(keyOf(a) === 'DELETE /session') - Number(keyOf(b) === 'DELETE /session'))

describe.each([...ROLES, 'not signed in'] as const)('as %s', (who) => {
  it.each(walkOrder.map((r) => [keyOf(r), r] as const))('when calling %s, then access follows the declared roles', async (_k, r) => {
    const agent = who === 'not signed in' ? anonymous : agents[who]
    const res = await call(agent, r)
    const detail = `${who} ${keyOf(r)} → ${res.status} ${JSON.stringify(res.body)}`
    expect(res.status, `no 500 for placeholder input: ${detail}`).not.toBe(500)
    if (r.roles === 'public') {
      expect(res.status, detail).not.toBe(401)
      expect(res.status, detail).not.toBe(403)
    } else if (who === 'not signed in') {
      expect(res.status, detail).toBe(401)
      expect(res.body.code).toBe('unauthenticated')
    } else if (!r.roles.includes(who)) {
      expect(res.status, detail).toBe(403)
      expect(res.body.code).toBe('forbidden')
    } else {
      expect(res.status, detail).not.toBe(401)
      expect(res.status, detail).not.toBe(403)
    }
    // A write may have ended or changed the session (sign-out): sign in again for the rest of the walk.
    if (who !== 'not signed in' && r.method !== 'get') {
      const s = await agent.get('/api/session')
      if (!s.body.user) agents[who] = await signedIn(t.app, who)
      else if (s.body.user.email !== DEMO_EMAIL[who]) throw new Error(`session of ${who} changed to ${s.body.user.email}`)
    }
  })
})
