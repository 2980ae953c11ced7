// Week load: planned against available hours, the overload mark at the planning load, our colour ramp, week totals and the tightest rows.
import { describe, expect, it } from 'vitest'
import { mount } from '@vue/test-utils'
import type { LoadRow, WeekLoad } from '@shared/schemas/plan'
import BoardLoadTable from '@/components/board/BoardLoadTable.vue'
import { bottlenecks, cellLabel, heatColour, hours, loadLegend, loadLevel, loadRatio, percent, weekTotal } from '@/components/board/load-heat'

const row = (type: LoadRow['type'], id: number, name: string, cells: [string, string, number, number, number[]][]): LoadRow => ({
  type,
  id,
  name,
  cells: cells.map(([day, week, plannedMinutes, availableMinutes, operationIds]) => ({ day, week, plannedMinutes, availableMinutes, operationIds })),
})

describe('load cells', () => {
  it('when a cell is labelled, then it reads planned against available hours and minutes', () => {
    expect(cellLabel({ plannedMinutes: 390, availableMinutes: 450 })).toBe('6:30 / 7:30 h')
    expect(cellLabel({ plannedMinutes: 0, availableMinutes: 480 })).toBe('0:00 / 8:00 h')
    expect(hours(465)).toBe('7:45')
    expect(hours(5)).toBe('0:05')
  })
  it('when five days of 7:45 are summed, then the week reads 38:45, the sum of the parts as shown', () => {
    // Hand-worked: 5 × 465 min = 2325 min = 38 h 45 min; in decimal hours each day would round to 7.8 and the week to 38.8.
    expect(hours(5 * 465)).toBe('38:45')
    expect(hours(443)).toBe('7:23')
  })
  it('when nothing is available, then the ratio is empty, or infinite when work is planned on no time', () => {
    expect(loadRatio(0, 0)).toBeNull()
    expect(loadRatio(30, 0)).toBe(Infinity)
    expect(percent(loadRatio(30, 0))).toBe('no time')
    expect(percent(loadRatio(393, 465))).toBe('85 %')
  })
  it('when the share passes the planning load, then the cell is overloaded; past 100 % it is beyond capacity', () => {
    expect(loadLevel(null, 0.85)).toBe('closed')
    expect(loadLevel(0, 0.85)).toBe('idle')
    expect(loadLevel(0.2, 0.85)).toBe('light')
    expect(loadLevel(0.5, 0.85)).toBe('steady')
    expect(loadLevel(0.8, 0.85)).toBe('near')
    expect(loadLevel(0.85, 0.85)).toBe('near')
    expect(loadLevel(0.86, 0.85)).toBe('over')
    expect(loadLevel(1.01, 0.85)).toBe('beyond')
  })
  it('when the load rises to the planning load, then the ramp darkens', () => {
    const lum = (hex: string) => [1, 3, 5].reduce((t, i) => t + parseInt(hex.slice(i, i + 2), 16), 0)
    const steps = [0, 0.3, 0.6, 0.85].map((r) => heatColour(r, 0.85).bg)
    for (let i = 1; i < steps.length; i++) expect(lum(steps[i]!)).toBeLessThan(lum(steps[i - 1]!))
    expect(heatColour(null, 0.85).bg).toBe('#f1efeb')
  })
  it('when a cell is above the planning load but within the hours, then it is amber with dark ink, not the over-capacity red', () => {
    // 443 of 465 min = 95.3 %: above 85 %, below 100 %.
    expect(loadLevel(443 / 465, 0.85)).toBe('over')
    expect(heatColour(443 / 465, 0.85)).toEqual({ bg: '#e6ad7c', ink: '#3a1f17' })
    expect(heatColour(0.86, 0.85)).toEqual(heatColour(1, 0.85))
  })
  it('when more is planned than there are hours, then it is red with white ink, deepening to 125 %', () => {
    expect(loadLevel(466 / 465, 0.85)).toBe('beyond')
    // Hand-worked: halfway (112.5 %) between #b4513f and #a8473a: (180+168)/2 = 174 = ae, (81+71)/2 = 76 = 4c, (63+58)/2 = 60.5 → 61 = 3d.
    expect(heatColour(1.125, 0.85)).toEqual({ bg: '#ae4c3d', ink: '#ffffff' })
    expect(heatColour(1.25, 0.85).bg).toBe('#a8473a')
    expect(heatColour(3, 0.85).bg).toBe('#a8473a')
    expect(heatColour(Infinity, 0.85).ink).toBe('#ffffff')
  })
  it("when the legend is read, then each band says what it means, its colour is the cells' colour, and only over 100 % carries the flag", () => {
    const legend = loadLegend(0.85)
    expect(legend.map((l) => l.label)).toEqual([
      'light',
      'filling up',
      'at the planning load (85 %)',
      'above the planning load (85–100 %)',
      'more than the hours available (over 100 %)',
    ])
    expect(legend.map((l) => l.flag)).toEqual([false, false, false, false, true])
    expect(legend[3]!.bg).toBe(heatColour(443 / 465, 0.85).bg)
    expect(legend[4]!.bg).not.toBe(legend[3]!.bg)
    // A planning load of 100 % leaves no band between it and the hours available.
    expect(loadLegend(1).map((l) => l.label)).not.toContain('above the planning load (100–100 %)')
  })
})

