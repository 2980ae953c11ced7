// Times in the server's sentences (refusals of a move, the order forecast): the day once for a stretch within one day, and
// the year whenever it is not this year (hand-worked on Europe/London, GMT in winter).
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { eq } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import * as rules from '../../shared/domain/rules'
import { formatInstant, workshopWhen } from '../../server/lib/time'
import { createTestApp, signedIn, type Agent, type TestApp } from '../setup/app'
import { readyBenchStep } from '../setup/fixtures'

// Minute 0 = Mon 7 Dec 2026 00:00 London (= UTC in December); now Sat 5 Dec 2026 09:00.
const origin = Date.parse('2026-12-07T00:00:00Z')
const now = new Date('2026-12-05T09:00:00Z')
const when = workshopWhen('Europe/London', (m) => new Date(origin + m * 60_000), now)
const stepRef = { operationId: 7, jobId: 3, name: 'Polish', bag: 'MG26-0069-1' }

describe('times in the server’s sentences', () => {
  it('when a double booking lies within one day, then the day is written once', () => {
    // 10:38 = 638, 11:18 = 678.
    const v = rules.doubleBooking(stepRef, { resource: 'person', name: 'Priya', other: { name: 'Set stones', bag: 'MG26-0070-1' }, from: 638, to: 678, when })
    expect(v.message).toBe('Priya is booked for “Set stones” of MG26-0070-1 Mon 7 Dec 10:38–11:18, the same time as “Polish” of MG26-0069-1.')
  })

  it('when a stretch crosses midnight, then both days are written', () => {
    // Mon 16:00 = 960, Tue 09:00 = 1,980.
    expect(rules.span(when, 960, 1980)).toBe('Mon 7 Dec 16:00–Tue 8 Dec 09:00')
  })

  it('when a time is in another year, then the year is written; in this year it is not', () => {
    // Fri 1 Jan 1999 10:00 London = 10:00 UTC (GMT); 1 January 1999 was a Friday.
    expect(formatInstant('1999-01-01T10:00:00Z', 'Europe/London', now)).toBe('Fri 1 Jan 1999 10:00')
    // Fri 8 Jan 2027 is in the next year: written with it.
    expect(formatInstant('2027-01-08T09:30:00Z', 'Europe/London', now)).toBe('Fri 8 Jan 2027 09:30')
    expect(formatInstant('2026-12-11T17:00:00Z', 'Europe/London', now)).toBe('Fri 11 Dec 17:00')
    const v = rules.notBeforeNow(stepRef, { start: (Date.parse('1999-01-01T10:00:00Z') - origin) / 60_000, now: (now.getTime() - origin) / 60_000, when })!
    expect(v.message).toBe('“Polish” of MG26-0069-1 cannot be planned in the past (Fri 1 Jan 1999 10:00, now is Sat 5 Dec 09:00).')
  })
})

describe('a move refused into another year', () => {
  let t: TestApp
  let manager: Agent
  beforeAll(async () => {
    t = await createTestApp()
    manager = await signedIn(t.app, 'manager')
  })
  afterAll(async () => {
    await t.close()
  })

  it('when a bar is dragged to Fri 1 Jan 1999, then the refusal names the year', async () => {
    const op = await readyBenchStep(t.db)
    const [row] = await t.db.select({ version: s.operations.version }).from(s.operations).where(eq(s.operations.id, op.id))
    const r = await manager.patch(`/api/board/operations/${op.id}`, {
      start: '1999-01-01T10:00:00Z',
      benchId: op.benchId,
      personId: op.personId,
      version: row!.version,
    })
    expect(r.status, JSON.stringify(r.body)).toBe(422)
    expect(r.body.error).toContain('cannot be planned in the past (Fri 1 Jan 1999 10:00, now is ')
  })
})
