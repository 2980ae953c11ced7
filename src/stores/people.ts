// People at the benches: skills, weekly patterns, leave.
import { defineStore } from 'pinia'
import type { LeaveInput, Person, PersonInput, PersonUpdate } from '@shared/schemas/person'
import * as peopleApi from '@/api/people'
import { useRecordList } from '@/composables/use-record-list'

export const usePeopleStore = defineStore('people', () => {
  /** Everyone in the workshop, active or not. */
  const { items, loaded, loading, error, byId, load, put } = useRecordList<Person>(peopleApi.listPeople)
  const create = async (input: PersonInput) => put(await peopleApi.createPerson(input))
  const update = async (id: number, input: PersonUpdate) => put(await peopleApi.updatePerson(id, input))
  const addLeave = async (id: number, input: LeaveInput) => put(await peopleApi.addLeave(id, input))
  const removeLeave = async (id: number, leaveId: number) => put(await peopleApi.removeLeave(id, leaveId))

  return { items, loaded, loading, error, byId, load, create, update, addLeave, removeLeave }
})
