// Operation kinds API (sawing, setting, casting… with their hazards).
import { z } from 'zod'
import { operationKind, type OperationKindInput } from '@shared/schemas/operation-kind'
import { api } from './client'

export const listKinds = () => api.get('/operation-kinds', { schema: z.array(operationKind) })
export const createKind = (body: OperationKindInput) => api.post('/operation-kinds', body, { schema: operationKind })
export const updateKind = (id: number, body: Partial<OperationKindInput> & { version: number }) =>
  api.patch(`/operation-kinds/${id}`, body, { schema: operationKind })
