// Customers API: paged search on the server.
import { customer, customerPage, type CustomerInput } from '@shared/schemas/customer'
import { api } from './client'

export interface ListParams {
  q?: string
  page?: number
  pageSize?: number
  sort?: string
  order?: 'asc' | 'desc'
}

export const listCustomers = (p: ListParams = {}) => api.get('/customers', { query: { ...p }, schema: customerPage })
export const getCustomer = (id: number) => api.get(`/customers/${id}`, { schema: customer })
export const createCustomer = (body: CustomerInput) => api.post('/customers', body, { schema: customer })
export const updateCustomer = (id: number, body: Partial<CustomerInput> & { version: number }) => api.patch(`/customers/${id}`, body, { schema: customer })
