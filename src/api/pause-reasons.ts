// Pause reasons API: the workshop's list (everyone), additions and changes (owner).
import { z } from 'zod'
import { pauseReason, type PauseReasonInput, type PauseReasonUpdate } from '@shared/schemas/pause-reason'
import { api } from './client'

export const listPauseReasons = () => api.get('/pause-reasons', { schema: z.array(pauseReason) })
export const createPauseReason = (body: PauseReasonInput) => api.post('/pause-reasons', body, { schema: pauseReason })
export const updatePauseReason = (id: number, body: PauseReasonUpdate) => api.patch(`/pause-reasons/${id}`, body, { schema: pauseReason })
