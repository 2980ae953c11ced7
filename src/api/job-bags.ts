// Job bags API: the bag's page data, routing edits, hold / cancel, ticket link, time record corrections.
import type { JobBagDetail, JobBagStatusInput, RingSizeChange, SequenceInput, StepAdd, StepSkip, StepUpdate, EffectiveTimeRecord } from '@shared/schemas/job-bag'
import type { TimeRecordAdd, TimeRecordCorrection } from '@shared/schemas/bench-floor'
import { api } from './client'

export interface JobBagSummary { id: number; number: string; piece: string; status: string; version: number; orderId: number; orderNumber: string; dueDate: string; priority: number; operations: number; finished: number }

export const listJobBags = (q: { orderId?: number; status?: string; q?: string } = {}) => api.get<JobBagSummary[]>('/job-bags', q)
export const getJobBag = (id: number) => api.get<JobBagDetail>(`/job-bags/${id}`)
export const addStep = (id: number, body: StepAdd) => api.post<JobBagDetail>(`/job-bags/${id}/operations`, body)
export const updateStep = (id: number, operationId: number, body: StepUpdate) => api.patch<JobBagDetail>(`/job-bags/${id}/operations/${operationId}`, body)
export const skipStep = (id: number, operationId: number, body: StepSkip) => api.post<JobBagDetail>(`/job-bags/${id}/operations/${operationId}/skip`, body)
export const setSequence = (id: number, body: SequenceInput) => api.put<JobBagDetail>(`/job-bags/${id}/sequence`, body)
export const setJobBagStatus = (id: number, body: JobBagStatusInput) => api.post<JobBagDetail>(`/job-bags/${id}/status`, body)
export const changeRingSize = (id: number, body: RingSizeChange) => api.put<JobBagDetail>(`/job-bags/${id}/ring-size`, body)
export const ticketUrl = (id: number, size: 'A5' | 'A6' = 'A6') => `/api/job-bags/${id}/ticket.pdf?size=${size}`
export const correctTimeRecord = (recordId: number, body: TimeRecordCorrection) => api.post<EffectiveTimeRecord>(`/time-records/${recordId}/corrections`, body)
export const addTimeRecord = (operationId: number, body: TimeRecordAdd) => api.post<EffectiveTimeRecord>(`/operations/${operationId}/time-records`, body)
