// Week load: planned against available hours, the overload mark at the planning load, our colour ramp, week totals and the tightest rows.
import { describe, expect, it } from 'vitest'
import type { LoadRow } from '@shared/schemas/plan'
import { bottlenecks, cellLabel, heatColour, hours, loadLevel, loadRatio, percent, weekTotal } from '@/components/board/load-heat'

const row = (type: 'bench' | 'skill', id: number, name: string, cells: [string, string, number, number, number[]][]): LoadRow => ({
  type,
  id,
  name,
  cells: cells.map(([day, week, plannedMinutes, availableMinutes, operationIds]) => ({ day, week, plannedMinutes, availableMinutes, operationIds })),
})

describe('load cells', () => {
  it('when a cell is labelled, then it reads planned against available hours', () => {
    expect(cellLabel({ plannedMinutes: 390, availableMinutes: 450 })).toBe('6.5 / 7.5 h')
    expect(cellLabel({ plannedMinutes: 0, availableMinutes: 480 })).toBe('0 / 8 h')
    expect(hours(465)).toBe('7.8')
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
  it('when the load rises, then the ramp darkens, and overload turns red with white ink once deep', () => {
    const lum = (hex: string) => [1, 3, 5].reduce((t, i) => t + parseInt(hex.slice(i, i + 2), 16), 0)
    const steps = [0, 0.3, 0.6, 0.85].map((r) => heatColour(r, 0.85).bg)
    for (let i = 1; i < steps.length; i++) expect(lum(steps[i]!)).toBeLessThan(lum(steps[i - 1]!))
    const over = heatColour(1.25, 0.85)
    expect(over.bg).toBe('#a8473a')
    expect(over.ink).toBe('#ffffff')
    expect(heatColour(null, 0.85).bg).toBe('#f1efeb')
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
