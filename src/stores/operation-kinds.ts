// Operation kinds of the workshop, by id, with their hazards.
import { defineStore } from 'pinia'
import { computed, ref } from 'vue'
import type { OperationKind, OperationKindInput } from '@shared/schemas/operation-kind'
import * as kindsApi from '@/api/operation-kinds'
import { useLoading } from '@/composables/use-loading'

export const useKindsStore = defineStore('operation-kinds', () => {
  /** All kinds, sorted by name (as the server sends them). */
  const items = ref<OperationKind[]>([])
  const { loading, error, track } = useLoading()
  const loaded = ref(false)
  const byId = computed(() => new Map(items.value.map((k) => [k.id, k])))

  async function load(force = false) {
    if (loaded.value && !force) return
    items.value = await track(kindsApi.listKinds)
    loaded.value = true
  }
  async function create(input: OperationKindInput) {
    const k = await kindsApi.createKind(input)
    await load(true)
    return k
  }
  async function update(id: number, input: Partial<OperationKindInput> & { version: number }) {
    const k = await kindsApi.updateKind(id, input)
    await load(true)
    return k
  }
  /** The kind's name, or a placeholder for an unknown id. */
  const nameOf = (id: number) => byId.value.get(id)?.name ?? `kind #${id}`

  return { items, loading, error, loaded, byId, load, create, update, nameOf }
})
