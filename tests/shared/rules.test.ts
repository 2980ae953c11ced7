// The rule book: each rule's verdict on hand-worked facts, and one wording whichever part of the app asks.
import { describe, expect, it } from 'vitest'
import * as rules from '../../shared/domain/rules'

const step = { operationId: 7, jobId: 3, name: 'Set centre stone', bag: 'JB-0042' }

describe('rule book', () => {
  it('when a predecessor ends at 600 with a 45 min wait, then a start at 644 breaks the routing order and 645 keeps it', () => {
    // Hand-worked: ready = 600 + 45 = 645; a start must be ≥ 645.
    const early = rules.routingOrder(step, { start: 644, predecessor: 'Pickle', readyAt: 645, waitAfter: 45 })
    expect(early).toMatchObject({ rule: 'routing order', severity: 'hard', operationId: '7', jobId: '3' })
    expect(early!.message).toBe('“Set centre stone” of JB-0042 must wait for “Pickle” and its 45 min wait, ready 645.')
    expect(rules.routingOrder(step, { start: 645, predecessor: 'Pickle', readyAt: 645, waitAfter: 45 })).toBeNull()
  })

  it('when the person holds the skill at the required level or above, then no violation; below or missing, then "skill" with both levels', () => {
    expect(rules.skill(step, { personName: 'Ada', kindName: 'Setting', level: 3, required: 3 })).toBeNull()
    expect(rules.skill(step, { personName: 'Ada', kindName: 'Setting', level: 4, required: 3 })).toBeNull()
    const low = rules.skill(step, { personName: 'Ada', kindName: 'Setting', level: 2, required: 3 })!
    expect(low.message).toBe('Ada is not skilled for “Set centre stone” of JB-0042: it needs setting at level 3; their level is 2.')
    expect(low.details).toEqual({ requiredLevel: 3, level: 2 })
    expect(rules.skill(step, { personName: 'Ada', kindName: 'Setting', level: null, required: 1 })!.details).toEqual({ requiredLevel: 1, level: 0 })
  })

  it('when a successor is planned at 700 and the step ends at 680 with a 30 min wait, then it overtakes its successor (680 + 30 > 700)', () => {
    expect(rules.beforeSuccessor(step, { end: 680, waitAfter: 30, successor: 'Polish', successorStart: 700 })?.rule).toBe('routing order')
    expect(rules.beforeSuccessor(step, { end: 670, waitAfter: 30, successor: 'Polish', successorStart: 700 })).toBeNull()
  })

  it('when times are written by the caller, then the message uses its words (the board writes local time, the engine minutes)', () => {
    const v = rules.doubleBooking(step, {
      resource: 'person',
      name: 'Ada',
      other: { name: 'Solder bail', bag: 'JB-0007' },
      from: 540,
      to: 600,
      when: (m) => `${Math.floor(m / 60)}:${String(m % 60).padStart(2, '0')}`,
    })
    expect(v.rule).toBe('person double booking')
    expect(v.message).toBe('Ada is booked for “Solder bail” of JB-0007 9:00–10:00, the same time as “Set centre stone” of JB-0042.')
  })

  it('when a stretch lies within one day and the writer names days, then the day is written once; across days, both ends in full', () => {
    // A writer on a clock whose minute 0 is Mon 7 Dec 00:00 (hand-made): "Mon 7 Dec 10:38" for minute 638.
    const at = (m: number) => `${m < 1440 ? 'Mon 7 Dec' : 'Tue 8 Dec'} ${String(Math.floor(m / 60) % 24).padStart(2, '0')}:${String(m % 60).padStart(2, '0')}`
    const when: rules.When = Object.assign(at, { dayOf: (m: number) => String(Math.floor(m / 1440)), timeOf: (m: number) => at(m).slice(-5) })
    const other = { name: 'Solder bail', bag: 'JB-0007' }
    // 10:38 = 638, 11:18 = 678.
    expect(rules.doubleBooking(step, { resource: 'bench', name: 'Bench 2', other, from: 638, to: 678, when }).message).toBe(
      'Bench 2 is booked for “Solder bail” of JB-0007 Mon 7 Dec 10:38–11:18, the same time as “Set centre stone” of JB-0042.',
    )
    // 16:00 = 960; Tue 09:00 = 1440 + 540 = 1980.
    expect(rules.workingTime(step, { resource: 'person', name: 'Ada', from: 960, to: 1980, when }).message).toBe(
      '“Set centre stone” of JB-0042 needs Ada during Mon 7 Dec 16:00–Tue 8 Dec 09:00, outside their working time.',
    )
    expect(rules.workingTime(step, { resource: 'bench', name: 'Bench 2', from: 638, to: 678, when }).message).toBe(
      '“Set centre stone” of JB-0042 works on Bench 2 during Mon 7 Dec 10:38–11:18, when the bench is not available.',
    )
  })

  it('when a piece finishes after its due date, then it is a soft finding with the minutes late', () => {
    const v = rules.dueDate({ jobId: 'j1', name: 'JB-0042' }, { completion: 1300, due: 1200 })!
    expect(v).toMatchObject({ rule: 'due date', severity: 'soft', details: { lateBy: 100 } })
    expect(rules.isHard(v)).toBe(false)
    expect(rules.dueDate({ jobId: 'j1', name: 'JB-0042' }, { completion: 1200, due: 1200 })).toBeNull()
  })

  it('when findings are listed for a banner, then the first ones are joined, and plain strings saved earlier read as they are', () => {
    const a = rules.notBeforeNow(step, { start: 5, now: 10 })!
    expect(rules.describe([a, 'an older finding', a], 2)).toBe(`${a.message}; an older finding`)
  })

  it('every rule is hard except the due date', () => {
    expect(
      Object.entries(rules.RULES)
        .filter(([, s]) => s === 'soft')
        .map(([r]) => r),
    ).toEqual(['due date'])
  })
})
