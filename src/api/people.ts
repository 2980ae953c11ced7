// People API: skills, weekly pattern, leave and the linked user.
import { z } from 'zod'
import { person, type LeaveInput, type PersonInput, type PersonUpdate } from '@shared/schemas/person'
import { api } from './client'

const people = z.array(person)

export const listPeople = () => api.get('/people', { schema: people })
export const createPerson = (body: PersonInput) => api.post('/people', body, { schema: person })
export const updatePerson = (id: number, body: PersonUpdate) => api.patch(`/people/${id}`, body, { schema: person })
export const addLeave = (personId: number, body: LeaveInput) => api.post(`/people/${personId}/leave`, body, { schema: person })
export const removeLeave = (personId: number, leaveId: number) => api.delete(`/people/${personId}/leave/${leaveId}`, { schema: person })
