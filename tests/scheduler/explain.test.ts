// Start reasons recomputed from the plan as it stands: a move by hand changes what holds the next step back (hand-worked cases).
import { describe, it, expect } from 'vitest'
import { explainStarts, type Problem } from '../../server/scheduler/index.ts'
import { at, makeBench, makeJob, makeOperation, makePerson, makeProblem } from './builders.ts'

// Mon 08:00–12:00 and 13:00–16:00 for everyone.
const day = [
  { start: at(0, 8), end: at(0, 12) },
  { start: at(0, 13), end: at(0, 16) },
]
const problem: Problem = makeProblem({
  benches: [makeBench({ id: 'b1', name: 'Setting bench A', available: day }), makeBench({ id: 'b2', name: 'Setting bench B', available: day })],
  people: [makePerson({ id: 'p1', name: 'Ada', available: day }), makePerson({ id: 'p2', name: 'Ben', available: day })],
  now: at(0, 8),
  jobs: [makeJob({ id: 'j1' }), makeJob({ id: 'j2' })],
  operations: [
    makeOperation({
      id: 'a',
      jobId: 'j1',
      name: 'set stones',
      options: [
        { benchId: 'b1', personId: 'p1', minutes: 60 },
        { benchId: 'b2', personId: 'p2', minutes: 60 },
      ],
      waitAfter: 15,
    }),
    makeOperation({ id: 'b', jobId: 'j2', name: 'set bezel', on: ['b1', 'p1', 60] }),
    makeOperation({ id: 'c', jobId: 'j1', name: 'polish', predecessors: ['a'], on: ['b2', 'p2', 30] }),
  ],
})

