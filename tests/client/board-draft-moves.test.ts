// What a draft moves, as the draft banner and the publish confirmation word it: parts that never overlap and add up to the total.
import { describe, expect, it } from 'vitest'
import { mount } from '@vue/test-utils'
import ElementPlus from 'element-plus'
import type { PlanComparison, PlanMove, PlanVersion } from '@shared/schemas/plan'
import BoardDraftBanner from '@/components/board/BoardDraftBanner.vue'
import { barsChange, movesBreakdown } from '@/components/board/board-vis'

const at = '2026-12-07T09:00:00.000Z'
const a = (benchId: number, personId: number, start = at) => ({ operationId: 1, benchId, personId, start, end: start })
let next = 1
const move = (change: PlanMove['change']): PlanMove => ({
  operationId: next++,
  from: change.includes('new') ? null : a(1, 1),
  to: change.includes('dropped') ? null : a(2, 2),
  change,
})
const many = (n: number, change: PlanMove['change']) => Array.from({ length: n }, () => move(change))

/**
 * 122 bars by hand: 5 to another bench only (2 of them later too), 26 to another person only (10 later too), 14 to another
 * bench and person (all later too), 77 only later. Counted per kind as before, that is bench 5 + 14 = 19, person 26 + 14 = 40,
 * time 2 + 10 + 14 + 77 = 103 — 162 in all for 122 bars. Without overlap: 5 + 26 + 14 = 45 elsewhere and 77 only in time,
 * 45 + 77 = 122.
 */
const workshopMoves = [
  ...many(3, ['bench']),
  ...many(2, ['bench', 'time']),
  ...many(16, ['person']),
  ...many(10, ['person', 'time']),
  ...many(14, ['bench', 'person', 'time']),
  ...many(77, ['time']),
]

const comparison = (moves: PlanMove[]): PlanComparison => ({
  planId: 2,
  against: 'live',
  moves,
  counts: {
    bench: moves.filter((m) => m.change.includes('bench')).length,
    person: moves.filter((m) => m.change.includes('person')).length,
    time: moves.filter((m) => m.change.includes('time')).length,
    new: moves.filter((m) => m.change.includes('new')).length,
  },
  gains: { earlier: 0, later: 0, lessLate: 0, moreLate: 0 },
})

const draft = { id: 2, number: 2, status: 'draft', createdAt: at, createdByName: 'Ann', score: {} } as unknown as PlanVersion

function bannerMoves(moves: PlanMove[]) {
  const w = mount(BoardDraftBanner, {
    props: { draft, live: null, comparison: comparison(moves), viewing: false, canPlan: true, busy: false, timeZone: 'Europe/London' },
    global: { plugins: [ElementPlus] },
  })
  const text = w.find('[data-test=draft-moves]').text()
  w.unmount()
  return text
}

/** The numbers a text names after its total, each once. */
const partsOf = (text: string) => [...text.replace(/^\d+ bars? changes?:/, '').matchAll(/(\d+) (?:to|only|newly|no)/g)].map((m) => Number(m[1]))

describe('the moves of a draft', () => {
  it('when bars change bench and person and time at once, then the banner counts each bar once and the parts add up to 122', () => {
    const text = bannerMoves(workshopMoves)
    expect(text).toBe('122 bars change: 45 to another bench or person (5 another bench, 26 another person, 14 both), 77 only in time')
    expect(partsOf(text).reduce((x, y) => x + y, 0)).toBe(122)
  })

  it('when only benches change (some later too), then one part names them, with new and dropped bars apart', () => {
    const moves = [...many(2, ['bench']), ...many(1, ['bench', 'time']), ...many(4, ['new']), ...many(1, ['dropped'])]
    // 2 + 1 = 3 to another bench, 4 newly planned, 1 no longer planned: 3 + 4 + 1 = 8 bars.
    expect(bannerMoves(moves)).toBe('8 bars change: 3 to another bench, 4 newly planned, 1 no longer planned')
  })

  it('when one bar changes only in time, then it reads in the singular; with nothing moved, none', () => {
    expect(bannerMoves(many(1, ['time']))).toBe('1 bar changes: 1 only in time')
    expect(movesBreakdown([])).toBe('none')
    expect(barsChange(1)).toBe('1 bar changes')
    expect(barsChange(0)).toBe('0 bars change')
  })

  it('when every bar that moves elsewhere changes both bench and person, then it says so', () => {
    expect(movesBreakdown(many(6, ['bench', 'person']))).toBe('6 to another bench and person')
  })
})

describe('what a draft buys when it plans new work', () => {
  const buys = (gains: PlanComparison['gains']) => {
    const w = mount(BoardDraftBanner, {
      props: {
        draft,
        live: null,
        comparison: { ...comparison([move(['new'])]), gains },
        viewing: false,
        canPlan: true,
        busy: false,
        timeZone: 'Europe/London',
      },
      global: { plugins: [ElementPlus] },
    })
    const el = w.find('[data-test=draft-buys]')
    const text = el.exists() ? el.text() : null
    w.unmount()
    return text
  }

  it('when the draft plans a new piece that will be late and pushes others later, then it says the new piece first, then the rest', () => {
    // The order just taken is the one new piece; the nine pushed later are others (one of them now late).
    expect(buys({ earlier: 0, later: 9, lessLate: 0, moreLate: 1, newlyLate: 1, noLongerLate: 0, newPieces: 1, newPiecesLate: 1 })).toBe(
      'what it buys: 1 piece newly planned (late), 9 pieces later (1 newly late)',
    )
  })

  it('when the draft only plans new pieces, then it still says what it buys', () => {
    expect(buys({ earlier: 0, later: 0, lessLate: 0, moreLate: 0, newPieces: 2, newPiecesLate: 0 })).toBe('what it buys: 2 pieces newly planned')
    expect(buys({ earlier: 0, later: 0, lessLate: 0, moreLate: 0, newPieces: 3, newPiecesLate: 1 })).toBe('what it buys: 3 pieces newly planned (1 late)')
  })
})
