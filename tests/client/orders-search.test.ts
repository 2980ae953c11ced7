// Orders search: the page shown is always the page of the query typed last, whatever order the server's answers come back in.
import { beforeEach, describe, expect, it, vi } from 'vitest'
import { createPinia, setActivePinia } from 'pinia'

const api = vi.hoisted(() => ({ listOrders: vi.fn(), createOrder: vi.fn(), updateOrder: vi.fn(), getOrder: vi.fn() }))
vi.mock('@/api/orders', () => api)
const { useOrdersStore } = await import('@/stores/orders')

/** A server answer the test releases by hand. */
function deferred<T>() {
  let resolve!: (v: T) => void
  const promise = new Promise<T>((r) => {
    resolve = r
  })
  return { promise, resolve }
}
const page = (q: string, total: number) => ({ items: [{ id: total, number: `MG26-${q}`, title: q }], total })

beforeEach(() => {
  setActivePinia(createPinia())
  api.listOrders.mockReset()
})

describe('orders search', () => {
  it("when the query changes while the first search is still out and the old answer arrives last, then the new query's page stays", async () => {
    const first = deferred<ReturnType<typeof page>>(),
      second = deferred<ReturnType<typeof page>>()
    api.listOrders.mockReturnValueOnce(first.promise).mockReturnValueOnce(second.promise)
    const store = useOrdersStore()
    store.query.q = 'ring'
    const a = store.load()
    store.query.q = 'ring bezel'
    const b = store.load()
    expect(api.listOrders).toHaveBeenCalledTimes(2)
    expect(api.listOrders.mock.calls[1]![0]).toMatchObject({ q: 'ring bezel' })
    second.resolve(page('ring bezel', 1))
    await b
    first.resolve(page('ring', 40))
    await a
    expect(store.items.map((o) => o.title)).toEqual(['ring bezel'])
    expect(store.total).toBe(1)
    expect(store.loading).toBe(false)
  })

  it("when the answers come back in order, then the last query's page is shown", async () => {
    const first = deferred<ReturnType<typeof page>>(),
      second = deferred<ReturnType<typeof page>>()
    api.listOrders.mockReturnValueOnce(first.promise).mockReturnValueOnce(second.promise)
    const store = useOrdersStore()
    store.query.q = 'pendant'
    const a = store.load()
    store.query.q = 'pendant chain'
    const b = store.load()
    first.resolve(page('pendant', 12))
    await a
    expect(store.loading).toBe(true)
    second.resolve(page('pendant chain', 3))
    await b
    expect(store.items.map((o) => o.title)).toEqual(['pendant chain'])
    expect(store.total).toBe(3)
  })

  it('when the same search is asked twice while it runs, then the server is asked once', async () => {
    const only = deferred<ReturnType<typeof page>>()
    api.listOrders.mockReturnValueOnce(only.promise)
    const store = useOrdersStore()
    store.query.q = 'brooch'
    const a = store.load(),
      b = store.load()
    only.resolve(page('brooch', 2))
    await Promise.all([a, b])
    expect(api.listOrders).toHaveBeenCalledTimes(1)
    expect(store.total).toBe(2)
  })
})
