// Workshop API: settings with the weekly calendar (owner writes) and closures.
import { z } from 'zod'
import {
  bankHolidaysAdded,
  closure,
  closureRemoved,
  workshopSettings,
  type BankHolidaysInput,
  type ClosureInput,
  type WorkshopSettingsInput,
} from '@shared/schemas/calendar'
import { api } from './client'

export const getWorkshop = () => api.get('/workshop', { schema: workshopSettings })
export const updateWorkshop = (body: WorkshopSettingsInput) => api.put('/workshop', body, { schema: workshopSettings })
export const listClosures = () => api.get('/closures', { schema: z.array(closure) })
export const addClosure = (body: ClosureInput) => api.post('/closures', body, { schema: closure })
export const addBankHolidays = (body: BankHolidaysInput) => api.post('/closures/bank-holidays', body, { schema: bankHolidaysAdded })
export const removeClosure = (id: number) => api.delete(`/closures/${id}`, { schema: closureRemoved })
