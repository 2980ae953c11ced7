// The API fuzzer: which routes it walks (and which it leaves out, and why), request cases built from each route's schemas
// with hostile mutations, the checks every answer must pass, and read-back of accepted strings.
import { asc, desc, eq, isNull, notInArray, or } from 'drizzle-orm'
import fc from 'fast-check'
import type { ZodType } from 'zod'
import { ROLES, type Role } from '../../../shared/domain/roles'
import { benchUpdate } from '../../../shared/schemas/bench'
import { customerUpdate } from '../../../shared/schemas/customer'
import { operationKindUpdate } from '../../../shared/schemas/operation-kind'
import { personUpdate } from '../../../shared/schemas/person'
import type { Db } from '../../../server/db/client'
import * as s from '../../../server/db/schema/index'
import type { RouteSpec } from '../../../server/lib/route'
import { Agent, DEMO_EMAIL } from '../../setup/app'
import { arbOf, isOpaque, jsonSchemaOf, type IdPools } from './schema-arb'
import { PATH_JUNK, QUERY_JUNK, hostileString, hostileValue, isRaw, writeJson } from './values'

export const keyOf = (r: Pick<RouteSpec, 'method' | 'path'>) => `${r.method.toUpperCase()} ${r.path}`

/** Bodies hidden behind a transform (PATCH keeps only the fields sent): the schema inside, for generating. */
const OPAQUE_BODIES: Record<string, ZodType> = {
  'PATCH /operation-kinds/:id': operationKindUpdate,
  'PATCH /benches/:id': benchUpdate,
  'PATCH /people/:id': personUpdate,
  'PATCH /customers/:id': customerUpdate,
}

export interface Target {
  key: string
  spec: RouteSpec
  body?: Record<string, any>
  query?: Record<string, any>
  notes: string[]
}
export interface Plan {
  targets: Target[]
  excluded: { key: string; reason: string }[]
}

/** Routes that end or change the fuzzing agent's own session when they succeed. */
export const SESSION_CHANGERS: Record<string, string> = {
  'DELETE /session/everywhere': 'ends every session of the fuzzing agent (covered by tests/server/accounts.test.ts)',
  'POST /bench-station': "turns the fuzzing agent's session into a bench station (covered by tests/server/accounts.test.ts)",
}

/** Every route of the list, minus those that cannot be fuzzed with JSON (said with the reason). */
export function planTargets(routes: RouteSpec[]): Plan {
  const targets: Target[] = []
  const excluded: Plan['excluded'] = []
  for (const spec of routes) {
    const key = keyOf(spec)
    if (key === 'DELETE /session') {
      excluded.push({ key, reason: 'ends the session of the fuzzing agent (sign-out is covered by tests/server/session.test.ts)' })
      continue
    }
    if (SESSION_CHANGERS[key]) {
      excluded.push({ key, reason: SESSION_CHANGERS[key]! })
      continue
    }
    if (spec.method === 'post' && /multipart|upload/i.test(spec.summary)) {
      excluded.push({ key, reason: 'multipart file upload, not a JSON body (covered by tests/server/files.test.ts)' })
      continue
    }
    const notes: string[] = []
    let body = spec.body ? jsonSchemaOf(spec.body) : undefined
    if (body && isOpaque(body)) {
      if (OPAQUE_BODIES[key]) body = jsonSchemaOf(OPAQUE_BODIES[key]!)
      else notes.push('body schema is opaque (a transform): hostile values only, no valid-looking bodies')
    }
    const query = spec.query ? jsonSchemaOf(spec.query) : undefined
    targets.push({ key, spec, body, query, notes })
  }
  return { targets, excluded }
}

export type Who = Role | 'anonymous'
export interface Case {
  who: Who
  url: string
  mutation: string
  /** JSON value to send (written with writeJson), or raw text. */
  body?: { json: unknown } | { raw: string }
}

/** Real ids by the path segment before a parameter. */
const SEGMENT_POOL: Record<string, string> = {
  benches: 'benches',
  people: 'people',
  'operation-kinds': 'kinds',
  closures: 'closures',
  routings: 'routings',
  customers: 'customers',
  users: 'users',
  orders: 'orders',
  'job-bags': 'jobBags',
  operations: 'operations',
  'time-records': 'timeRecords',
  plans: 'plans',
  outbox: 'outbox',
  files: 'files',
  runs: 'runs',
  leave: 'leave',
  downtime: 'downtime',
}

