// Job bags API: the bag's page data, routing edits, hold / cancel, ticket link, time record corrections.
import { z } from 'zod'
import {
  effectiveTimeRecord,
  jobBagDetail,
  jobBagSummary,
  type JobBagStatusInput,
  type RingSizeChange,
  type SequenceInput,
  type StepAdd,
  type StepSkip,
  type StepUpdate,
} from '@shared/schemas/job-bag'
import type { TimeRecordAdd, TimeRecordCorrection } from '@shared/schemas/bench-floor'
import { api } from './client'

export type { JobBagSummary } from '@shared/schemas/job-bag'
const jobBagList = z.array(jobBagSummary)
const detail = { schema: jobBagDetail }

export const listJobBags = (q: { orderId?: number; status?: string; q?: string } = {}) => api.get('/job-bags', { query: q, schema: jobBagList })
/** One job bag; with the bench the one looking works at, its answer says whether they could take its next step there. */
export const getJobBag = (id: number, benchId?: number | null) => api.get(`/job-bags/${id}`, { query: benchId ? { benchId } : {}, ...detail })
export const addStep = (id: number, body: StepAdd) => api.post(`/job-bags/${id}/operations`, body, detail)
export const updateStep = (id: number, operationId: number, body: StepUpdate) => api.patch(`/job-bags/${id}/operations/${operationId}`, body, detail)
export const skipStep = (id: number, operationId: number, body: StepSkip) => api.post(`/job-bags/${id}/operations/${operationId}/skip`, body, detail)
export const setSequence = (id: number, body: SequenceInput) => api.put(`/job-bags/${id}/sequence`, body, detail)
export const setJobBagStatus = (id: number, body: JobBagStatusInput) => api.post(`/job-bags/${id}/status`, body, detail)
export const changeRingSize = (id: number, body: RingSizeChange) => api.put(`/job-bags/${id}/ring-size`, body, detail)
export const ticketUrl = (id: number, size: 'A5' | 'A6' = 'A6') => `/api/job-bags/${id}/ticket.pdf?size=${size}`
export const correctTimeRecord = (recordId: number, body: TimeRecordCorrection) =>
  api.post(`/time-records/${recordId}/corrections`, body, { schema: effectiveTimeRecord })
export const addTimeRecord = (operationId: number, body: TimeRecordAdd) =>
  api.post(`/operations/${operationId}/time-records`, body, { schema: effectiveTimeRecord })
