// Operation kinds API (sawing, setting, casting… with their hazards).
import type { OperationKind, OperationKindInput } from '@shared/schemas/operation-kind'
import { api } from './client'

export const listKinds = () => api.get<OperationKind[]>('/operation-kinds')
export const createKind = (body: OperationKindInput) => api.post<OperationKind>('/operation-kinds', body)
export const updateKind = (id: number, body: Partial<OperationKindInput> & { version: number }) => api.patch<OperationKind>(`/operation-kinds/${id}`, body)
