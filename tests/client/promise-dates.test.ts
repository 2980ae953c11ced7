// The promise check's answer in words: the plan's dates on the estimates, the range with how long work has really taken,
// the one sentence when the estimates run short, the date quoted by default, and the band's labels kept apart.
import { describe, expect, it } from 'vitest'
import { mount } from '@vue/test-utils'
import { createPinia } from 'pinia'
import type { PromiseCheckResult } from '@shared/schemas/promise'
import PromiseResultCard from '@/components/promise/PromiseResultCard.vue'
import { estimateGapSentence, estimateOverrun, labelWidthPx, placeBandLabels, suggestedDate } from '@/lib/promise-dates'

const day = (d: string) => d
/** A ring on Thursday 3 Dec 2026: three bench steps and casting outside; the plan says Thu 10 Dec, the range Tue 15 / Tue 15 / Wed 16 Dec. */
const answer = (over: Partial<PromiseCheckResult> = {}): PromiseCheckResult => ({
  now: '2026-12-03T10:00:00.000Z',
  timeZone: 'Europe/London',
  basis: 'live-plan',
  basisNote: 'Measured against the live plan; current work keeps its times.',
  routing: { id: 1, name: 'Cluster ring' },
  operations: [
    { key: 'saw', name: 'Saw and file', kind: 'saw', minutes: 120, outsideDays: 0 },
    { key: 'cast', name: 'Casting', kind: 'cast', minutes: 0, outsideDays: 5 },
    { key: 'set', name: 'Set stones', kind: 'set', minutes: 300, outsideDays: 0 },
    { key: 'pol', name: 'Polish', kind: 'pol', minutes: 60, outsideDays: 0 },
  ],
  fixedPlan: { at: '2026-12-10T14:30:00.000Z', date: '2026-12-10', feasible: true },
  replanned: { at: '2026-12-10T11:00:00.000Z', date: '2026-12-10', delayedJobBags: 0 },
  wanted: null,
  range: {
    runs: 500,
    seed: 1,
    method: 'Walked through the plan.',
    assumption: 'Log-normal where history is thin.',
    p50: { at: '2026-12-15T10:00:00.000Z', date: '2026-12-15' },
    p80: { at: '2026-12-15T15:00:00.000Z', date: '2026-12-15' },
    p95: { at: '2026-12-16T12:00:00.000Z', date: '2026-12-16' },
    quantileMinutes: { p50: 1, p80: 2, p95: 3 },
    kinds: [
      { kind: 'saw', source: 'history', samples: 40, p10: 0.9, p50: 1.1, p90: 1.5 },
      { kind: 'cast', source: 'history', samples: 20, p10: 0.8, p50: 1.0, p90: 1.4 },
      { kind: 'set', source: 'history', samples: 30, p10: 0.95, p50: 1.2, p90: 1.6 },
      { kind: 'pol', source: 'history', samples: 25, p10: 0.9, p50: 1.1, p90: 1.3 },
    ],
  },
  elapsedMs: 12,
  ...over,
})