describe('weeks and bottlenecks', () => {
  const setting = row('skill', 6, 'Stone setting', [
    ['2026-12-07', '2026-W50', 450, 465, [1, 2]],
    ['2026-12-08', '2026-W50', 465, 465, [2, 3]],
    ['2026-12-14', '2026-W51', 100, 465, [4]],
  ])
  const polish = row('bench', 7, 'Polishing station', [
    ['2026-12-07', '2026-W50', 200, 465, [5]],
    ['2026-12-08', '2026-W50', 100, 465, [6]],
  ])
  it('when a week is summed, then hours add up and operations are listed once', () => {
    expect(weekTotal(setting, '2026-W50')).toEqual({ plannedMinutes: 915, availableMinutes: 930, operationIds: [1, 2, 3] })
  })
  it('when a week is summed from a day on, then the days before it are left out', () => {
    expect(weekTotal(setting, '2026-W50', '2026-12-08')).toEqual({ plannedMinutes: 465, availableMinutes: 465, operationIds: [2, 3] })
  })
  it('when rows pass the planning load in some week, then the fullest comes first with that week', () => {
    const b = bottlenecks({
      rows: [polish, setting],
      weeks: [
        { week: '2026-W50', days: [] },
        { week: '2026-W51', days: [] },
      ],
      planningLoad: 0.85,
    })
    expect(b).toHaveLength(1)
    expect(b[0]).toMatchObject({ week: '2026-W50' })
    expect(b[0]!.row.name).toBe('Stone setting')
    expect(b[0]!.ratio).toBeCloseTo(915 / 930, 6)
  })
})

