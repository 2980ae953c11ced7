// Fixtures for the bench-floor API tests: ready operations made in the test database, extra skilled people, ids by name.
import { randomUUID } from 'node:crypto'
import { hashPassword } from '../../server/services/users'
import { Agent, type TestApp } from '../setup/app'

export const rid = () => randomUUID()

export async function benchId(t: TestApp, name: string): Promise<number> {
  const { rows: [b] } = await t.pool.query('select id from benches where name = $1', [name])
  return b.id
}

export async function personIdOf(t: TestApp, email: string): Promise<number> {
  const { rows: [p] } = await t.pool.query('select p.id from people p join users u on u.id = p.user_id where u.email = $1', [email])
  return p.id
}

/** Open-order operations of one kind (optionally of one template step key), earliest due first. */
export async function openOps(t: TestApp, kind: string, o: { key?: string; status?: string } = {}): Promise<{ id: number; key: string; job_bag_id: number; required_level: number }[]> {
  const { rows } = await t.pool.query(
    `select o.id, o.key, o.job_bag_id, o.required_level from operations o join operation_kinds k on k.id = o.kind_id join job_bags jb on jb.id = o.job_bag_id
     join orders ord on ord.id = jb.order_id where k.code = $1 and ord.status = 'open' and ($2::text is null or o.key = $2) and ($3::text is null or o.status = $3)
     order by ord.due_date, jb.number, o.seq`, [kind, o.key ?? null, o.status ?? null])
  return rows
}

/** Marks every predecessor (transitively) done and the operation ready, straight in the database. */
export async function makeReady(t: TestApp, operationId: number) {
  const { rows: [op] } = await t.pool.query('select job_bag_id from operations where id = $1', [operationId])
  const { rows: ops } = await t.pool.query('select id, key, after from operations where job_bag_id = $1', [op.job_bag_id])
  const byKey = new Map(ops.map((o: { key: string }) => [o.key, o]))
  const me = ops.find((o: { id: number }) => o.id === operationId)
  const seen = new Set<number>()
  const stack = [...me.after]
  while (stack.length) {
    const p = byKey.get(stack.pop()) as { id: number; after: string[] } | undefined
    if (!p || seen.has(p.id)) continue
    seen.add(p.id)
    stack.push(...p.after)
  }
  // Finished yesterday, so any wait-after (pickle, cure) is long over.
  if (seen.size) await t.pool.query(`update operations set status = 'done', finished_at = now() - interval '1 day' where id = any($1::int[])`, [[...seen]])
  await t.pool.query(`update operations set status = 'ready', claimed_by = null where id = $1`, [operationId])
}

let hashed: string | null = null
/** Creates n bench users with people who set stones at level 3, and signs each in. */
export async function extraSetters(t: TestApp, n: number, tag: string): Promise<{ agent: Agent; personId: number; name: string }[]> {
  hashed ??= await hashPassword('bench-test-password')
  const { rows: [w] } = await t.pool.query('select id from workshops order by id limit 1')
  const { rows: kinds } = await t.pool.query(`select id, code from operation_kinds where workshop_id = $1 and code in ('setting', 'drilling', 'inspection')`, [w.id])
  const out: { agent: Agent; personId: number; name: string }[] = []
  for (let i = 0; i < n; i++) {
    const name = `Setter ${tag}-${i + 1}`
    const email = `setter-${tag}-${i + 1}@bench.test`
    const { rows: [u] } = await t.pool.query(`insert into users (workshop_id, email, name, role, password_hash) values ($1, $2, $3, 'bench', $4) returning id`, [w.id, email, name, hashed])
    const { rows: [p] } = await t.pool.query(`insert into people (workshop_id, user_id, name) values ($1, $2, $3) returning id`, [w.id, u.id, name])
    for (const k of kinds) await t.pool.query('insert into person_skills (person_id, kind_id, level, speed) values ($1, $2, 3, 1)', [p.id, k.id])
    out.push({ agent: null as unknown as Agent, personId: p.id, name })
  }
  await Promise.all(out.map(async (x, i) => {
    const a = new Agent(t.app)
    const r = await a.signIn(`setter-${tag}-${i + 1}@bench.test`, 'bench-test-password')
    if (r.status !== 200) throw new Error(`sign-in failed: ${r.status}`)
    x.agent = a
  }))
  return out
}

/** A step nobody has touched yet (pending), made ready. */
export async function freshReady(t: TestApp, kind: string, key?: string) {
  const op = (await openOps(t, kind, { key, status: 'pending' }))[0]
  if (!op) throw new Error(`no pending ${kind} step left in the test database`)
  await makeReady(t, op.id)
  return op
}
