// Shared helpers for the API tests: a second workshop, error-body checks, audit-log reads.
import { expect } from 'vitest'
import type { Response } from 'supertest'
import { and, desc, eq } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { hashPassword } from '../../server/services/users'
import { Agent, type TestApp } from '../setup/app'
import { addWorkshop, userIdByEmail } from '../setup/fixtures'

export const OTHER_PASSWORD = 'other-workshop-pass'

/** Creates a second workshop straight in the database with one owner, and signs that owner in. */
export async function secondWorkshop(t: TestApp, tag = 'b'): Promise<{ workshopId: number; userId: number; agent: Agent }> {
  const hash = await hashPassword(OTHER_PASSWORD)
  const { workshopId } = await addWorkshop(t.db, { name: `Other bench ${tag}` })
  const email = `owner-${tag}-${workshopId}@other.test`
  const [u] = await t.db.insert(s.users).values({ workshopId, email, name: 'Other Owner', role: 'owner', passwordHash: hash }).returning({ id: s.users.id })
  const agent = new Agent(t.app)
  const r = await agent.signIn(email, OTHER_PASSWORD)
  if (r.status !== 200) throw new Error(`sign-in to the second workshop failed: ${r.status} ${JSON.stringify(r.body)}`)
  return { workshopId, userId: u!.id, agent }
}

/** An error body in the wire shape, without internals (no stack, no SQL). */
export function expectCleanError(r: Response, status: number) {
  expect(r.status, `expected ${status}, got ${r.status}: ${JSON.stringify(r.body)}`).toBe(status)
  expect(r.body).toMatchObject({ error: expect.any(String), code: expect.any(String) })
  const text = JSON.stringify(r.body)
  expect(text).not.toMatch(/\bat .+\.(ts|js):\d+/)
  expect(text).not.toMatch(/stack|node_modules|select |insert into|update .+ set/i)
}

/** A 400 that names the field (path joined with dots) with a reason. */
export function expectFieldError(r: Response, field: string, reason?: RegExp) {
  expectCleanError(r, 400)
  expect(r.body.code).toBe('validation')
  expect(Object.keys(r.body.fields ?? {}), `fields were ${JSON.stringify(r.body.fields)}`).toContain(field)
  if (reason) expect(r.body.fields[field]).toMatch(reason)
}

export interface AuditRow {
  action: string
  entity: string
  entity_id: number | null
  user_id: number | null
  workshop_id: number
  details: Record<string, unknown>
}

/** Audit rows for one entity, newest first. */
export async function auditRows(t: TestApp, entity: string, entityId: number): Promise<AuditRow[]> {
  const a = s.auditLog
  return t.db
    .select({ action: a.action, entity: a.entity, entity_id: a.entityId, user_id: a.userId, workshop_id: a.workshopId, details: a.details })
    .from(a)
    .where(and(eq(a.entity, entity), eq(a.entityId, entityId)))
    .orderBy(desc(a.id))
}

export async function userIdOf(t: TestApp, email: string): Promise<number> {
  return userIdByEmail(t.db, email)
}
