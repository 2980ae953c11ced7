// Routings API: routings with their step graph.
import { z } from 'zod'
import { routing, type RoutingInput } from '@shared/schemas/routing'
import { api } from './client'

const routings = z.array(routing)

export const listRoutings = () => api.get('/routings', { schema: routings })
export const getRouting = (id: number) => api.get(`/routings/${id}`, { schema: routing })
export const createRouting = (body: RoutingInput) => api.post('/routings', body, { schema: routing })
export const updateRouting = (id: number, body: RoutingInput & { version: number }) => api.put(`/routings/${id}`, body, { schema: routing })
