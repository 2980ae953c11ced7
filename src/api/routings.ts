// Routing templates API: templates with their step graph.
import { z } from 'zod'
import { template, type TemplateInput } from '@shared/schemas/routing'
import { api } from './client'

const templates = z.array(template)

export const listTemplates = () => api.get('/routings', { schema: templates })
export const getTemplate = (id: number) => api.get(`/routings/${id}`, { schema: template })
export const createTemplate = (body: TemplateInput) => api.post('/routings', body, { schema: template })
export const updateTemplate = (id: number, body: TemplateInput & { version: number }) => api.put(`/routings/${id}`, body, { schema: template })
