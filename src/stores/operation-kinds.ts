// Operation kinds of the workshop, by id, with their hazards.
import { defineStore } from 'pinia'
import type { OperationKind, OperationKindInput } from '@shared/schemas/operation-kind'
import * as kindsApi from '@/api/operation-kinds'
import { useRecordList } from '@/composables/use-record-list'

export const useKindsStore = defineStore('operation-kinds', () => {
  /** All kinds, sorted by name (as the server sends them: a write loads the list again to keep that order). */
  const { items, loaded, loading, error, byId, load, thenReload } = useRecordList<OperationKind>(kindsApi.listKinds)
  const create = (input: OperationKindInput) => thenReload(kindsApi.createKind(input))
  const update = (id: number, input: Partial<OperationKindInput> & { version: number }) => thenReload(kindsApi.updateKind(id, input))
  /** The kind's name, or a placeholder for an unknown id. */
  const nameOf = (id: number) => byId.value.get(id)?.name ?? `kind #${id}`

  return { items, loading, error, loaded, byId, load, create, update, nameOf }
})
