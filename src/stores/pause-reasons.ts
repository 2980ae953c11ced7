// The workshop's pause reasons: the ones the bench offers, and every reason's name for history (switched-off ones too).
import { defineStore } from 'pinia'
import { computed } from 'vue'
import type { PauseReason, PauseReasonInput, PauseReasonUpdate } from '@shared/schemas/pause-reason'
import * as reasonsApi from '@/api/pause-reasons'
import { useRecordList } from '@/composables/use-record-list'

export const usePauseReasonsStore = defineStore('pause-reasons', () => {
  /** All reasons in the bench's order, as the server sends them (a write loads the list again to keep that order). */
  const { items, loaded, loading, error, load, thenReload } = useRecordList<PauseReason>(reasonsApi.listPauseReasons)
  const offered = computed(() => items.value.filter((r) => r.active))
  const byCode = computed(() => new Map(items.value.map((r) => [r.code, r])))
  const create = (input: PauseReasonInput) => thenReload(reasonsApi.createPauseReason(input))
  const update = (id: number, input: PauseReasonUpdate) => thenReload(reasonsApi.updatePauseReason(id, input))
  /** A code's name; the code itself when the list has not loaded or does not know it. */
  const labelOf = (code: string) => byCode.value.get(code)?.label ?? code

  return { items, offered, loading, error, loaded, byCode, load, create, update, labelOf }
})
