// Routing templates API: templates with their step graph.
import { z } from 'zod'
import { template, type TemplateInput } from '@shared/schemas/routing'
import { api } from './client'

const templates = z.array(template)

export const listTemplates = () => api.get('/templates', { schema: templates })
export const getTemplate = (id: number) => api.get(`/templates/${id}`, { schema: template })
export const createTemplate = (body: TemplateInput) => api.post('/templates', body, { schema: template })
export const updateTemplate = (id: number, body: TemplateInput & { version: number }) => api.put(`/templates/${id}`, body, { schema: template })
