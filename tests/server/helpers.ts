// Shared helpers for the API tests: a second workshop, error-body checks, audit-log reads.
import { expect } from 'vitest'
import type { Response } from 'supertest'
import { hashPassword } from '../../server/services/users'
import { Agent, type TestApp } from '../setup/app'

export const OTHER_PASSWORD = 'other-workshop-pass'

/** Creates a second workshop straight in the database with one owner, and signs that owner in. */
export async function secondWorkshop(t: TestApp, tag = 'b'): Promise<{ workshopId: number; userId: number; agent: Agent }> {
  const week = JSON.stringify([{ weekday: 1, start: '09:00', end: '17:00' }])
  const { rows: [w] } = await t.pool.query(`insert into workshops (name, time_zone, week_pattern) values ($1, 'Europe/London', $2::jsonb) returning id`, [`Other bench ${tag}`, week])
  const hash = await hashPassword(OTHER_PASSWORD)
  const email = `owner-${tag}-${w.id}@other.test`
  const { rows: [u] } = await t.pool.query(`insert into users (workshop_id, email, name, role, password_hash) values ($1, $2, 'Other Owner', 'owner', $3) returning id`, [w.id, email, hash])
  const agent = new Agent(t.app)
  const r = await agent.signIn(email, OTHER_PASSWORD)
  if (r.status !== 200) throw new Error(`sign-in to the second workshop failed: ${r.status} ${JSON.stringify(r.body)}`)
  return { workshopId: w.id, userId: u.id, agent }
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

export interface AuditRow { action: string; entity: string; entity_id: number | null; user_id: number | null; workshop_id: number; details: Record<string, unknown> }

/** Audit rows for one entity, newest first. */
export async function auditRows(t: TestApp, entity: string, entityId: number): Promise<AuditRow[]> {
  const { rows } = await t.pool.query(`select action, entity, entity_id, user_id, workshop_id, details from audit_log where entity = $1 and entity_id = $2 order by id desc`, [entity, entityId])
  return rows
}

export async function userIdOf(t: TestApp, email: string): Promise<number> {
  const { rows: [u] } = await t.pool.query(`select id from users where email = $1`, [email])
  return u.id
}
