// The first plan of a freshly seeded workshop: planned and published once, never again.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { eq } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { publishFirstPlans } from '../../server/planning/first-plan'
import { createTestDb, type TestDb } from '../setup/db'

let t: TestDb
beforeAll(async () => {
  t = await createTestDb()
})
afterAll(async () => {
  await t.drop()
})

describe('first plan', () => {
  it('when a workshop has never planned, then a plan is made and published once', async () => {
    const first = await publishFirstPlans(t.db, 1)
    expect(first).toHaveLength(1)
    const [p] = await t.db.select().from(s.planVersions).where(eq(s.planVersions.id, first[0]!))
    expect(p).toMatchObject({ status: 'published', number: 1 })
    expect((p!.score as { violations: string[] }).violations).toEqual([])
    expect(await publishFirstPlans(t.db, 1)).toEqual([])
  })
})