export async function loadIdPools(db: Db): Promise<IdPools> {
  const ids = async (rows: PromiseLike<{ id: number }[]>) => {
    try {
      return (await rows).map((r) => Number(r.id))
    } catch {
      return []
    }
  }
  const agentEmails = Object.values(DEMO_EMAIL)
  const { people, users, orders, operations, planVersions } = s
  return {
    customers: await ids(db.select({ id: s.customers.id }).from(s.customers).orderBy(asc(s.customers.id)).limit(5)),
    routings: await ids(db.select({ id: s.routings.id }).from(s.routings).orderBy(asc(s.routings.id)).limit(5)),
    kinds: await ids(db.select({ id: s.operationKinds.id }).from(s.operationKinds).orderBy(asc(s.operationKinds.id)).limit(5)),
    benches: await ids(db.select({ id: s.benches.id }).from(s.benches).orderBy(asc(s.benches.id)).limit(5)),
    // The people and users the fuzzing agents sign in as are left alone: switching one off would end the walk.
    people: await ids(
      db
        .select({ id: people.id })
        .from(people)
        .leftJoin(users, eq(users.id, people.userId))
        .where(or(isNull(users.email), notInArray(users.email, agentEmails)))
        .orderBy(asc(people.id))
        .limit(5),
    ),
    users: await ids(db.select({ id: users.id }).from(users).where(notInArray(users.email, agentEmails)).orderBy(asc(users.id)).limit(5)),
    orders: await ids(
      db
        .select({ id: orders.id })
        .from(orders)
        .orderBy(desc(eq(orders.status, 'open')), asc(orders.id))
        .limit(5),
    ),
    jobBags: await ids(db.select({ id: s.jobBags.id }).from(s.jobBags).orderBy(asc(s.jobBags.id)).limit(5)),
    operations: await ids(
      db
        .select({ id: operations.id })
        .from(operations)
        .orderBy(desc(eq(operations.status, 'ready')), asc(operations.id))
        .limit(6),
    ),
    timeRecords: await ids(db.select({ id: s.timeRecords.id }).from(s.timeRecords).orderBy(asc(s.timeRecords.id)).limit(5)),
    plans: await ids(db.select({ id: planVersions.id }).from(planVersions).orderBy(desc(planVersions.id)).limit(3)),
    outbox: await ids(db.select({ id: s.outbox.id }).from(s.outbox).orderBy(asc(s.outbox.id)).limit(3)),
    files: await ids(db.select({ id: s.files.id }).from(s.files).orderBy(asc(s.files.id)).limit(3)),
    closures: await ids(db.select({ id: s.closures.id }).from(s.closures).orderBy(asc(s.closures.id)).limit(3)),
    leave: await ids(db.select({ id: s.leave.id }).from(s.leave).orderBy(asc(s.leave.id)).limit(3)),
    downtime: await ids(db.select({ id: s.benchDowntime.id }).from(s.benchDowntime).orderBy(asc(s.benchDowntime.id)).limit(3)),
  }
}

function pathArb(path: string, pools: IdPools): fc.Arbitrary<string> {
  const segs = path.split('/')
  const parts = segs.map((s, i) => {
    if (!s.startsWith(':')) return fc.constant(s)
    const name = s.slice(1)
    const junk = fc.constantFrom(...PATH_JUNK)
    if (name === 'runId') return fc.oneof({ weight: 2, arbitrary: fc.uuid() }, { weight: 2, arbitrary: junk })
    const pool = name === 'operationId' ? 'operations' : name === 'childId' ? (SEGMENT_POOL[segs[i + 1] ?? ''] ?? 'leave') : SEGMENT_POOL[segs[i - 1] ?? '']
    const real = pool && pools[pool]?.length ? pools[pool]! : [1, 2, 999999]
    return fc.oneof({ weight: 3, arbitrary: fc.constantFrom(...real).map(String) }, { weight: 2, arbitrary: junk })
  })
  return fc.tuple(...(parts as [fc.Arbitrary<string>])).map((p: string[]) => p.join('/'))
}

type Json = unknown
const isObj = (v: unknown): v is Record<string, unknown> => typeof v === 'object' && v !== null && !Array.isArray(v) && !isRaw(v)

