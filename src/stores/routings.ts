// Routing templates and their step graphs.
import { defineStore } from 'pinia'
import { computed, ref } from 'vue'
import type { Template, TemplateInput } from '@shared/schemas/routing'
import * as templatesApi from '@/api/routings'
import { useLoading } from '@/composables/use-loading'

export const useRoutingsStore = defineStore('routings', () => {
  /** All routing templates with steps. */
  const items = ref<Template[]>([])
  const loaded = ref(false)
  const { loading, error, track } = useLoading()
  const byId = computed(() => new Map(items.value.map((t) => [t.id, t])))

  async function load(force = false) {
    if (loaded.value && !force) return
    items.value = await track(templatesApi.listTemplates)
    loaded.value = true
  }
  function put(t: Template) {
    const i = items.value.findIndex((x) => x.id === t.id)
    if (i >= 0) items.value.splice(i, 1, t)
    else items.value.push(t)
    return t
  }
  const create = async (input: TemplateInput) => put(await templatesApi.createTemplate(input))
  const update = async (id: number, input: TemplateInput & { version: number }) => put(await templatesApi.updateTemplate(id, input))

  return { items, loaded, loading, error, byId, load, create, update }
})
