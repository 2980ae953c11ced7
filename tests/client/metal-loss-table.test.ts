// The owner's metal loss table: weights to the milligram, so each row's issued − returned is its loss as printed (and in the CSV).
import { describe, expect, it, vi } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createPinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { LossRow, LossTable } from '@shared/schemas/metal'
import { lossCsv } from '@/components/metal/metal-format'

// Hand-worked: 125.874 g out, 124.529 g back → 1.345 g lost; 1.345 / 125.874 = 1.07 % → 1.1 %; fine 18 ct: 1.345 × 0.75 = 1.009 g.
const priya: LossRow = {
  key: '7',
  label: 'Priya Nair',
  n: 4,
  issuedG: 125.874,
  returnedG: 124.529,
  lossG: 1.345,
  lossPct: 1.1,
  lossFineG: 1.009,
  overTolerance: 0,
}
const table: LossTable = { groupBy: 'person', filter: {}, rows: [priya], total: { ...priya, key: 'total', label: 'Total' }, atBench: 0, toleranceNote: '' }
vi.mock('@/api/metal', () => ({ getLosses: vi.fn(async () => table) }))
const { default: MetalLossTable } = await import('@/components/metal/MetalLossTable.vue')

describe('MetalLossTable: loss by person', () => {
  it('when Priya had 125.874 g out and 124.529 g back, then the row reads 125.874 g, 124.529 g and a loss of 1.345 g', async () => {
    const w = mount(MetalLossTable, { global: { plugins: [createPinia(), ElementPlus] } })
    await flushPromises()
    const row = w.findAll('[data-test=loss-table] tbody tr')[0]!
    const cells = row.findAll('td').map((c) => c.text())
    expect(cells.slice(0, 5)).toEqual(['Priya Nair', '4', '125.874 g', '124.529 g', '1.345 g'])
  })

  it('when the table is downloaded, then the CSV keeps the milligrams too', () => {
    const lines = lossCsv('person', [priya], null).split('\r\n')
    expect(lines[1]).toBe('Priya Nair,4,125.874,124.529,1.345,1.1,1.009,0')
  })

  it('when a loss is a whole per cent, then the CSV writes it with its decimal like every other row (1.0, not 1)', () => {
    // Hand-worked: 50.000 g out, 49.500 g back → 0.500 g lost, 1.0 %; fine 18 ct: 0.375 g.
    const even: LossRow = { ...priya, label: 'Total', n: 2, issuedG: 50, returnedG: 49.5, lossG: 0.5, lossPct: 1, lossFineG: 0.375 }
    expect(lossCsv('person', [], even).split('\r\n')[1]).toBe('Total,2,50.000,49.500,0.500,1.0,0.375,0')
  })
})
