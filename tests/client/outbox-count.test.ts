// The Sent e-mail screen counts its messages in plain English: "1 message", "2 messages".
import { afterEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount, type VueWrapper } from '@vue/test-utils'
import { createPinia } from 'pinia'
import ElementPlus from 'element-plus'

const page = { total: 1 }
vi.mock('@/api/outbox', () => ({
  listOutbox: vi.fn(async () => ({ items: [], total: page.total, page: 1, pageSize: 50 })),
  getOutboxMessage: vi.fn(),
  sendAtRiskDigest: vi.fn(),
}))
vi.mock('@/api/workshop', () => ({ getWorkshop: vi.fn(async () => Promise.reject(new Error('not here'))), listClosures: vi.fn(async () => []) }))
vi.stubGlobal('ElMessage', Object.assign(vi.fn(), { success: vi.fn(), error: vi.fn() }))
const { default: OutboxView } = await import('@/views/OutboxView.vue')

let w: VueWrapper | undefined
afterEach(() => {
  w?.unmount()
  w = undefined
})

async function countShown(total: number) {
  page.total = total
  w = mount(OutboxView, { global: { plugins: [ElementPlus, createPinia()], stubs: { RouterLink: true } } })
  await flushPromises()
  return w.find('[data-test=outbox-count]').text()
}

describe('the Sent e-mail count', () => {
  it('when one message was sent, then it reads "1 message"', async () => {
    expect(await countShown(1)).toBe('1 message')
  })

  it('when none or two were sent, then it reads "0 messages" and "2 messages"', async () => {
    expect(await countShown(0)).toBe('0 messages')
    w!.unmount()
    expect(await countShown(2)).toBe('2 messages')
  })
})
