// Payment routes: links and money per order (owner, manager, sales), cash and transfers by hand (owner, sales), refunds and figures (owner).
import { z } from 'zod'
import {
  manualPaymentInput,
  moneyRangeQuery,
  moneySummary,
  orderMoney,
  payment,
  paymentLink,
  paymentLinkInput,
  refundInput,
} from '../../shared/schemas/payment'
import type { Role } from '../../shared/domain/roles'
import { route } from '../lib/route'
import * as payments from '../services/payments'
import { idParam } from './params'
import { QUOTERS } from './quotes'

const CASHIERS: Role[] = ['owner', 'sales']
const OWNER: Role[] = ['owner']

export const paymentRoutes = [
  route({
    method: 'get',
    path: '/orders/:id/money',
    roles: QUOTERS,
    summary: 'What an order costs, has paid and owes, with its payments and links',
    params: idParam,
    response: orderMoney,
    handler: ({ deps, actor, params }) => payments.orderMoney(deps.db, actor.workshopId, params.id),
  }),
  route({
    method: 'post',
    path: '/orders/:id/payment-links',
    roles: QUOTERS,
    status: 201,
    summary: 'A payment link for the deposit or the balance',
    params: idParam,
    body: paymentLinkInput,
    response: paymentLink,
    handler: ({ deps, actor, params, body }) => payments.createOrderLink(deps, actor, params.id, body),
  }),
  route({
    method: 'post',
    path: '/orders/:id/payments',
    roles: CASHIERS,
    status: 201,
    summary: 'Record cash or a bank transfer (who and when kept)',
    params: idParam,
    body: manualPaymentInput,
    response: payment,
    handler: ({ deps, actor, params, body }) => payments.recordManual(deps, actor, params.id, body),
  }),
  route({
    method: 'post',
    path: '/payments/:id/refund',
    roles: OWNER,
    status: 201,
    summary: 'Refund a payment (card through the provider)',
    params: idParam,
    body: refundInput,
    response: payment,
    handler: ({ deps, actor, params, body }) => payments.refund(deps, actor, params.id, body),
  }),
  route({
    method: 'get',
    path: '/payments/to-refund',
    roles: QUOTERS,
    summary: 'Payments waiting to be refunded (e.g. for a withdrawn quote)',
    response: z.array(payment),
    handler: ({ deps, actor }) => payments.toRefundList(deps.db, actor.workshopId),
  }),
  route({
    method: 'get',
    path: '/payments/summary',
    roles: OWNER,
    summary: 'Owed and received by ISO week, deposits held on work not started',
    query: moneyRangeQuery,
    response: moneySummary,
    handler: ({ deps, actor, query }) => payments.summary(deps.db, actor.workshopId, query),
  }),
  route({
    method: 'get',
    path: '/payments/export.csv',
    roles: OWNER,
    summary: 'Payments as CSV for the accountant',
    query: moneyRangeQuery,
    handler: async ({ deps, actor, query, res }) => {
      const csv = await payments.exportCsv(deps.db, actor.workshopId, query)
      res.setHeader('Content-Type', 'text/csv; charset=utf-8')
      res.setHeader('Content-Disposition', 'attachment; filename="payments.csv"')
      res.end(csv)
      return undefined
    },
  }),
]
