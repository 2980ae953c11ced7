// Benches API: capabilities and downtime.
import { z } from 'zod'
import { bench, type BenchInput, type BenchUpdate, type DowntimeInput } from '@shared/schemas/bench'
import { api } from './client'

const benches = z.array(bench)

export const listBenches = () => api.get('/benches', { schema: benches })
export const createBench = (body: BenchInput) => api.post('/benches', body, { schema: bench })
export const updateBench = (id: number, body: BenchUpdate) => api.patch(`/benches/${id}`, body, { schema: bench })
export const addDowntime = (benchId: number, body: DowntimeInput) => api.post(`/benches/${benchId}/downtime`, body, { schema: bench })
export const removeDowntime = (benchId: number, downtimeId: number) => api.delete(`/benches/${benchId}/downtime/${downtimeId}`, { schema: bench })
