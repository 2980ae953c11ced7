// The workshop's pause reasons: the ones the bench offers, and every reason's name for history (switched-off ones too).
import { defineStore } from 'pinia'
import { computed, ref } from 'vue'
import type { PauseReason, PauseReasonInput, PauseReasonUpdate } from '@shared/schemas/pause-reason'
import * as reasonsApi from '@/api/pause-reasons'
import { useLoading } from '@/composables/use-loading'

export const usePauseReasonsStore = defineStore('pause-reasons', () => {
  /** All reasons in the bench's order, as the server sends them. */
  const items = ref<PauseReason[]>([])
  const { loading, error, track } = useLoading()
  const loaded = ref(false)
  const offered = computed(() => items.value.filter((r) => r.active))
  const byCode = computed(() => new Map(items.value.map((r) => [r.code, r])))

  async function load(force = false) {
    if (loaded.value && !force) return
    items.value = await track(reasonsApi.listPauseReasons)
    loaded.value = true
  }
  async function create(input: PauseReasonInput) {
    const r = await reasonsApi.createPauseReason(input)
    await load(true)
    return r
  }
  async function update(id: number, input: PauseReasonUpdate) {
    const r = await reasonsApi.updatePauseReason(id, input)
    await load(true)
    return r
  }
  /** A code's name; the code itself when the list has not loaded or does not know it. */
  const labelOf = (code: string) => byCode.value.get(code)?.label ?? code

  return { items, offered, loading, error, loaded, byCode, load, create, update, labelOf }
})
