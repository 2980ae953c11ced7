// What a draft buys when it plans a piece the live plan does not hold (a new order): counted as newly planned, late or not,
// not as earlier or later.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { eq } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { dayjs } from '../../server/lib/time'
import { createTestApp, signedIn, type Agent, type TestApp } from '../setup/app'
import { addDraft, readyBenchStep } from '../setup/fixtures'

let t: TestApp
let manager: Agent
beforeAll(async () => {
  t = await createTestApp()
  manager = await signedIn(t.app, 'manager')
})
afterAll(async () => {
  await t.close()
})

describe('a draft that plans new work', () => {
  it('when the draft holds the steps of a piece the live plan has no bar for, then it counts one newly planned piece, and late when it ends after its day', async () => {
    const step = await readyBenchStep(t.db)
    const [op] = await t.db.select({ jobBagId: s.operations.jobBagId }).from(s.operations).where(eq(s.operations.id, step.id))
    const [bag] = await t.db.select({ orderId: s.jobBags.orderId }).from(s.jobBags).where(eq(s.jobBags.id, op!.jobBagId))
    // Off the live plan, and promised for today: a bar ten days on is late.
    await t.db
      .update(s.operations)
      .set({ plannedStart: null, plannedEnd: null, plannedBenchId: null, plannedPersonId: null })
      .where(eq(s.operations.jobBagId, op!.jobBagId))
    await t.db
      .update(s.orders)
      .set({ promisedDate: dayjs().tz('Europe/London').format('YYYY-MM-DD') })
      .where(eq(s.orders.id, bag!.orderId))
    const start = new Date(Date.now() + 10 * 86_400_000).toISOString()
    const end = new Date(Date.now() + 10 * 86_400_000 + 3_600_000).toISOString()
    const planId = await addDraft(t.db, [{ operationId: step.id, benchId: step.benchId, personId: step.personId, start, end }])
    const cmp = await manager.get(`/api/plans/${planId}/compare`)
    expect(cmp.status, JSON.stringify(cmp.body)).toBe(200)
    // The draft holds only this piece: nothing planned in both, so nothing earlier or later.
    expect(cmp.body.gains).toEqual({ earlier: 0, later: 0, lessLate: 0, moreLate: 0, newlyLate: 0, noLongerLate: 0, newPieces: 1, newPiecesLate: 1 })
  })
})
