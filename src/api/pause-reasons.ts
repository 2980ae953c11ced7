// Pause reasons API: the workshop's list (everyone), additions and changes (owner).
import type { PauseReason, PauseReasonInput, PauseReasonUpdate } from '@shared/schemas/pause-reason'
import { api } from './client'

export const listPauseReasons = () => api.get<PauseReason[]>('/pause-reasons')
export const createPauseReason = (body: PauseReasonInput) => api.post<PauseReason>('/pause-reasons', body)
export const updatePauseReason = (id: number, body: PauseReasonUpdate) => api.patch<PauseReason>(`/pause-reasons/${id}`, body)
