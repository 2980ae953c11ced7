// Finding the customer for a quote or an order: the search offers, a new customer is added once when saving, and a refused one says why.
import { describe, expect, it } from 'vitest'
import type { Customer, CustomerInput } from '@shared/schemas/customer'
import { useCustomerPicker } from '@/composables/use-customer-picker'
import { useApiError } from '@/composables/use-api-error'

const row = (id: number, name: string): Customer => ({ id, reference: `C-${id}`, name, email: '', phone: '', notes: '', version: 1, openOrders: 0 })

/** A customer list in memory standing in for the server: what was searched and what was added. */
function fakeSource(start: Customer[]) {
  const added: CustomerInput[] = []
  const searches: string[] = []
  return {
    added,
    searches,
    search: async (q: string) => {
      searches.push(q)
      return start.filter((c) => c.name.toLowerCase().includes(q.toLowerCase()))
    },
    create: async (input: CustomerInput) => {
      added.push(input)
      return row(100 + added.length, input.name)
    },
  }
}

describe('useCustomerPicker', () => {
  it('when the user types part of a name, then the matching customers are offered', async () => {
    const source = fakeSource([row(1, 'Ada Lovelace'), row(2, 'Grace Hopper')])
    const picker = useCustomerPicker(source)
    await picker.find('grace')
    expect(picker.options.value.map((c) => c.name)).toEqual(['Grace Hopper'])
    expect(picker.finding.value).toBe(false)
  })

  it('when the search fails, then nothing is offered and the form carries on', async () => {
    const picker = useCustomerPicker({
      search: async () => {
        throw new Error('offline')
      },
      create: async () => row(1, 'x'),
    })
    await picker.find('a')
    expect(picker.options.value).toEqual([])
    expect(picker.finding.value).toBe(false)
  })

  it('when a customer is picked, then that one is used and none is added', async () => {
    const source = fakeSource([row(1, 'Ada Lovelace')])
    const picker = useCustomerPicker(source)
    expect(await picker.resolve(1, useApiError())).toBe(1)
    expect(await picker.resolve(null, useApiError())).toBeNull()
    expect(source.added).toEqual([])
  })

  it('when a new customer is typed, then it is added once, offered and used; saving again does not add it twice', async () => {
    const source = fakeSource([row(1, 'Ada Lovelace')])
    const picker = useCustomerPicker(source)
    await picker.find('')
    picker.toggle()
    Object.assign(picker.draft, { name: 'Mary Anning', email: 'mary@example.org' })
    const errors = useApiError()
    const id = await picker.resolve(null, errors)
    expect(id).toBe(101)
    expect(source.added).toEqual([{ name: 'Mary Anning', email: 'mary@example.org', phone: '', notes: '' }])
    expect(picker.adding.value).toBe(false)
    expect(picker.options.value.map((c) => c.id)).toEqual([101, 1])
    expect(await picker.resolve(id!, errors)).toBe(101)
    expect(source.added).toHaveLength(1)
  })

  it('when the new customer has no name, then nothing is added and the name field says why', async () => {
    const source = fakeSource([])
    const picker = useCustomerPicker(source)
    picker.toggle()
    Object.assign(picker.draft, { name: '', email: 'someone@example.org' })
    const errors = useApiError()
    expect(await picker.resolve(null, errors)).toBeUndefined()
    expect(source.added).toEqual([])
    expect(errors.fields.name).toBeTruthy()
  })

  it('when the user goes back to picking, then the draft is emptied', () => {
    const picker = useCustomerPicker(fakeSource([]))
    picker.toggle()
    Object.assign(picker.draft, { name: 'x', email: 'y' })
    picker.reset()
    expect(picker.adding.value).toBe(false)
    expect({ ...picker.draft }).toEqual({ name: '', email: '' })
  })
})
