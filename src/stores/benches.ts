// Benches with what they can host and their downtime.
import { defineStore } from 'pinia'
import { computed, ref } from 'vue'
import type { Bench, BenchInput, BenchUpdate, DowntimeInput } from '@shared/schemas/bench'
import * as benchesApi from '@/api/benches'
import { useLoading } from '@/composables/use-loading'

export const useBenchesStore = defineStore('benches', () => {
  /** All benches of the workshop. */
  const items = ref<Bench[]>([])
  const loaded = ref(false)
  const { loading, error, track } = useLoading()
  const byId = computed(() => new Map(items.value.map((b) => [b.id, b])))

  async function load(force = false) {
    if (loaded.value && !force) return
    items.value = await track(benchesApi.listBenches)
    loaded.value = true
  }
  function put(b: Bench) {
    const i = items.value.findIndex((x) => x.id === b.id)
    if (i >= 0) items.value.splice(i, 1, b)
    else items.value.push(b)
    return b
  }
  const create = async (input: BenchInput) => put(await benchesApi.createBench(input))
  const update = async (id: number, input: BenchUpdate) => put(await benchesApi.updateBench(id, input))
  const addDowntime = async (id: number, input: DowntimeInput) => put(await benchesApi.addDowntime(id, input))
  const removeDowntime = async (id: number, downtimeId: number) => put(await benchesApi.removeDowntime(id, downtimeId))

  return { items, loaded, loading, error, byId, load, create, update, addDowntime, removeDowntime }
})
