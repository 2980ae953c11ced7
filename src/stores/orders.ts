// Orders: the current page of the server-side search, and taking or changing an order.
import { defineStore } from 'pinia'
import { reactive, ref } from 'vue'
import type { OrderInput, OrderSummary, OrderUpdate } from '@shared/schemas/order'
import * as ordersApi from '@/api/orders'
import { useLoading } from '@/composables/use-loading'

/** Orders still in the workshop's hands. */
export const IN_WORKSHOP = 'quoted,open,in-work,ready'

export const useOrdersStore = defineStore('orders', () => {
  /** Rows of the current page. */
  const items = ref<OrderSummary[]>([])
  /** Matches over all pages. */
  const total = ref(0)
  /** Search, status filter (statuses separated by commas, '' for all), sort and page sent to the server. */
  const query = reactive<{ q: string; status: string; page: number; pageSize: number; sort: string; order: 'asc' | 'desc' }>({
    q: '',
    status: IN_WORKSHOP,
    page: 1,
    pageSize: 20,
    sort: 'due',
    order: 'asc',
  })
  const { loading, error, track } = useLoading()
  /** Live reloads under way: the page is being brought up to date in place (no loading mask over rows already shown). */
  const refreshing = ref(0)

  /** Asks for the page of the current query; an answer to an older query that arrives late is not shown. */
  async function load() {
    const params = { ...query, status: query.status || undefined }
    await track(() => ordersApi.listOrders(params), {
      key: JSON.stringify(params),
      apply: (page) => {
        items.value = page.items
        total.value = page.total
      },
    })
  }
  /** Reloads the page shown after a live change (the plan, an order), keeping the rows on screen while it asks. */
  async function refresh() {
    refreshing.value++
    try {
      await load()
    } finally {
      refreshing.value--
    }
  }
  async function create(input: OrderInput) {
    const o = await ordersApi.createOrder(input)
    await load()
    return o
  }
  async function update(id: number, input: OrderUpdate) {
    const o = await ordersApi.updateOrder(id, input)
    const i = items.value.findIndex((x) => x.id === id)
    if (i >= 0)
      items.value.splice(i, 1, {
        ...items.value[i]!,
        title: o.title,
        dueDate: o.dueDate,
        promisedDate: o.promisedDate,
        priority: o.priority,
        status: o.status,
        priceQuotedMinor: o.priceQuotedMinor,
        currency: o.currency,
        version: o.version,
      })
    return o
  }

  /** The customer's own pieces an order holds (what cancelling it hands back). */
  const customersMetal = (id: number) => ordersApi.orderCustomersMetal(id)

  return { items, total, query, loading, refreshing, error, load, refresh, create, update, get: ordersApi.getOrder, customersMetal }
})