describe('start reasons from the plan as it stands', () => {
  it('when B follows A on the same bench, then B waits for the bench; the polish waits for A and its 15-min wait', () => {
    const why = explainStarts(problem, [
      { operationId: 'a', benchId: 'b1', personId: 'p1', start: at(0, 8), end: at(0, 9) },
      { operationId: 'b', benchId: 'b1', personId: 'p1', start: at(0, 9), end: at(0, 10) },
      { operationId: 'c', benchId: 'b2', personId: 'p2', start: at(0, 9, 15), end: at(0, 9, 45) },
    ])
    expect(why.get('a')?.kind).toBe('now')
    expect(why.get('b')).toMatchObject({ kind: 'bench', blockerId: 'a' })
    expect(why.get('b')?.detail).toContain('Setting bench A')
    expect(why.get('c')).toMatchObject({ kind: 'predecessor', blockerId: 'a' })
  })
  it('when A is moved by hand to bench B, then B no longer waits for "Setting bench A" and says it could start an hour earlier', () => {
    const why = explainStarts(problem, [
      { operationId: 'a', benchId: 'b2', personId: 'p2', start: at(0, 8), end: at(0, 9) },
      { operationId: 'b', benchId: 'b1', personId: 'p1', start: at(0, 9), end: at(0, 10) },
      { operationId: 'c', benchId: 'b2', personId: 'p2', start: at(0, 9, 15), end: at(0, 9, 45) },
    ])
    expect(why.get('b')?.kind).toBe('by-hand')
    expect(why.get('b')?.detail).not.toContain('Setting bench A')
    // 08:00–09:00 free on bench A with Ada: 60 working minutes (hand-worked).
    expect(why.get('b')?.detail).toContain('1 h')
  })
  it('when a bar is moved by hand later than now, with its bench free since earlier in the day, then it says how much earlier it could start, counted from now (not from when the bench fell free)', () => {
    // Now 10:00; bench A and Ada were free from 08:00 (nothing on them); B is put at 11:00. It could start at 10:00, not 08:00:
    // 60 working minutes earlier (hand-worked), the time before now being past.
    const why = explainStarts({ ...problem, now: at(0, 10) }, [{ operationId: 'b', benchId: 'b1', personId: 'p1', start: at(0, 11), end: at(0, 12) }])
    expect(why.get('b')?.kind).toBe('by-hand')
    expect(why.get('b')?.detail).toContain('could start 1 h of working time earlier')
    expect(why.get('b')?.detail).toContain('from now')
    expect(why.get('b')?.detail).not.toMatch(/free 1 h/)
  })
  it('when the bench falls free after now, then the earlier start is named by its time, and lunch is not counted', () => {
    // Now 08:00; A on bench A 08:30–11:30, B (60 min) put at 13:30. 08:00–08:30 is too short for B; from 11:30 it has
    // 11:30–12:00 and 13:00–13:30 before its own place: 60 working minutes earlier (hand-worked).
    const why = explainStarts(problem, [
      { operationId: 'a', benchId: 'b1', personId: 'p1', start: at(0, 8, 30), end: at(0, 11, 30) },
      { operationId: 'b', benchId: 'b1', personId: 'p1', start: at(0, 13, 30), end: at(0, 14, 30) },
    ])
    expect(why.get('b')?.kind).toBe('by-hand')
    expect(why.get('b')?.detail).toContain('could start 1 h of working time earlier')
    expect(why.get('b')?.detail).toMatch(/from Mon \d+ \w+ 11:30 /)
  })
  it('when the bench and person were free long enough before the last bar ahead of it, then the earlier start is that free stretch, not the end of the last bar', () => {
    // Demo hours Mon–Fri 08:30–12:30, 13:15–17:00 (builders' origin Mon 3 Mar 2025). Prepare ends Mon 16:35; the polishing
    // station is busy Tue 11:42–17:00 (Sam) and Ruth Wed 08:30–09:41 (at the bench); Polish with Ruth is put at Thu 14:00.
    const hours = [0, 1, 2, 3, 4].flatMap((d) => [
      { start: at(d, 8, 30), end: at(d, 12, 30) },
      { start: at(d, 13, 15), end: at(d, 17) },
    ])
    const p = makeProblem({
      now: at(0, 8, 30),
      workshopDays: hours,
      benches: [makeBench({ id: 'pol', name: 'Polishing station', available: hours }), makeBench({ id: 'bench', name: 'Bench', available: hours })],
      people: [makePerson({ id: 'ruth', name: 'Ruth', available: hours }), makePerson({ id: 'sam', name: 'Sam', available: hours })],
      jobs: [makeJob({ id: 'j69', name: 'MG-69 Ring' }), makeJob({ id: 'j70', name: 'MG-70 Bangle' })],
      operations: [
        makeOperation({ id: 'prep', jobId: 'j69', name: 'Prepare', on: ['bench', 'sam', 60] }),
        makeOperation({ id: 'polish', jobId: 'j69', name: 'Polish', predecessors: ['prep'], on: ['pol', 'ruth', 60] }),
        makeOperation({ id: 'x', jobId: 'j70', name: 'Buff', on: ['pol', 'sam', 60] }),
        makeOperation({ id: 'y', jobId: 'j70', name: 'Fit', on: ['bench', 'ruth', 60] }),
      ],
    })
    const others = [
      { operationId: 'prep', benchId: 'bench', personId: 'sam', start: at(0, 15, 35), end: at(0, 16, 35) },
      { operationId: 'x', benchId: 'pol', personId: 'sam', start: at(1, 11, 42), end: at(1, 17) },
      { operationId: 'y', benchId: 'bench', personId: 'ruth', start: at(2, 8, 30), end: at(2, 9, 41) },
    ]
    // A 60-min Polish (Thu 14:00–15:00): Mon 16:35–17:00 and Tue 08:30–11:42 are free on both (25 + 192 = 217 min), so it
    // could start Mon 16:35. Working time from then to Thu 14:00: 25 + 465 (Tue) + 465 (Wed) + 240 + 45 (Thu) = 1,240 min = 20.7 h.
    const short = explainStarts(p, [...others, { operationId: 'polish', benchId: 'pol', personId: 'ruth', start: at(3, 14), end: at(3, 15) }]).get('polish')!
    expect(short.kind).toBe('by-hand')
    expect(short.detail).toContain('could start 20.7 h of working time earlier, from Mon 3 Mar 16:35 ')
    // A 4-h Polish (Thu 14:00–Fri 09:30, 240 working min) does not fit in those 217 min; the next free stretch on both starts
    // Wed 09:41: 169 + 225 (Wed) + 285 (Thu) = 679 min = 11.3 h.
    const long = explainStarts(p, [...others, { operationId: 'polish', benchId: 'pol', personId: 'ruth', start: at(3, 14), end: at(4, 9, 30) }]).get('polish')!
    expect(long.detail).toContain('could start 11.3 h of working time earlier, from Wed 5 Mar 09:41 ')
  })
  it('when a step starts at 13:00 after lunch with nothing else in the way, then it starts as soon as planning allows (nothing but the lunch break before it)', () => {
    const why = explainStarts({ ...problem, now: at(0, 12, 10) }, [{ operationId: 'b', benchId: 'b1', personId: 'p1', start: at(0, 13), end: at(0, 14) }])
    expect(why.get('b')?.kind).toBe('now')
  })
})

