// Fixtures for the bench-floor API tests: ready operations made in the test database, extra skilled people, ids by name.
import { randomUUID } from 'node:crypto'
import { and, asc, eq, inArray, notInArray } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { hashPassword } from '../../server/services/users'
import { Agent, type TestApp } from '../setup/app'
import { addPerson, benchIdByName, firstWorkshopId, personIdByEmail, readyStep } from '../setup/fixtures'

export const rid = () => randomUUID()

export async function benchId(t: TestApp, name: string): Promise<number> {
  return benchIdByName(t.db, name)
}

export async function personIdOf(t: TestApp, email: string): Promise<number> {
  return personIdByEmail(t.db, email)
}

/** Operations a test keeps for itself: openOps (and so freshReady) never hands them to another test. */
const reserved = new Set<number>()
export function reserveOp(id: number): void {
  reserved.add(id)
}

/** Open-order operations of one kind (optionally of one routing step key), earliest due first, none of them reserved. */
export async function openOps(
  t: TestApp,
  kind: string,
  o: { key?: string; status?: string } = {},
): Promise<{ id: number; key: string; job_bag_id: number; required_level: number }[]> {
  const o2 = s.operations
  return t.db
    .select({ id: o2.id, key: o2.key, job_bag_id: o2.jobBagId, required_level: o2.requiredLevel })
    .from(o2)
    .innerJoin(s.operationKinds, eq(s.operationKinds.id, o2.kindId))
    .innerJoin(s.jobBags, eq(s.jobBags.id, o2.jobBagId))
    .innerJoin(s.orders, eq(s.orders.id, s.jobBags.orderId))
    .where(
      and(
        eq(s.operationKinds.code, kind),
        inArray(s.orders.status, ['open', 'in-work']),
        o.key == null ? undefined : eq(o2.key, o.key),
        o.status == null ? undefined : eq(o2.status, o.status),
        reserved.size === 0 ? undefined : notInArray(o2.id, [...reserved]),
      ),
    )
    .orderBy(asc(s.orders.dueDate), asc(s.jobBags.number), asc(o2.seq))
}

/** Marks every predecessor (transitively) done and the operation ready, straight in the database. */
export async function makeReady(t: TestApp, operationId: number) {
  await readyStep(t.db, operationId)
}

let hashed: string | null = null
/** Creates n bench users with people who set stones at level 3, and signs each in. */
export async function extraSetters(t: TestApp, n: number, tag: string): Promise<{ agent: Agent; personId: number; name: string }[]> {
  hashed ??= await hashPassword('bench-test-password')
  const workshopId = await firstWorkshopId(t.db)
  const out: { agent: Agent; personId: number; name: string }[] = []
  for (let i = 0; i < n; i++) {
    const name = `Setter ${tag}-${i + 1}`
    const email = `setter-${tag}-${i + 1}@bench.test`
    const [u] = await t.db.insert(s.users).values({ workshopId, email, name, role: 'bench', passwordHash: hashed }).returning({ id: s.users.id })
    const personId = await addPerson(t.db, { workshopId, name, userId: u!.id, skills: { codes: ['setting', 'drilling', 'inspection'], level: 3 } })
    out.push({ agent: null as unknown as Agent, personId, name })
  }
  await Promise.all(
    out.map(async (x, i) => {
      const a = new Agent(t.app)
      const r = await a.signIn(`setter-${tag}-${i + 1}@bench.test`, 'bench-test-password')
      if (r.status !== 200) throw new Error(`sign-in failed: ${r.status}`)
      x.agent = a
    }),
  )
  return out
}

/** A step nobody has touched yet (pending), made ready. */
export async function freshReady(t: TestApp, kind: string, key?: string) {
  const op = (await openOps(t, kind, { key, status: 'pending' }))[0]
  if (!op) throw new Error(`no pending ${kind} step left in the test database`)
  await makeReady(t, op.id)
  return op
}
