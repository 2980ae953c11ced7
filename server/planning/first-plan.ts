// A first published plan for a workshop that has never planned, so a new demo opens on a filled board.
import { and, asc, count, eq, inArray } from 'drizzle-orm'
import type { Db } from '../db/client'
import * as s from '../db/schema/index'
import { Realtime } from '../realtime/hub'
import type { Actor } from '../lib/route'
import { publishDraft } from './drafts'
import { startRun, waitForRun } from './runs'

/** Runs the planner for `seconds` and publishes the result as the workshop's first plan; skips workshops that have plans. */
export async function publishFirstPlans(db: Db, seconds = 5): Promise<number[]> {
  const published: number[] = []
  for (const w of await db.select({ id: s.workshops.id }).from(s.workshops)) {
    const [n] = await db.select({ n: count() }).from(s.planVersions).where(eq(s.planVersions.workshopId, w.id))
    if ((n?.n ?? 0) > 0) continue
    const [planner] = await db
      .select()
      .from(s.users)
      .where(and(eq(s.users.workshopId, w.id), inArray(s.users.role, ['manager', 'owner']), eq(s.users.active, true)))
      .orderBy(asc(s.users.role), asc(s.users.id))
      .limit(1)
    if (!planner) continue
    const actor: Actor = { userId: planner.id, workshopId: w.id, role: planner.role, personId: null, name: planner.name }
    const deps = { db, realtime: new Realtime() }
    const run = await startRun(deps, actor, { timeLimitSeconds: seconds, seed: 1 })
    const done = await waitForRun(db, run.id, (seconds + 30) * 1000)
    if (done?.status !== 'done' || !done.planId) continue
    await publishDraft(deps, actor, done.planId)
    published.push(done.planId)
  }
  return published
}
