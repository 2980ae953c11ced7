// Routing templates API: templates with their step graph.
import type { Template, TemplateInput } from '@shared/schemas/routing'
import { api } from './client'

export const listTemplates = () => api.get<Template[]>('/templates')
export const getTemplate = (id: number) => api.get<Template>(`/templates/${id}`)
export const createTemplate = (body: TemplateInput) => api.post<Template>('/templates', body)
export const updateTemplate = (id: number, body: TemplateInput & { version: number }) => api.put<Template>(`/templates/${id}`, body)
