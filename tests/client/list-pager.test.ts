// Paging under a server-paged list: the page and page size belong to the list's query; a change asks the list to reload.
import { describe, expect, it } from 'vitest'
import { mount } from '@vue/test-utils'
import ElementPlus from 'element-plus'
import ListPager from '@/components/lists/ListPager.vue'

const pager = (props: Record<string, unknown>) => mount(ListPager, { props: { page: 1, pageSize: 20, total: 0, ...props }, global: { plugins: [ElementPlus] } })

describe('ListPager', () => {
  it('when 45 rows are paged 20 at a time, then it says the total and offers pages 1 to 3 (ceil(45 / 20) = 3)', () => {
    const w = pager({ total: 45 })
    expect(w.text()).toContain('Total 45')
    expect(w.findAll('.el-pager li').map((li) => li.text())).toEqual(['1', '2', '3'])
  })

  it('when the next page is asked for, then the new page is handed back and the list is asked to reload', async () => {
    const w = pager({ total: 45 })
    await w.find('button.btn-next').trigger('click')
    expect(w.emitted('update:page')?.at(-1)).toEqual([2])
    expect(w.emitted('change')).toHaveLength(1)
  })
})
