// Routings and their step graphs.
import { defineStore } from 'pinia'
import type { Routing, RoutingInput } from '@shared/schemas/routing'
import * as routingsApi from '@/api/routings'
import { useRecordList } from '@/composables/use-record-list'

export const useRoutingsStore = defineStore('routings', () => {
  /** All routings with steps. */
  const { items, loaded, loading, error, byId, load, put } = useRecordList<Routing>(routingsApi.listRoutings)
  const create = async (input: RoutingInput) => put(await routingsApi.createRouting(input))
  const update = async (id: number, input: RoutingInput & { version: number }) => put(await routingsApi.updateRouting(id, input))

  return { items, loaded, loading, error, byId, load, create, update }
})
