// Routings and their step graphs.
import { defineStore } from 'pinia'
import type { Template, TemplateInput } from '@shared/schemas/routing'
import * as routingsApi from '@/api/routings'
import { useRecordList } from '@/composables/use-record-list'

export const useRoutingsStore = defineStore('routings', () => {
  /** All routings with steps. */
  const { items, loaded, loading, error, byId, load, put } = useRecordList<Template>(routingsApi.listTemplates)
  const create = async (input: TemplateInput) => put(await routingsApi.createTemplate(input))
  const update = async (id: number, input: TemplateInput & { version: number }) => put(await routingsApi.updateTemplate(id, input))

  return { items, loaded, loading, error, byId, load, create, update }
})