describe('promise dates in words', () => {
  it('when the bench steps run 10 %, 20 % and 10 % over, then the estimates are short by their minutes-weighted 16 %', () => {
    // Hand-worked: (120 × 1.10 + 300 × 1.20 + 60 × 1.10) ÷ (120 + 300 + 60) = (132 + 360 + 66) ÷ 480 = 558 ÷ 480 = 1.1625.
    // Casting is outside work and the piece has bench work, so it is left out of the weighting.
    expect(estimateOverrun(answer())).toBeCloseTo(0.1625, 10)
  })

  it('when a piece has only outside work, then its overrun is weighted by working days', () => {
    // Hand-worked: casting 5 days at 1.0 and hallmarking 3 days at 1.4 → (5 + 4.2) ÷ 8 = 1.15.
    const a = answer()
    const r = answer({
      operations: [
        { key: 'cast', name: 'Casting', kind: 'cast', minutes: 0, outsideDays: 5 },
        { key: 'hm', name: 'Hallmarking', kind: 'hm', minutes: 0, outsideDays: 3 },
      ],
      range: { ...a.range!, kinds: [a.range!.kinds[1]!, { kind: 'hm', source: 'history', samples: 9, p10: 1, p50: 1.4, p90: 2 }] },
    })
    expect(estimateOverrun(r)).toBeCloseTo(0.15, 10)
  })

  it('when the plan date is earlier than the even chance, then one sentence says the estimates are usually short and by how much', () => {
    expect(estimateGapSentence(answer(), day)).toBe(
      "The estimates are usually short here: work of these kinds has really taken about 16 % longer than estimated, and a step that runs over can miss its gap in the plan and wait for the next, so the plan's date (2026-12-10) is earlier than an even chance (2026-12-15).",
    )
  })

  it('when the plan date is the even-chance date, then there is no sentence', () => {
    const a = answer()
    expect(estimateGapSentence(answer({ range: { ...a.range!, p50: { at: '2026-12-10T16:00:00.000Z', date: '2026-12-10' } } }), day)).toBeNull()
  })

  it('when P80 is later than the plan date, then P80 is quoted by default; without a range, the plan date', () => {
    expect(suggestedDate(answer()).date).toBe('2026-12-15')
    expect(suggestedDate(answer()).from).toMatch(/P80/)
    expect(suggestedDate(answer({ range: null }))).toEqual({ date: '2026-12-10', from: 'fits into the current plan, on the estimates' })
  })

  it('when the card shows the answer, then the plan dates say "on the estimates", the range "how long work has really taken", and the quoted date is named', () => {
    const text = mount(PromiseResultCard, { props: { result: answer() }, global: { plugins: [createPinia()] } }).text()
    expect(text).toContain('Fits into the current plan, on the estimates')
    expect(text).toContain('If everything were re-planned, on the estimates')
    expect(text).toContain('With how long work has really taken')
    expect(text).toContain(
      "about 16 % longer than estimated, and a step that runs over can miss its gap in the plan and wait for the next, so the plan's date (Thu 10 Dec 2026) is earlier than an even chance (Tue 15 Dec 2026).",
    )
    expect(text).toMatch(/Quoted to the customer by default: Tue 15 Dec 2026 \(safe to promise \(P80\)/)
  })
})

describe('range band labels', () => {
  it('when P50 and P80 are 4 px apart and the plan mark is left of them, then P80 goes up a row and the rest stay on the first', () => {
    // Hand-worked on a 400 px track: widths 16 × 6.5 + 4 = 108 px ("plan (estimates)"), 3 × 6.5 + 4 → 24 px ("P50").
    // plan at 40 % → tick 160, spans 106–214 (row 0); P50 at 60 % → 228–252, clears 214 + 6 (row 0);
    // P80 at 61 % → 232–256 overlaps P50 (row 1); P95 at 70 % → 268–292 clears P50's 252 + 6 (row 0).
    expect(labelWidthPx('plan (estimates)')).toBe(108)
    expect(labelWidthPx('P50')).toBe(24)
    const placed = placeBandLabels(
      [
        { label: 'P50', x: 60 },
        { label: 'P80', x: 61 },
        { label: 'P95', x: 70 },
        { label: 'plan (estimates)', x: 40 },
      ],
      400,
    )
    expect(placed.map((m) => [m.label, m.row, m.offsetPx])).toEqual([
      ['plan (estimates)', 0, -54],
      ['P50', 0, -12],
      ['P80', 1, -12],
      ['P95', 0, -12],
    ])
  })

  it('when a label sits at either end of the track, then it is moved inward to stay on the track', () => {
    // 400 px: the plan label at 0 % starts at its tick (offset 0); at 100 % it ends at 400 px, so it starts at 292 (offset −108).
    expect(placeBandLabels([{ label: 'plan (estimates)', x: 0 }], 400)[0]!.offsetPx).toBe(0)
    expect(placeBandLabels([{ label: 'plan (estimates)', x: 100 }], 400)[0]!.offsetPx).toBe(-108)
  })

  it('when the plan mark falls between P50 and P95 on a narrow track, then no two labels in a row overlap', () => {
    const placed = placeBandLabels(
      [
        { label: 'P50', x: 50 },
        { label: 'plan (estimates)', x: 55 },
        { label: 'P80', x: 58 },
        { label: 'P95', x: 66 },
      ],
      300,
    )
    for (const a of placed)
      for (const b of placed) {
        if (a === b || a.row !== b.row) continue
        const [al, bl] = [(a.x / 100) * 300 + a.offsetPx, (b.x / 100) * 300 + b.offsetPx]
        expect(al + labelWidthPx(a.label) <= bl || bl + labelWidthPx(b.label) <= al, `${a.label} / ${b.label}`).toBe(true)
      }
  })
})
