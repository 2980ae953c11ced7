// Finding the customer for a quote or an order: search by name or reference, or add a new one on the spot (name and e-mail) when saving.
import { reactive, ref } from 'vue'
import { customerInput, type Customer, type CustomerInput } from '@shared/schemas/customer'
import type { useApiError } from './use-api-error'
import { useCustomersStore } from '@/stores/customers'

/** Where customers are looked up and added; the customers store unless a test gives its own. */
export interface CustomerSource {
  search: (q: string) => Promise<Customer[]>
  create: (input: CustomerInput) => Promise<Customer>
}

export function useCustomerPicker(source: CustomerSource = useCustomersStore()) {
  /** Customers offered in the picker. */
  const options = ref<Customer[]>([])
  const finding = ref(false)
  /** True while the user types a new customer instead of picking one. */
  const adding = ref(false)
  const draft = reactive({ name: '', email: '' })

  /** Searches as the user types; a failed search offers nothing rather than stopping the form. */
  async function find(q: string) {
    finding.value = true
    try {
      options.value = await source.search(q)
    } catch {
      options.value = []
    } finally {
      finding.value = false
    }
  }

  /** Between picking one and typing a new one. */
  function toggle() {
    adding.value = !adding.value
  }

  /** Changes the new customer's name or e-mail as typed. */
  function setDraft(v: Partial<{ name: string; email: string }>) {
    Object.assign(draft, v)
  }

  /** Back to picking, with an empty draft. */
  function reset() {
    Object.assign(draft, { name: '', email: '' })
    adding.value = false
  }

  /**
   * The customer to save with: the picked one, or the new one added now (then offered and picked, so a second save does not add it twice).
   * Undefined when the new customer was refused (the reasons are shown under the form's `name` and `email` fields); null when none was picked.
   */
  async function resolve(picked: number | null, errors: Pick<ReturnType<typeof useApiError>, 'check' | 'run'>): Promise<number | null | undefined> {
    if (!adding.value) return picked
    const input = errors.check(customerInput, { name: draft.name, email: draft.email, phone: '', notes: '' })
    if (!input) return undefined
    const created = await errors.run(() => source.create(input))
    if (!created) return undefined
    adding.value = false
    options.value = [created, ...options.value.filter((c) => c.id !== created.id)]
    return created.id
  }

  return { options, finding, adding, draft, find, toggle, setDraft, reset, resolve }
}
