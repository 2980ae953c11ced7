// Benches with what they can host and their downtime.
import { defineStore } from 'pinia'
import type { Bench, BenchInput, BenchUpdate, DowntimeInput } from '@shared/schemas/bench'
import * as benchesApi from '@/api/benches'
import { useRecordList } from '@/composables/use-record-list'

export const useBenchesStore = defineStore('benches', () => {
  /** All benches of the workshop. */
  const { items, loaded, loading, error, byId, load, put } = useRecordList<Bench>(benchesApi.listBenches)
  const create = async (input: BenchInput) => put(await benchesApi.createBench(input))
  const update = async (id: number, input: BenchUpdate) => put(await benchesApi.updateBench(id, input))
  const addDowntime = async (id: number, input: DowntimeInput) => put(await benchesApi.addDowntime(id, input))
  const removeDowntime = async (id: number, downtimeId: number) => put(await benchesApi.removeDowntime(id, downtimeId))

  return { items, loaded, loading, error, byId, load, create, update, addDowntime, removeDowntime }
})
