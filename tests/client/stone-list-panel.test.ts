// The stone list of a job bag: with no list of its own, it says what the order's piece figures give instead of "no stones";
// a figure typed beyond the shared schema's limits (stoneLineInput) stays as typed and is refused under its field, nothing is added.
import { afterEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount, type VueWrapper } from '@vue/test-utils'
import { createPinia } from 'pinia'
import ElementPlus from 'element-plus'

const api = vi.hoisted(() => ({ addStoneLine: vi.fn() }))
vi.mock('@/api/stones', () => ({
  getStones: vi.fn(async () => ({
    lines: [],
    totals: { lines: 0, stonesPerPiece: 0, caratsPerPiece: 0 },
    customerStones: { lines: 0, reconciled: true, handedBack: false, problems: [] },
  })),
  addStoneLine: api.addStoneLine,
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

describe('adding stones', { timeout: 30_000 }, () => {
  let w: VueWrapper | undefined
  afterEach(() => {
    w?.unmount()
    w = undefined
    document.body.innerHTML = ''
    api.addStoneLine.mockReset()
  })
  const q = (sel: string) => document.body.querySelector<HTMLElement>(sel)
  /** Types into a number field and leaves it, as a user does. */
  async function typeInto(test: string, text: string) {
    const input = q(`[data-test=${test}] input`) as HTMLInputElement
    input.value = text
    input.dispatchEvent(new Event('input'))
    input.dispatchEvent(new Event('change'))
    input.dispatchEvent(new FocusEvent('blur'))
    await flushPromises()
    return input
  }
  const errorUnder = (test: string) => q(`[data-test=${test}]`)?.closest('.el-form-item')?.querySelector('.el-form-item__error')?.textContent?.trim() ?? null

  it('when 2400 stones of 35 mm at 150 ct each are typed and added, then each stays as typed, is refused under its field, and nothing is added', async () => {
    w = mount(StoneListPanel, {
      props: { jobBagId: 12, role: 'manager', editable: true, ordered: null },
      attachTo: document.body,
      global: { plugins: [createPinia(), ElementPlus] },
    })
    await flushPromises()
    expect((await typeInto('stone-size', '35')).value).toBe('35.00')
    expect((await typeInto('stone-count', '2400')).value).toBe('2400')
    expect((await typeInto('stone-carat', '150')).value).toBe('150.000')
    ;(q('[data-test=stone-add]') as HTMLButtonElement).click()
    await flushPromises()
    // The reasons come in with the fields' transition.
    await new Promise((r) => setTimeout(r, 100))
    await flushPromises()
    expect(errorUnder('stone-size')).toBe('Must be at most 30 mm')
    expect(errorUnder('stone-count')).toBe('Must be at most 2000')
    expect(errorUnder('stone-carat')).toBe('Must be at most 100 ct')
    expect(api.addStoneLine).not.toHaveBeenCalled()
  })
})
