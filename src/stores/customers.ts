// Customers: the current page of the server-side search, and the query that produced it.
import { defineStore } from 'pinia'
import { reactive, ref } from 'vue'
import type { Customer, CustomerInput } from '@shared/schemas/customer'
import * as customersApi from '@/api/customers'
import { useLoading } from '@/composables/use-loading'

export const useCustomersStore = defineStore('customers', () => {
  /** Rows of the current page. */
  const items = ref<Customer[]>([])
  /** Matches over all pages. */
  const total = ref(0)
  /** Search, sort and page sent to the server. */
  const query = reactive<Required<Omit<customersApi.ListParams, 'sort'>> & { sort: string | undefined }>({
    q: '',
    page: 1,
    pageSize: 20,
    sort: 'name',
    order: 'asc',
  })
  const { loading, error, track } = useLoading()

  /** Asks for the page of the current query; an answer to an older query that arrives late is not shown. */
  async function load() {
    const params = { ...query }
    await track(() => customersApi.listCustomers(params), {
      key: JSON.stringify(params),
      apply: (page) => {
        items.value = page.items
        total.value = page.total
      },
    })
  }
  /** Finds customers by name for pickers (does not touch the list). */
  const search = async (q: string) => (await customersApi.listCustomers({ q, pageSize: 20 })).items
  async function create(input: CustomerInput) {
    const c = await customersApi.createCustomer(input)
    await load()
    return c
  }
  async function update(id: number, input: Partial<CustomerInput> & { version: number }) {
    const c = await customersApi.updateCustomer(id, input)
    const i = items.value.findIndex((x) => x.id === id)
    if (i >= 0) items.value.splice(i, 1, { ...items.value[i]!, ...c })
    return c
  }

  return { items, total, query, loading, error, load, search, create, update }
})