// A workshop like the demo's: open Mon–Fri 08:30–12:30 and 13:15–17:00 over two weeks (builders' origin: Mon 3 Mar 2025).
const hhmm = (s: string): number => Number(s.slice(0, 2)) * 60 + Number(s.slice(3))
const spans = (days: number[], parts: [string, string][]) =>
  days.flatMap((d) => parts.map(([a, b]) => ({ start: at(d, 0) + hhmm(a), end: at(d, 0) + hhmm(b) })))
const cut = (list: { start: number; end: number }[], gone: { start: number; end: number }) =>
  list.flatMap((w) =>
    w.end <= gone.start || w.start >= gone.end
      ? [w]
      : [...(w.start < gone.start ? [{ start: w.start, end: gone.start }] : []), ...(w.end > gone.end ? [{ start: gone.end, end: w.end }] : [])],
  )
const WORKDAYS = [0, 1, 2, 3, 4, 7, 8, 9, 10, 11]
const HOURS: [string, string][] = [
  ['08:30', '12:30'],
  ['13:15', '17:00'],
]

describe('start reasons name what held a step last', () => {
  // The workshop is closed all Monday 10 Mar for a stocktake; Sam works mornings only (08:30–12:30).
  const stocktake = { start: at(7, 0), end: at(8, 0) }
  const open = cut(spans(WORKDAYS, HOURS), stocktake)
  const closedFor = {
    open,
    closures: [{ ...stocktake, name: 'Workshop closed: stocktake' }],
  }
  const sam = cut(spans(WORKDAYS, [['08:30', '12:30']]), stocktake)
  const finishing = makeProblem({
    now: at(0, 8, 30),
    horizon: at(13, 0),
    workshopDays: open,
    benches: [makeBench({ id: 'pol', name: 'Polishing station', available: open }), makeBench({ id: 'insp', name: 'Inspection bench', available: open })],
    people: [makePerson({ id: 'ruth', name: 'Ruth', available: open }), makePerson({ id: 'sam', name: 'Sam', available: sam })],
    jobs: [makeJob({ id: 'j80', name: 'MG-80 Wedding bands' })],
    operations: [
      makeOperation({ id: 'polish', jobId: 'j80', name: 'Polish and finish pair', kind: 'polishing', on: ['pol', 'ruth', 120] }),
      makeOperation({ id: 'inspect', jobId: 'j80', name: 'Inspect and box', kind: 'inspection', predecessors: ['polish'], on: ['insp', 'sam', 20] }),
    ],
  })
  // Polish and finish pair: Fri 7 Mar 13:15–15:15; Inspect and box with Sam: Tue 11 Mar 08:30.
  const finishingPlan = [
    { operationId: 'polish', benchId: 'pol', personId: 'ruth', start: at(4, 13, 15), end: at(4, 15, 15) },
    { operationId: 'inspect', benchId: 'insp', personId: 'sam', start: at(8, 8, 30), end: at(8, 8, 50) },
  ]

  it('when the predecessor finished on Friday afternoon and the step starts on Tuesday, then the closure, the weekend and the person’s hours are named, not the predecessor', () => {
    // By hand: Polish and finish pair ends Fri 15:15. Fri 15:15–17:00 the workshop is open and the inspection bench free, but
    // Sam works mornings only; Fri 17:00–Mon 00:00 the weekend; Mon 10 Mar the stocktake closure; Tue 00:00–08:30 the
    // workshop is not open yet; Tue 08:30 Sam and the bench are both at work. The last thing that held it: the closure.
    const why = explainStarts(finishing, finishingPlan, closedFor).get('inspect')!
    expect(why.kind).toBe('working-time')
    expect(why.detail).toBe(
      'the workshop is closed on Mon 10 Mar (Workshop closed: stocktake), then outside workshop hours until Tue 11 Mar 08:30; ' +
        'before that Sam off work, then the weekend; ready since Fri 7 Mar 15:15, when Polish and finish pair finished',
    )
  })

  it('when the calendar’s closures are not known, then the person’s hours are what held it last, and still not the predecessor', () => {
    // By hand: without the closure's name the Monday is closed time like the weekend (no bench or person works then), so the
    // last thing that held the step while the workshop was open is Sam's afternoon off, Fri 15:15–17:00.
    const why = explainStarts(finishing, finishingPlan).get('inspect')!
    expect(why.kind).toBe('working-time')
    expect(why.detail).toBe(
      'Sam is off work until Fri 7 Mar 17:00, then outside workshop hours until Tue 11 Mar 08:30; ready since Fri 7 Mar 15:15, when Polish and finish pair finished',
    )
  })

  // The polishing lathe is serviced Mon 3 Mar 08:30–12:30.
  const service = { start: at(0, 8, 30), end: at(0, 12, 30) }
  const pendant = (downtime: boolean) =>
    makeProblem({
      now: at(0, 8, 30),
      horizon: at(13, 0),
      workshopDays: spans(WORKDAYS, HOURS),
      benches: [
        makeBench({ id: 'set', name: 'Setting bench', available: spans(WORKDAYS, HOURS) }),
        makeBench({ id: 'lathe', name: 'Polishing lathe', available: downtime ? cut(spans(WORKDAYS, HOURS), service) : spans(WORKDAYS, HOURS) }),
      ],
      people: [
        makePerson({ id: 'ines', name: 'Ines', available: spans(WORKDAYS, HOURS) }),
        makePerson({ id: 'ruth', name: 'Ruth', available: spans(WORKDAYS, HOURS) }),
      ],
      jobs: [makeJob({ id: 'j64', name: 'MG-64 Pavé pendant' })],
      operations: [
        makeOperation({ id: 'set', jobId: 'j64', name: 'Set pavé', kind: 'setting', on: ['set', 'ines', 173] }),
        makeOperation({ id: 'polish', jobId: 'j64', name: 'Final polish', kind: 'polishing', predecessors: ['set'], on: ['lathe', 'ruth', 32] }),
      ],
    })
  const lathe = { open: spans(WORKDAYS, HOURS), downtime: [{ benchId: 'lathe', ...service, reason: 'Lathe service and extraction filter change' }] }

  it('when the bench is out of use after the predecessor finishes, then the downtime is named (with the lunch break after it); with only the lunch break between, the predecessor is', () => {
    // By hand: Set pavé 08:30–11:23 (173 min). 11:23–12:30 the lathe is being serviced, 12:30–13:15 the workshop's lunch
    // break, 13:15 the lathe and Ruth are both free: the downtime held it last.
    const why = explainStarts(
      pendant(true),
      [
        { operationId: 'set', benchId: 'set', personId: 'ines', start: at(0, 8, 30), end: at(0, 11, 23) },
        { operationId: 'polish', benchId: 'lathe', personId: 'ruth', start: at(0, 13, 15), end: at(0, 13, 47) },
      ],
      lathe,
    ).get('polish')!
    expect(why.kind).toBe('working-time')
    expect(why.detail).toBe(
      'Polishing lathe is out of use until Mon 3 Mar 12:30 (Lathe service and extraction filter change), then outside workshop hours until Mon 3 Mar 13:15; ready since Mon 3 Mar 11:23, when Set pavé finished',
    )
    // Without the downtime's reason the bench is still what held it.
    const plain = explainStarts(pendant(true), [
      { operationId: 'set', benchId: 'set', personId: 'ines', start: at(0, 8, 30), end: at(0, 11, 23) },
      { operationId: 'polish', benchId: 'lathe', personId: 'ruth', start: at(0, 13, 15), end: at(0, 13, 47) },
    ]).get('polish')!
    expect(plain).toMatchObject({ kind: 'working-time', detail: expect.stringMatching(/^Polishing lathe is not available until Mon 3 Mar 12:30/) })
    // By hand: Set pavé 10:00–12:30 ends as the workshop breaks for lunch; the lathe (no service here) and Ruth are free at 13:15,
    // the first working minute after it: only the workshop's own break lies between.
    const control = explainStarts(pendant(false), [
      { operationId: 'set', benchId: 'set', personId: 'ines', start: at(0, 10), end: at(0, 12, 30) },
      { operationId: 'polish', benchId: 'lathe', personId: 'ruth', start: at(0, 13, 15), end: at(0, 13, 47) },
    ]).get('polish')!
    expect(control).toMatchObject({ kind: 'predecessor', blockerId: 'set', detail: 'waiting for Set pavé to finish until Mon 3 Mar 13:15' })
  })

  it('when the person is on leave after the predecessor finishes, then the leave is named, with the weekend before it', () => {
    // By hand: Saw outline ends Fri 7 Mar 17:00 as the workshop closes; the weekend follows; Priya is on holiday Mon 10 – Wed
    // 12 Mar while the workshop is open; Thu 13 Mar 08:30 she and the bench are back: the leave held it last.
    const holiday = { start: at(7, 0), end: at(10, 0) }
    const p = makeProblem({
      now: at(0, 8, 30),
      horizon: at(13, 0),
      workshopDays: spans(WORKDAYS, HOURS),
      benches: [makeBench({ id: 'b1', name: 'Fabrication bench', available: spans(WORKDAYS, HOURS) })],
      people: [
        makePerson({ id: 'jonah', name: 'Jonah', available: spans(WORKDAYS, HOURS) }),
        makePerson({ id: 'priya', name: 'Priya', available: cut(spans(WORKDAYS, HOURS), holiday) }),
      ],
      jobs: [makeJob({ id: 'j77', name: 'MG-77 Cuff' })],
      operations: [
        makeOperation({ id: 'saw', jobId: 'j77', name: 'Saw outline', on: ['b1', 'jonah', 60] }),
        makeOperation({ id: 'file', jobId: 'j77', name: 'File and fit', predecessors: ['saw'], on: ['b1', 'priya', 45] }),
      ],
    })
    const why = explainStarts(
      p,
      [
        { operationId: 'saw', benchId: 'b1', personId: 'jonah', start: at(4, 16), end: at(4, 17) },
        { operationId: 'file', benchId: 'b1', personId: 'priya', start: at(10, 8, 30), end: at(10, 9, 15) },
      ],
      { open: spans(WORKDAYS, HOURS), leave: [{ personId: 'priya', ...holiday, reason: 'Holiday' }] },
    ).get('file')!
    expect(why).toEqual({
      kind: 'working-time',
      detail:
        'Priya is on leave from Mon 10 Mar to Wed 12 Mar (Holiday), then outside workshop hours until Thu 13 Mar 08:30; before that the weekend; ready since Fri 7 Mar 17:00, when Saw outline finished',
    })
  })

  it('when a person is busy with another step, then the reason names that step and its job bag, not its kind', () => {
    // By hand: Ada saws MG-71's outline on bench 1 08:00–09:00 (the test's first calendar); the setting on bench 2 needs Ada
    // too and starts when she is free at 09:00.
    const p = makeProblem({
      benches: [makeBench({ id: 'b1', name: 'Fabrication bench', available: day }), makeBench({ id: 'b2', name: 'Setting bench', available: day })],
      people: [makePerson({ id: 'p1', name: 'Ada', available: day })],
      now: at(0, 8),
      jobs: [makeJob({ id: 'j71', name: 'MG-71 Pendant' }), makeJob({ id: 'j72', name: 'MG-72 Ring' })],
      operations: [
        makeOperation({ id: 'saw', jobId: 'j71', name: 'Saw outline', kind: 'sawing', on: ['b1', 'p1', 60] }),
        makeOperation({ id: 'set', jobId: 'j72', name: 'Set stone', kind: 'setting', on: ['b2', 'p1', 30] }),
      ],
    })
    const why = explainStarts(p, [
      { operationId: 'saw', benchId: 'b1', personId: 'p1', start: at(0, 8), end: at(0, 9) },
      { operationId: 'set', benchId: 'b2', personId: 'p1', start: at(0, 9), end: at(0, 9, 30) },
    ]).get('set')!
    expect(why).toMatchObject({ kind: 'person', blockerId: 'saw', detail: 'waiting for Ada (busy with Saw outline for MG-71 Pendant) until Mon 3 Mar 09:00' })
    expect(why.detail).not.toContain('sawing')
  })
})

