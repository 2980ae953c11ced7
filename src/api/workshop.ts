// Workshop API: settings with the weekly calendar (owner writes) and closures.
import type { Closure, ClosureInput, WorkshopSettings, WorkshopSettingsInput } from '@shared/schemas/calendar'
import { api } from './client'

export const getWorkshop = () => api.get<WorkshopSettings>('/workshop')
export const updateWorkshop = (body: WorkshopSettingsInput) => api.put<WorkshopSettings>('/workshop', body)
export const listClosures = () => api.get<Closure[]>('/closures')
export const addClosure = (body: ClosureInput) => api.post<Closure>('/closures', body)
export const removeClosure = (id: number) => api.delete<{ ok: true }>(`/closures/${id}`)
