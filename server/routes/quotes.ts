// Quote routes: sales, managers and the owner write and send quotes; bench users see none (no prices on the bench).
import { paymentLink } from '../../shared/schemas/payment'
import { quoteAccepted, quoteAction, quoteDetail, quoteInput, quoteLinkInput, quoteListQuery, quotePage, quoteUpdate } from '../../shared/schemas/quote'
import type { Role } from '../../shared/domain/roles'
import { route } from '../lib/route'
import * as quotes from '../services/quotes'
import { idParam } from './params'

/** Who quotes and reads money: the owner, the manager and sales. */
export const QUOTERS: Role[] = ['owner', 'manager', 'sales']

export const quoteRoutes = [
  route({
    method: 'get',
    path: '/quotes',
    roles: QUOTERS,
    summary: 'Quotes, newest first (lapsed ones shown expired)',
    query: quoteListQuery,
    response: quotePage,
    handler: ({ deps, actor, query }) => quotes.listQuotes(deps, actor.workshopId, query),
  }),
  route({
    method: 'get',
    path: '/quotes/:id',
    roles: QUOTERS,
    summary: 'A quote with its payment links and payments',
    params: idParam,
    response: quoteDetail,
    handler: ({ deps, actor, params }) => quotes.getQuote(deps.db, actor.workshopId, params.id),
  }),
  route({
    method: 'post',
    path: '/quotes',
    roles: QUOTERS,
    status: 201,
    summary: 'Draft a quote (deposit and validity from the workshop rules unless given)',
    body: quoteInput,
    response: quoteDetail,
    handler: ({ deps, actor, body }) => quotes.createQuote(deps, actor, body),
  }),
  route({
    method: 'patch',
    path: '/quotes/:id',
    roles: QUOTERS,
    summary: 'Change a drafted or sent quote',
    params: idParam,
    body: quoteUpdate,
    response: quoteDetail,
    handler: ({ deps, actor, params, body }) => quotes.updateQuote(deps, actor, params.id, body),
  }),
  route({
    method: 'post',
    path: '/quotes/:id/send',
    roles: QUOTERS,
    summary: 'E-mail the quote to the customer with a deposit link',
    params: idParam,
    body: quoteAction,
    response: quoteDetail,
    handler: ({ deps, actor, params, body }) => quotes.sendQuote(deps, actor, params.id, body.version),
  }),
  route({
    method: 'post',
    path: '/quotes/:id/accept',
    roles: QUOTERS,
    summary: 'The customer accepts: the order is made and booked into the live plan where there is room (or the quote’s order linked)',
    params: idParam,
    body: quoteAction,
    response: quoteAccepted,
    handler: ({ deps, actor, params, body }) => quotes.acceptQuote(deps, actor, params.id, body.version),
  }),
  route({
    method: 'post',
    path: '/quotes/:id/withdraw',
    roles: QUOTERS,
    summary: 'Take the quote back (its open links close)',
    params: idParam,
    body: quoteAction,
    response: quoteDetail,
    handler: ({ deps, actor, params, body }) => quotes.withdrawQuote(deps, actor, params.id, body.version),
  }),
  route({
    method: 'post',
    path: '/quotes/:id/payment-links',
    roles: QUOTERS,
    status: 201,
    summary: 'A deposit link for the quote',
    params: idParam,
    body: quoteLinkInput,
    response: paymentLink,
    handler: ({ deps, actor, params, body }) => quotes.quoteLink(deps, actor, params.id, body.amountMinor),
  }),
  route({
    method: 'get',
    path: '/quotes/:id/pdf',
    roles: QUOTERS,
    summary: 'The quote as a PDF',
    params: idParam,
    handler: async ({ deps, actor, params, res }) => {
      const q = await quotes.getQuote(deps.db, actor.workshopId, params.id)
      const pdf = await quotes.quotePdf(deps.db, actor.workshopId, params.id)
      res.setHeader('Content-Type', 'application/pdf')
      res.setHeader('Content-Disposition', `inline; filename="${q.number.replace(/[^A-Za-z0-9-]/g, '')}.pdf"`)
      res.end(pdf)
      return undefined
    },
  }),
]