function pathsOf(v: Json, prefix: (string | number)[] = [], out: (string | number)[][] = []): (string | number)[][] {
  if (Array.isArray(v))
    v.forEach((x, i) => {
      out.push([...prefix, i])
      pathsOf(x, [...prefix, i], out)
    })
  else if (isObj(v))
    for (const [k, x] of Object.entries(v)) {
      out.push([...prefix, k])
      pathsOf(x, [...prefix, k], out)
    }
  return out
}
function setAt(v: Json, path: (string | number)[], value: unknown, remove = false): Json {
  const copy = structuredClone(v) as any
  let cur = copy
  for (const k of path.slice(0, -1)) cur = cur[k]
  const last = path[path.length - 1]!
  if (remove) {
    if (Array.isArray(cur)) cur.splice(Number(last), 1)
    else delete cur[last]
  } else cur[last] = value
  return copy
}

/** A valid-looking value changed in one hostile way: a field dropped, replaced, added, or the whole thing replaced. */
function mutated(base: fc.Arbitrary<Json>): fc.Arbitrary<{ value: Json; mutation: string }> {
  return base.chain((v) => {
    const paths = pathsOf(v)
    const options: fc.Arbitrary<{ value: Json; mutation: string }>[] = [
      fc.constant({ value: v, mutation: 'valid-looking' }),
      hostileValue.map((h) => ({ value: h, mutation: 'root replaced' })),
      fc
        .tuple(
          hostileString.filter((s) => s.length < 100),
          hostileValue,
        )
        .map(([k, h]) => ({ value: isObj(v) ? { ...v, [k]: h } : { [k]: h }, mutation: `extra field ${JSON.stringify(k).slice(0, 30)}` })),
    ]
    if (paths.length) {
      options.push(fc.tuple(fc.constantFrom(...paths), hostileValue).map(([p, h]) => ({ value: setAt(v, p, h), mutation: `${p.join('.')} replaced` })))
      options.push(fc.tuple(fc.constantFrom(...paths), hostileString).map(([p, h]) => ({ value: setAt(v, p, h), mutation: `${p.join('.')} ← hostile string` })))
      options.push(fc.constantFrom(...paths).map((p) => ({ value: setAt(v, p, undefined, true), mutation: `${p.join('.')} missing` })))
    }
    return fc.oneof(...options)
  })
}

const RAW_BODIES = ['', '{', '{"a":', '{"a":NaN}', '[1,2', 'null', 'true', '"text"', '12', '\u0000', '{"a":1}{"b":2}', "{'single':1}", '{"a":1,}', '\uFEFF{}']

function queryArb(t: Target, pools: IdPools): fc.Arbitrary<string> {
  const base: fc.Arbitrary<Json> = t.query ? arbOf(t.query, pools) : fc.constant({})
  const encode = (v: Json) => {
    if (!isObj(v)) return new URLSearchParams({ v: String(isRaw(v) ? writeJson(v) : (JSON.stringify(v) ?? '')).slice(0, 200) }).toString()
    const sp = new URLSearchParams()
    for (const [k, x] of Object.entries(v)) {
      if (x === undefined) continue
      if (Array.isArray(x)) for (const y of x) sp.append(k, typeof y === 'string' ? y : (JSON.stringify(y) ?? ''))
      else sp.append(k, (isRaw(x) ? writeJson(x) : typeof x === 'string' ? x : (JSON.stringify(x) ?? '')).slice(0, 3000))
    }
    return sp.toString()
  }
  return fc.oneof(
    { weight: 3, arbitrary: mutated(base).map((m) => encode(m.value)) },
    { weight: 1, arbitrary: fc.tuple(base, fc.constantFrom(...QUERY_JUNK)).map(([v, j]) => [encode(v), j].filter(Boolean).join('&')) },
  )
}

function whoArb(spec: RouteSpec): fc.Arbitrary<Who> {
  if (spec.roles === 'public')
    return fc.oneof({ weight: 4, arbitrary: fc.constant<Who>('anonymous') }, { weight: 1, arbitrary: fc.constantFrom<Who>(...ROLES) })
  const allowed = spec.roles
  const others: Who[] = ['anonymous', ...ROLES.filter((r) => !allowed.includes(r))]
  return fc.oneof({ weight: 9, arbitrary: fc.constantFrom<Who>(...allowed) }, { weight: 1, arbitrary: fc.constantFrom<Who>(...others) })
}

/** Planner runs stay short: a valid-looking body asks for one second (a 409 "already running" is fine). */
function tame(t: Target, v: Json): Json {
  if (t.key === 'POST /plans/runs' && isObj(v)) {
    const s = v.timeLimitSeconds
    if (s === undefined || (typeof s === 'number' && s > 1 && s <= 120)) return { ...v, timeLimitSeconds: 1 }
  }
  return v
}