describe('start reasons of outside work', () => {
  // The workshop's days as the server counts them for outside work: whole days Mon–Fri (builders' origin Mon 3 Mar 2025).
  const wholeDays = WORKDAYS.map((d) => ({ start: at(d, 0), end: at(d + 1, 0) }))
  const casting = (now: number) =>
    makeProblem({
      now,
      horizon: at(13, 0),
      workshopDays: wholeDays,
      benches: [makeBench({ id: 'b1', name: 'Fabrication bench', available: spans(WORKDAYS, HOURS) })],
      people: [makePerson({ id: 'p1', name: 'Jonah', available: spans(WORKDAYS, HOURS) })],
      jobs: [makeJob({ id: 'j65', name: 'MG-65 Signet', release: now })],
      operations: [
        makeOperation({ id: 'wax', jobId: 'j65', name: 'Carve wax', done: true, finishedAt: at(4, 15) }),
        makeOperation({ id: 'cast', jobId: 'j65', name: 'Cast (caster)', kind: 'casting', predecessors: ['wax'], outsideWorkingDays: 5 }),
      ],
    })
  // Planned at Fri 7 Mar 22:21 to go out at once (the workshop's day counts whole for outside work); five working days from
  // then are Mon 10 – Fri 14 Mar, back at the end of Friday 14 Mar (Sat 15 Mar 00:00).
  const plan = [{ operationId: 'cast', benchId: null, personId: null, start: at(4, 22, 21), end: at(12, 0) }]

  it('when the plan is read a few minutes after it was made, then the casting goes out as soon as planning allowed, with its days out', () => {
    // By hand: Carve wax finished Fri 15:00; nothing held the casting after that but the moment of planning, 22:21 (the board
    // is read at 22:30: that moment has passed, and it is the plan's first start).
    const why = explainStarts(casting(at(4, 22, 30)), plan).get('cast')!
    expect(why.kind).toBe('now')
    expect(why.detail).toBe(
      'goes out as soon as planning allows (Fri 7 Mar 22:21); ready since Fri 7 Mar 15:00, when Carve wax finished; out for 5 working days, back by the end of Fri 14 Mar',
    )
  })

  it('when the casting is planned on a Saturday, then it goes out at opening time on Monday, never at midnight', () => {
    // By hand: planned Sat 8 Mar 10:00, the casting waits for the workshop's next day, Mon 10 Mar; whole days for outside work
    // put its start at that day's first minute, 00:00, which is when the workshop opens that day, not a time anyone sends it.
    // Five working days Mon 10 – Fri 14 Mar, back by the end of Friday (Sat 15 Mar 00:00).
    const monday = [{ operationId: 'cast', benchId: null, personId: null, start: at(7, 0), end: at(12, 0) }]
    const why = explainStarts(casting(at(5, 10)), monday).get('cast')!
    expect(why.kind).toBe('now')
    expect(why.detail).toBe(
      'goes out as soon as planning allows (opening time on Mon 10 Mar); ready since Fri 7 Mar 15:00, when Carve wax finished; out for 5 working days, back by the end of Fri 14 Mar',
    )
    expect(why.detail).not.toContain('00:00')
  })

  it('when the casting is pinned to go out on Monday, then its reason names the day and opening time, not 00:00', () => {
    const pinned = casting(at(5, 10))
    pinned.operations[1]!.fixed = { benchId: null, personId: null, start: at(7, 0) }
    const why = explainStarts(pinned, [{ operationId: 'cast', benchId: null, personId: null, start: at(7, 0), end: at(12, 0) }]).get('cast')!
    expect(why.detail).toBe('pinned to go out at opening time on Mon 10 Mar; out for 5 working days, back by the end of Fri 14 Mar')
  })

  it('when the plan is read at the moment it was made, then the casting also says how many working days it is out', () => {
    const why = explainStarts(casting(at(4, 22, 21)), plan).get('cast')!
    expect(why.kind).toBe('now')
    expect(why.detail).toContain('out for 5 working days')
    expect(why.detail).not.toContain('outside working time')
  })
})
