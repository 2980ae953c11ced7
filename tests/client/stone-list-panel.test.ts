// The stone list of a job bag: with no list of its own, it says what the order's piece figures give instead of "no stones".
import { describe, expect, it, vi } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createPinia } from 'pinia'
import ElementPlus from 'element-plus'

vi.mock('@/api/stones', () => ({
  getStones: vi.fn(async () => ({
    lines: [],
    totals: { lines: 0, stonesPerPiece: 0, caratsPerPiece: 0 },
    customerStones: { lines: 0, reconciled: true, handedBack: false, problems: [] },
  })),
  addStoneLine: vi.fn(),
  updateStoneLine: vi.fn(),
  removeStoneLine: vi.fn(),
}))
vi.mock('@/composables/use-live', () => ({ useLiveKeys: () => undefined, useLiveShown: () => undefined }))
const { default: StoneListPanel } = await import('@/components/stones/StoneListPanel.vue')

const panel = async (ordered: { stoneCount?: number; stoneSizeMm?: number } | null) => {
  const w = mount(StoneListPanel, { props: { jobBagId: 12, role: 'manager', editable: false, ordered }, global: { plugins: [createPinia(), ElementPlus] } })
  await flushPromises()
  return w.text()
}

describe('StoneListPanel', () => {
  it('when the piece has no stone list but the order gives 6 stones of 2 mm, then it says so instead of "no stones"', async () => {
    const text = await panel({ stoneCount: 6, stoneSizeMm: 2 })
    expect(text).toContain('No stone list yet: the order gives 6 stones of 2 mm')
    expect(text).not.toContain('No stones on this piece')
  })

  it('when neither a list nor the order gives stones, then it says there are none', async () => {
    expect(await panel({ stoneCount: 0 })).toContain('No stones on this piece.')
    expect(await panel(null)).toContain('No stones on this piece.')
  })
})