export function caseArb(t: Target, pools: IdPools): fc.Arbitrary<Case> {
  const writes = t.spec.method !== 'get'
  const bodyArb: fc.Arbitrary<{ body?: Case['body']; mutation: string }> = !writes
    ? fc.constant({ mutation: '' })
    : fc.oneof(
        {
          weight: 8,
          arbitrary: mutated(t.body ? arbOf(t.body, pools) : fc.constant({})).map((m) => ({ body: { json: tame(t, m.value) }, mutation: m.mutation })),
        },
        {
          weight: 1,
          arbitrary: fc
            .constantFrom(...RAW_BODIES)
            .filter((b) => !(t.key === 'POST /plans/runs' && b === ''))
            .map((raw) => ({ body: { raw }, mutation: `raw body ${JSON.stringify(raw)}` })),
        },
      )
  const q = t.spec.query || t.spec.method === 'get' ? queryArb(t, pools) : fc.constant('')
  return fc.record({ who: whoArb(t.spec), path: pathArb(t.spec.path, pools), q, b: bodyArb }).map(({ who, path, q, b }) => ({
    who,
    url: `/api${path}${q ? `?${q}` : ''}`,
    mutation: [q ? `query ${q.slice(0, 80)}` : '', b.mutation].filter(Boolean).join('; '),
    body: b.body,
  }))
}

export interface Answer {
  status: number
  body: any
  type: string
}

export async function send(agent: Agent, method: RouteSpec['method'], c: Case): Promise<Answer> {
  let req = agent.agent[method](c.url)
  if (method !== 'get') req = req.set('x-csrf-token', agent.csrf)
  if (c.body) req = req.set('content-type', 'application/json').send('json' in c.body ? writeJson(c.body.json) : c.body.raw)
  const r = await req
  return { status: r.status, body: r.body, type: String(r.headers['content-type'] ?? '') }
}

/** What every answer must satisfy: no 5xx; a 4xx names the error, and a 400 names at least one field. */
export function problemsOf(a: Answer): string[] {
  const out: string[] = []
  if (a.status >= 500) out.push(`${a.status} server error: ${JSON.stringify(a.body).slice(0, 300)}`)
  // 431: Node's HTTP parser refuses a request line over 16 KiB before the app sees it; there is no app answer to check.
  if (a.status >= 400 && a.status < 500 && a.status !== 431) {
    if (!/json/.test(a.type) || typeof a.body?.error !== 'string' || !a.body.error)
      out.push(`${a.status} without an error message (${a.type}): ${JSON.stringify(a.body).slice(0, 200)}`)
    if (a.status === 400 && (!isObj(a.body?.fields) || Object.keys(a.body.fields).length === 0))
      out.push(`400 without fields: ${JSON.stringify(a.body).slice(0, 200)}`)
  }
  return out
}

export interface Sessions {
  get(who: Who): Agent
  /** Signs a role in again (after something ended its session); returns false when it cannot. */
  renew(who: Who): Promise<boolean>
}

export async function makeSessions(target: Parameters<typeof import('supertest').agent>[0]): Promise<Sessions> {
  const agents = new Map<Who, Agent>()
  const fresh = async (who: Who) => {
    const a = new Agent(target as any)
    if (who === 'anonymous') await a.refreshCsrf()
    else {
      const r = await a.signIn(DEMO_EMAIL[who])
      if (r.status !== 200) return null
    }
    agents.set(who, a)
    return a
  }
  for (const who of ['anonymous', ...ROLES] as Who[]) if (!(await fresh(who))) throw new Error(`sign-in as ${who} failed`)
  return { get: (who) => agents.get(who)!, renew: async (who) => (await fresh(who)) !== null }
}

