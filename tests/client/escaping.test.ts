// Text people typed (pieces, step names, people's and benches' names) is shown as text: markup in it is never run or parsed.
import { describe, expect, it } from 'vitest'
import { mount } from '@vue/test-utils'
import ElementPlus from 'element-plus'
import type { BoardItem } from '@shared/schemas/board'
import BoardBarDetails from '@/components/board/BoardBarDetails.vue'
import BoardBarTooltip from '@/components/board/BoardBarTooltip.vue'

const SCRIPT = '<script>alert(1)</script>'
const IMG = '<img src=x onerror=alert(1)>'
const SQL = "'; drop table orders; --"

const item: BoardItem = {
  id: 7,
  jobBagId: 3,
  jobBagNumber: 'WF-1042-1',
  piece: `${IMG} signet`,
  orderId: 2,
  orderNumber: `${SQL}`,
  customerName: `${SCRIPT} Ltd`,
  name: SCRIPT,
  kind: 'setting',
  kindName: 'Stone setting',
  color: '#3f7f8c',
  hazards: [],
  outside: false,
  status: 'ready',
  benchId: 1,
  personId: 4,
  start: '2026-03-02T09:00:00Z',
  end: '2026-03-02T10:00:00Z',
  pinned: false,
  version: 1,
  estimateMinutes: 60,
  requiredLevel: 1,
  reason: { kind: 'person', detail: `waiting for ${IMG}` },
  late: false,
  lateJob: false,
  planned: null,
  actual: null,
}
const benchName = new Map([[1, `<b onmouseover=alert(1)>Setting bench A</b>`]])
const personName = new Map([[4, `Ines ${SCRIPT}`]])

function expectInert(html: string, root: Element) {
  // No element was made from the typed text: no script, no img, no bold from a bench's name.
  expect(root.querySelectorAll('script, img, b[onmouseover]')).toHaveLength(0)
  // The literal text is there, escaped in the markup.
  expect(html).toContain('&lt;script&gt;alert(1)&lt;/script&gt;')
  expect(html).toContain('&lt;img src=x onerror=alert(1)&gt;')
}

describe('typed text on the board', () => {
  it("when a bar's step, piece, reason, bench and person hold HTML, then the details panel shows them as text", () => {
    const w = mount(BoardBarDetails, {
      props: { item, benchName, personName, timeZone: 'Europe/London', canEdit: true, pinning: false },
      global: { plugins: [ElementPlus] },
    })
    const text = w.text()
    expect(text).toContain(SCRIPT)
    expect(text).toContain(`${IMG} signet`)
    expect(text).toContain(SQL)
    expect(text).toContain('<b onmouseover=alert(1)>Setting bench A</b>')
    expect(text).toContain(`Ines ${SCRIPT}`)
    expectInert(w.html(), w.element)
  })

  it('when the same bar is hovered, then the tooltip shows the text literally as well', () => {
    const w = mount(BoardBarTooltip, {
      props: { item, rect: new DOMRect(10, 10, 100, 20), benchName, personName, timeZone: 'Europe/London' },
      global: { plugins: [ElementPlus] },
    })
    expect(w.text()).toContain(SCRIPT)
    expect(w.text()).toContain(`${IMG} signet`)
    expectInert(w.html(), w.element)
  })
})
