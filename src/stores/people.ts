// People at the benches: skills, weekly patterns, leave.
import { defineStore } from 'pinia'
import { computed, ref } from 'vue'
import type { LeaveInput, Person, PersonInput, PersonUpdate } from '@shared/schemas/person'
import * as peopleApi from '@/api/people'
import { useLoading } from '@/composables/use-loading'

export const usePeopleStore = defineStore('people', () => {
  /** Everyone in the workshop, active or not. */
  const items = ref<Person[]>([])
  const loaded = ref(false)
  const { loading, error, track } = useLoading()
  const byId = computed(() => new Map(items.value.map((p) => [p.id, p])))

  async function load(force = false) {
    if (loaded.value && !force) return
    items.value = await track(peopleApi.listPeople)
    loaded.value = true
  }
  function put(p: Person) {
    const i = items.value.findIndex((x) => x.id === p.id)
    if (i >= 0) items.value.splice(i, 1, p)
    else items.value.push(p)
    return p
  }
  const create = async (input: PersonInput) => put(await peopleApi.createPerson(input))
  const update = async (id: number, input: PersonUpdate) => put(await peopleApi.updatePerson(id, input))
  const addLeave = async (id: number, input: LeaveInput) => put(await peopleApi.addLeave(id, input))
  const removeLeave = async (id: number, leaveId: number) => put(await peopleApi.removeLeave(id, leaveId))

  return { items, loaded, loading, error, byId, load, create, update, addLeave, removeLeave }
})
