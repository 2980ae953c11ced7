// Benches API: capabilities and downtime.
import type { Bench, BenchInput, BenchUpdate, DowntimeInput } from '@shared/schemas/bench'
import { api } from './client'

export const listBenches = () => api.get<Bench[]>('/benches')
export const createBench = (body: BenchInput) => api.post<Bench>('/benches', body)
export const updateBench = (id: number, body: BenchUpdate) => api.patch<Bench>(`/benches/${id}`, body)
export const addDowntime = (benchId: number, body: DowntimeInput) => api.post<Bench>(`/benches/${benchId}/downtime`, body)
export const removeDowntime = (benchId: number, downtimeId: number) => api.delete<Bench>(`/benches/${benchId}/downtime/${downtimeId}`)
