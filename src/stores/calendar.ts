// The workshop calendar: settings (name, time zone, weekly hours, planning load) and closures.
import { defineStore } from 'pinia'
import { ref } from 'vue'
import type { Closure, ClosureInput, WorkshopSettings, WorkshopSettingsInput } from '@shared/schemas/calendar'
import * as workshopApi from '@/api/workshop'
import { useLoading } from '@/composables/use-loading'

export const useCalendarStore = defineStore('calendar', () => {
  /** The workshop's settings, null until loaded. */
  const settings = ref<WorkshopSettings | null>(null)
  /** Closures, earliest first. */
  const closures = ref<Closure[]>([])
  const { loading, error, track } = useLoading()

  async function load(force = false) {
    if (settings.value && !force) return
    const [s, c] = await track(() => Promise.all([workshopApi.getWorkshop(), workshopApi.listClosures()]))
    settings.value = s
    closures.value = c
  }
  /** Owner only (the server answers 403 otherwise). */
  async function save(input: WorkshopSettingsInput) {
    settings.value = await workshopApi.updateWorkshop(input)
    return settings.value
  }
  async function addClosure(input: ClosureInput) {
    const c = await workshopApi.addClosure(input)
    closures.value = [...closures.value, c].sort((a, b) => a.startsOn.localeCompare(b.startsOn))
    return c
  }
  async function addBankHolidays(year: number) {
    const r = await workshopApi.addBankHolidays({ year })
    closures.value = [...closures.value, ...r.added].sort((a, b) => a.startsOn.localeCompare(b.startsOn))
    return r
  }
  async function removeClosure(id: number) {
    await workshopApi.removeClosure(id)
    closures.value = closures.value.filter((c) => c.id !== id)
  }

  return { settings, closures, loading, error, load, save, addClosure, addBankHolidays, removeClosure }
})
