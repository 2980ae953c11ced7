// People API: skills, weekly pattern, leave and the linked user.
import type { LeaveInput, Person, PersonInput, PersonUpdate } from '@shared/schemas/person'
import { api } from './client'

export const listPeople = () => api.get<Person[]>('/people')
export const createPerson = (body: PersonInput) => api.post<Person>('/people', body)
export const updatePerson = (id: number, body: PersonUpdate) => api.patch<Person>(`/people/${id}`, body)
export const addLeave = (personId: number, body: LeaveInput) => api.post<Person>(`/people/${personId}/leave`, body)
export const removeLeave = (personId: number, leaveId: number) => api.delete<Person>(`/people/${personId}/leave/${leaveId}`)