describe('the load table on Friday of the current week', () => {
  // Friday 4 Dec 2026 in W49: 7:45 available each weekday, 3:30 planned on Friday only; Thursday's cell was 443 of 465 min.
  const days = ['2026-11-30', '2026-12-01', '2026-12-02', '2026-12-03', '2026-12-04', '2026-12-05', '2026-12-06']
  const avail = [465, 465, 465, 465, 465, 0, 0]
  const planned = [0, 0, 0, 443, 210, 0, 0]
  const load: WeekLoad = {
    from: days[0]!,
    to: days[6]!,
    days,
    weeks: [{ week: '2026-W49', days }],
    // The server counts today from 14:00 (London is on GMT in December).
    countedFrom: '2026-12-04T14:00:00.000Z',
    rows: [
      {
        type: 'bench',
        id: 3,
        name: 'Setting bench',
        cells: days.map((day, i) => ({ day, week: '2026-W49', plannedMinutes: planned[i]!, availableMinutes: avail[i]!, operationIds: planned[i] ? [i] : [] })),
      },
    ],
    planningLoad: 0.85,
  }
  const table = () =>
    mount(BoardLoadTable, { props: { load, items: new Map(), benchName: new Map(), personName: new Map(), timeZone: 'Europe/London', today: '2026-12-04' } })

  it('when only Friday is left, then the week total counts Friday alone and says it is the rest of the week', () => {
    const w = table()
    const total = w.get('[data-test=load-cell-bench-3-2026-W49-total]')
    // Hand-worked: Friday alone, 210 of 465 min = 3:30 / 7:45 h (not 3:30 against Monday–Friday's 38:45).
    expect(total.text()).toBe('3:30 / 7:45 h')
    expect(w.text()).toContain('rest of week, from Fri 14:00')
    expect(w.text()).toContain('3 Dec · past')
  })
  it('when the server counts today from 14:00, then the day and the week total say so and the others do not', () => {
    const w = table()
    expect(w.text()).toContain('4 Dec · from 14:00')
    expect(w.text()).not.toContain('3 Dec · from')
    expect(w.get('[data-test=load-cell-bench-3-2026-12-04]').attributes('title')).toContain('Fri 4 Dec from 14:00 (the hours already past left out)')
    expect(w.get('[data-test=load-cell-bench-3-2026-W49-total]').attributes('title')).toContain('W49 from Fri 4 Dec 14:00')
  })
  it('when none of today has passed yet (before opening), then no day or total says from what time it counts', () => {
    const w = mount(BoardLoadTable, {
      props: {
        load: { ...load, countedFrom: null },
        items: new Map(),
        benchName: new Map(),
        personName: new Map(),
        timeZone: 'Europe/London',
        today: '2026-12-04',
      },
    })
    expect(w.text()).toContain('4 Dec')
    expect(w.text()).not.toContain('· from')
    expect(w.text()).toContain('rest of week, from Fri')
    expect(w.text()).not.toContain('from Fri 0')
    expect(w.get('[data-test=load-cell-bench-3-2026-12-04]').attributes('title')).not.toContain('already past')
  })
  it('when Monday to Thursday are past, then their cells show no hours, as the week total leaves them out', () => {
    const w = table()
    for (const day of ['2026-11-30', '2026-12-01', '2026-12-02', '2026-12-03']) {
      const cell = w.get(`[data-test=load-cell-bench-3-${day}]`)
      // Past: neither the 7:45 h once available nor Thursday's 7:23 h planned count any more; the total is Friday's 3:30 / 7:45 h alone.
      expect(cell.text(), day).toBe('—')
      expect(cell.classes(), day).toContain('load__cell--past')
      expect(cell.attributes('title'), day).toContain('past, not counted')
    }
    expect(w.get('[data-test=load-cell-bench-3-2026-12-04]').text()).toBe('3:30 / 7:45 h')
  })
  it('when a whole week is past, then its total shows no hours, says it is past, and it is not named among the tightest', async () => {
    // W48 (23–29 Nov 2026) is over before Friday 4 Dec: 430 of 465 min on each weekday would be 2150 of 2325 min = 92.5 %,
    // above the 85 % planning load.
    const w48 = ['2026-11-23', '2026-11-24', '2026-11-25', '2026-11-26', '2026-11-27', '2026-11-28', '2026-11-29']
    const past = w48.map((day, i) => ({
      day,
      week: '2026-W48',
      plannedMinutes: i < 5 ? 430 : 0,
      availableMinutes: i < 5 ? 465 : 0,
      operationIds: i < 5 ? [9] : [],
    }))
    const two: WeekLoad = {
      ...load,
      from: w48[0]!,
      days: [...w48, ...days],
      weeks: [{ week: '2026-W48', days: w48 }, ...load.weeks],
      rows: [{ ...load.rows[0]!, cells: [...past, ...load.rows[0]!.cells] }],
    }
    expect(bottlenecks(two, '2026-12-04')).toEqual([])
    const w = mount(BoardLoadTable, {
      props: { load: two, items: new Map(), benchName: new Map(), personName: new Map(), timeZone: 'Europe/London', today: '2026-12-04' },
    })
    expect(w.find('[data-test=load-bottleneck]').exists()).toBe(false)
    await w.get('[data-test=load-mode]').findAll('input').at(1)!.setValue(true)
    const total = w.get('[data-test=load-cell-bench-3-2026-W48]')
    expect(total.text()).toBe('—')
    expect(total.classes()).toContain('load__cell--past')
    expect(w.text()).toContain('23 Nov–29 Nov · past')
    // W49 still counts Friday alone: 3:30 / 7:45 h.
    expect(w.get('[data-test=load-cell-bench-3-2026-W49]').text()).toBe('3:30 / 7:45 h')
  })
  it('when a day is at 95 %, then it is above the planning load without the over-capacity flag', () => {
    // Seen on Wednesday 2 Dec, before anything of Thursday has passed.
    const thu = mount(BoardLoadTable, {
      props: {
        load: { ...load, countedFrom: null },
        items: new Map(),
        benchName: new Map(),
        personName: new Map(),
        timeZone: 'Europe/London',
        today: '2026-12-02',
      },
    }).get('[data-test=load-cell-bench-3-2026-12-03]')
    expect(thu.text()).toBe('7:23 / 7:45 h')
    expect(thu.classes()).toContain('load__cell--over')
    expect(thu.classes()).not.toContain('load__cell--beyond')
    expect(thu.attributes('title')).toContain('above the planning load')
  })
})