/** Reads a written resource back (GET path/:id, or the list holding it) and compares the accepted strings literally. */
async function readBack(all: RouteSpec[], t: Target, c: Case, a: Answer, agent: Agent): Promise<string[]> {
  if (!t.spec.body || !c.body || !('json' in c.body) || !isObj(a.body)) return []
  const sent = t.spec.body.safeParse(JSON.parse(writeJson(c.body.json)))
  if (!sent.success || !isObj(sent.data)) return []
  const id = typeof a.body.id === 'number' ? a.body.id : null
  if (id === null) return []
  const path = t.spec.path.replace(/\/:id$/, '')
  const one = all.find((r) => r.method === 'get' && r.path === `${path}/:id`)
  const list = all.find((r) => r.method === 'get' && r.path === path)
  let stored: Record<string, unknown> | undefined
  if (one) {
    const r = await agent.get(`/api${path}/${id}`)
    if (r.status === 200 && isObj(r.body)) stored = r.body
  } else if (list) {
    const r = await agent.get(`/api${path}?pageSize=500`)
    const items: unknown[] = Array.isArray(r.body) ? r.body : Array.isArray(r.body?.items) ? r.body.items : []
    stored = items.find((x) => isObj(x) && x.id === id) as Record<string, unknown> | undefined
  }
  if (!stored) return []
  const out: string[] = []
  for (const [k, v] of Object.entries(sent.data)) {
    if (typeof v !== 'string' || typeof stored[k] !== 'string') continue
    if (stored[k] !== v) out.push(`${k} stored as ${JSON.stringify(stored[k]).slice(0, 80)}, sent ${JSON.stringify(v).slice(0, 80)}`)
  }
  return out
}

export interface FuzzStats {
  requests: number
  byStatus: Record<string, number>
  byRoute: Record<string, Record<string, number>>
  failures: { key: string; who: Who; url: string; mutation: string; status: number; problem: string }[]
  readBacks: number
  sessionsRenewed: string[]
  runsStopped: number
}

export interface FuzzOptions {
  routes: RouteSpec[]
  sessions: Sessions
  pools: IdPools
  runsPerRoute: number
  seed: number
  onlyKeys?: string[]
}

/** Walks every target with `runsPerRoute` seeded cases; collects failures instead of stopping at the first. */
export async function fuzzRoutes(o: FuzzOptions, plan = planTargets(o.routes)): Promise<FuzzStats> {
  const stats: FuzzStats = { requests: 0, byStatus: {}, byRoute: {}, failures: [], readBacks: 0, sessionsRenewed: [], runsStopped: 0 }
  const targets = o.onlyKeys ? plan.targets.filter((t) => o.onlyKeys!.includes(t.key)) : plan.targets
  for (const [i, t] of targets.entries()) {
    const samples = fc.sample(caseArb(t, o.pools), { seed: o.seed + i * 7919, numRuns: o.runsPerRoute })
    for (const c of samples) {
      const agent = o.sessions.get(c.who)
      let a: Answer
      try {
        a = await send(agent, t.spec.method, c)
      } catch (err) {
        a = { status: 599, body: { error: String(err) }, type: '' }
      }
      stats.requests++
      stats.byStatus[a.status] = (stats.byStatus[a.status] ?? 0) + 1
      const br = (stats.byRoute[t.key] ??= {})
      br[a.status] = (br[a.status] ?? 0) + 1
      const fail = (problem: string) =>
        stats.failures.push({ key: t.key, who: c.who, url: c.url.slice(0, 300), mutation: c.mutation.slice(0, 200), status: a.status, problem })
      for (const p of problemsOf(a)) fail(p)
      if (a.status >= 200 && a.status < 300 && t.spec.method !== 'get' && c.who !== 'anonymous') {
        for (const p of await readBack(o.routes, t, c, a, agent)) fail(`read back: ${p}`)
        stats.readBacks++
      }
      // A planner run the fuzzer started is stopped at once: the walk is about input, not about planning.
      if (t.key === 'POST /plans/runs' && a.status === 202 && typeof a.body?.id === 'string') {
        await o.sessions.get('manager').delete(`/api/plans/runs/${a.body.id}`)
        stats.runsStopped++
      }
      if (a.status === 401 && c.who !== 'anonymous' && t.spec.roles !== 'public') {
        stats.sessionsRenewed.push(`${c.who} after ${t.key} ${c.url.slice(0, 100)}`)
        if (!(await o.sessions.renew(c.who))) throw new Error(`${c.who} cannot sign in any more after ${t.key} ${c.url}`)
      }
    }
  }
  return stats
}

export function printPlan(plan: Plan, log = console.log) {
  log(`Fuzzing ${plan.targets.length} routes; left out ${plan.excluded.length}:`)
  for (const e of plan.excluded) log(`  - ${e.key}: ${e.reason}`)
  for (const t of plan.targets) for (const n of t.notes) log(`  note ${t.key}: ${n}`)
}
