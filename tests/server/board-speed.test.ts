// A bar says at what speed its person works its kind of work, so a bar shorter or longer than the estimate is explained.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { and, eq } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { createTestApp, signedIn, type Agent, type TestApp } from '../setup/app'
import { planStep, readyBenchStep } from '../setup/fixtures'

let t: TestApp
let manager: Agent

beforeAll(async () => {
  t = await createTestApp()
  manager = await signedIn(t.app, 'manager')
})
afterAll(async () => {
  await t.close()
})

describe('the person’s speed on the board', () => {
  it('when the planned person works the step’s kind at speed 1.1, then the bar carries that speed', async () => {
    const op = await readyBenchStep(t.db)
    await t.db
      .update(s.personSkills)
      .set({ speed: 1.1 })
      .where(and(eq(s.personSkills.personId, op.personId), eq(s.personSkills.kindId, op.kindId)))
    // Wednesday 9 December 2026 (GMT): 09:16–10:38.
    await planStep(t.db, op.id, { benchId: op.benchId, personId: op.personId, start: '2026-12-09T09:16:00Z', end: '2026-12-09T10:38:00Z' })
    const r = await manager.get('/api/board?from=2026-12-07&to=2026-12-13')
    expect(r.status).toBe(200)
    const bar = r.body.items.find((i: { id: number }) => i.id === op.id)
    expect(bar.personId).toBe(op.personId)
    expect(bar.speed).toBeCloseTo(1.1, 6)
  })
})
