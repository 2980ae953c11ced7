// The job bag page's metal panel: weights to the milligram, as the loss table has them, so what went out less what came back is the loss as printed.
import { describe, expect, it, vi } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createPinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { JobBagMetal, LossFigures, MetalMovement } from '@shared/schemas/metal'

// Hand-worked, an 18 ct ring: 12.345 g out; back 11.207 g as the piece, 0.604 g scrap, 0.310 g lemel = 12.121 g;
// loss 12.345 − 12.121 = 0.224 g; 0.224 / 12.345 = 1.81 % → 1.8 %; fine at 750: 0.224 × 0.75 = 0.168 g.
// To 0.01 g the same figures read 12.35 − (11.21 + 0.60 + 0.31) = 0.23 g against a loss printed 0.22 g.
const figures: LossFigures = {
  issuedMg: 12345,
  fromCustomerMg: 0,
  pieceMg: 11207,
  scrapMg: 604,
  lemelMg: 310,
  returnedMg: 12121,
  lossMg: 224,
  lossG: 0.224,
  lossPct: 1.8,
  lossFineMg: 168,
  lossFineG: 0.168,
}
const weighing = (id: number, kind: 'issued' | 'returned', weightMg: number, form: MetalMovement['form']): MetalMovement => ({
  id,
  kind,
  alloyId: 1,
  alloyName: '18ct yellow',
  weightMg,
  weightG: weightMg / 1000,
  source: kind === 'issued' ? 'stock' : null,
  form,
  jobBagId: 5,
  operationId: 9,
  operationName: 'Solder',
  personId: 3,
  personName: 'Priya Nair',
  refiningLotId: null,
  costMinor: null,
  correctsId: null,
  reason: '',
  recordedBy: 'Priya Nair',
  recordedAt: '2026-03-02T10:00:00Z',
  clientId: null,
  effectiveMg: weightMg,
  corrections: [],
})
const account: JobBagMetal = {
  jobBagId: 5,
  number: 'MG26-0007-1',
  piece: 'Court ring',
  total: figures,
  overTolerance: false,
  byAlloy: [{ ...figures, alloyId: 1, name: '18ct yellow', fineness: 750 }],
  bySteps: [{ ...figures, operationId: 9, name: 'Solder', kindId: 2, kind: 'soldering', tolerancePct: 3, overTolerance: false, atBench: false }],
  byPerson: [{ ...figures, personId: 3, name: 'Priya Nair' }],
  hallmark: { metal: 'gold', pieceG: 11.207, thresholdG: 1, needed: true, customersPiece: false, routingHasHallmarking: true, warning: null },
  movements: [
    weighing(1, 'issued', 12345, null),
    weighing(2, 'returned', 11207, 'piece'),
    weighing(3, 'returned', 604, 'scrap'),
    weighing(4, 'returned', 310, 'lemel'),
  ],
  toleranceNote: '',
}
vi.mock('@/api/metal', () => ({ getJobBagMetal: vi.fn(async () => account) }))
const { default: JobBagMetalPanel } = await import('@/components/metal/JobBagMetalPanel.vue')

describe('JobBagMetalPanel: the job bag’s metal to the milligram', () => {
  it('when 12.345 g went out and 11.207 + 0.604 + 0.310 g came back, then the panel reads a loss of 0.224 g, and so do its step and person rows', async () => {
    const w = mount(JobBagMetalPanel, { props: { jobBagId: 5 }, global: { plugins: [createPinia(), ElementPlus] } })
    await flushPromises()
    const text = (sel: string) => w.get(`[data-test=${sel}]`).text()
    expect(text('total-issued')).toBe('12.345 g')
    expect(text('total-piece')).toBe('11.207 g')
    expect(text('total-scrap')).toBe('0.604 g')
    expect(text('total-lemel')).toBe('0.310 g')
    expect(text('total-loss')).toBe('0.224 g · 1.8 %')
    const cells = (table: string) =>
      w
        .findAll(`[data-test=${table}] tbody tr`)[0]!
        .findAll('td')
        .map((c) => c.text())
    expect(cells('metal-by-step').slice(0, 4)).toEqual(['Solder', '12.345 g', '11.207 g · 0.604 g · 0.310 g', '0.224 g'])
    expect(cells('metal-by-person').slice(0, 4)).toEqual(['Priya Nair', '12.345 g', '12.121 g', '0.224 g'])
    expect(w.findAll('[data-test=metal-movements] tbody tr').map((r) => r.findAll('td')[5]!.text())).toEqual(['12.345 g', '11.207 g', '0.604 g', '0.310 g'])
    expect(text('hallmark-note')).toContain('the piece last weighed 11.207 g')
  })
})