describe('the load table with people and skills', () => {
  // Friday 11 Dec 2026 (W50), seen on Wednesday 9 Dec. Wren holds chasing and enamelling and is planned 9 h on an 8 h day
  // (two chasing steps, 41 and 42); Odile holds enamelling and has her 8 h free. The server's figures for that day: chasing 540 of
  // Wren's 480; enamelling 0 of Wren's 0 left plus Odile's 480.
  const days = ['2026-12-07', '2026-12-08', '2026-12-09', '2026-12-10', '2026-12-11', '2026-12-12', '2026-12-13']
  const only = (type: LoadRow['type'], id: number, name: string, planned: number, available: number, ids: number[]) =>
    row(
      type,
      id,
      name,
      days.map((d) => [d, '2026-W50', d === '2026-12-11' ? planned : 0, d === '2026-12-11' ? available : 0, d === '2026-12-11' ? ids : []]),
    )
  const load: WeekLoad = {
    from: days[0]!,
    to: days[6]!,
    days,
    weeks: [{ week: '2026-W50', days }],
    countedFrom: null,
    rows: [
      only('bench', 3, 'Setting bench B', 540, 480, [41, 42]),
      only('skill', 20, 'Chasing & repoussé', 540, 480, [41, 42]),
      only('skill', 21, 'Enamelling', 0, 480, []),
      only('person', 7, 'Wren Ashdown', 540, 480, [41, 42]),
      only('person', 8, 'Odile Penhale', 0, 480, []),
    ],
    planningLoad: 0.85,
  }
  const table = () =>
    mount(BoardLoadTable, { props: { load, items: new Map(), benchName: new Map(), personName: new Map(), timeZone: 'Europe/London', today: '2026-12-09' } })

  it('when people are in the load, then they have a group of their own between benches and skills, each with their own row', () => {
    const w = table()
    expect(w.findAll('.load__section-title').map((t) => t.text())).toEqual(['Benches', 'People', 'Skills'])
    expect(w.get('[data-test=load-row-person-7]').text()).toContain('Wren Ashdown')
    expect(w.get('[data-test=load-row-person-8]').text()).toContain('Odile Penhale')
    expect(w.get('thead .load__name-col').text()).toBe('Bench, person or skill')
  })

  it('when someone is planned 9 h of their 8 h, then their cell is red with the flag, says so, and they are named among the tightest', () => {
    const w = table()
    const cell = w.get('[data-test=load-cell-person-7-2026-12-11]')
    expect(cell.text()).toBe('9:00 / 8:00 h')
    // 540 / 480 = 112.5 %: beyond the hours; halfway to 125 % on the red ramp, #ae4c3d = rgb(174, 76, 61) (worked out above).
    expect(cell.classes()).toContain('load__cell--beyond')
    expect((cell.element as HTMLElement).style.background).toBe('rgb(174, 76, 61)')
    expect(cell.attributes('title')).toBe(
      'Wren Ashdown, Fri 11 Dec: 9:00 h planned of 8:00 h working time (113 %, more than the hours available), 2 operations',
    )
    expect(w.get('[data-test=load-cell-person-8-2026-12-11]').text()).toBe('0:00 / 8:00 h')
    // The week: the same 540 of 480, Friday being the only working day with figures.
    expect(w.get('[data-test=load-cell-person-7-2026-W50-total]').text()).toBe('9:00 / 8:00 h')
    expect(w.get('[data-test=load-bottleneck]').text()).toContain('Wren Ashdown 113 % in W50')
  })

  it("when a person's cell is picked, then it lists the operations planned for them that day", async () => {
    const w = table()
    await w.get('[data-test=load-cell-person-7-2026-12-11]').trigger('click')
    const picked = w.get('[data-test=load-picked]')
    expect(picked.get('h3').text()).toBe('Wren Ashdown · Friday 11 Dec · 9:00 / 8:00 h')
    expect(picked.findAll('li').map((l) => l.text())).toEqual(['Operation 41', 'Operation 42'])
  })

  it("when a skill's hours are shown, then the group and the cell say they are what its holders have left after other work", () => {
    const w = table()
    const help = w.get('[data-test=load-section-skill]').text()
    expect(help).toContain('the hours its holders have left once their work of other kinds is planned; a free hour counts under every skill its holder has')
    expect(help).not.toContain('everyone who holds it')
    expect(w.get('[data-test=load-cell-skill-21-2026-12-11]').attributes('title')).toBe(
      'Enamelling, Fri 11 Dec: 0:00 h planned of 8:00 h its holders have free of other work (0 %), 0 operations',
    )
  })
})
