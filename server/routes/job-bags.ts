// Job bag routes: read (page, list), routing edits, hold/cancel, the printable ticket, and time record corrections.
import { z } from 'zod'
import { id } from '../../shared/schemas/common'
import {
  effectiveTimeRecord,
  jobBagDetail,
  jobBagListQuery,
  jobBagQuery,
  jobBagSummary,
  jobBagStatusInput,
  ringSizeChange,
  sequenceInput,
  stepAdd,
  stepSkip,
  stepUpdate,
  ticketQuery,
} from '../../shared/schemas/job-bag'
import { timeRecordAdd, timeRecordCorrection } from '../../shared/schemas/bench-floor'
import { EVERYONE, STAFF, type Role } from '../../shared/domain/roles'
import { route } from '../lib/route'
import { suggestionForRequest } from '../lib/public-url'
import * as jobBags from '../services/job-bags'
import * as tickets from '../services/tickets'
import * as timeRecords from '../services/time-records'
import { idParam } from './params'

// Bench users read job bags too: scanning a ticket opens the bag's page on the tablet.
const READERS: Role[] = EVERYONE
const PRINTERS: Role[] = ['owner', 'manager', 'bench']
/** The office changes what the customer asked for (a ring size given again): owner, manager, sales. */
const OFFICE: Role[] = ['owner', 'manager', 'sales']
const stepParam = z.object({ id, operationId: id })

export const jobBagRoutes = [
  route({
    method: 'get',
    path: '/job-bags',
    roles: READERS,
    summary: 'Job bags (by order, status or number)',
    query: jobBagListQuery,
    response: z.array(jobBagSummary),
    handler: ({ deps, actor, query }) => jobBags.listJobBags(deps.db, actor.workshopId, query),
  }),
  route({
    method: 'get',
    path: '/job-bags/:id',
    roles: READERS,
    summary: 'One job bag: routing with planned vs actual minutes, time records, history',
    params: idParam,
    query: jobBagQuery,
    response: jobBagDetail,
    handler: ({ deps, actor, params, query }) =>
      jobBags.getJobBag(deps.db, actor.workshopId, params.id, {
        customerName: actor.role !== 'bench',
        viewer: actor.role === 'sales' ? undefined : { actor, benchId: query.benchId ?? actor.station?.benchId ?? null },
      }),
  }),
  route({
    method: 'get',
    path: '/job-bags/:id/ticket.pdf',
    roles: PRINTERS,
    summary: 'The printable job ticket (PDF, A6 or A5)',
    params: idParam,
    query: ticketQuery,
    handler: async ({ deps, actor, params, query, req, res }) => {
      const requestOrigin = `${req.protocol}://${req.get('host')}`
      const suggestedOrigin = suggestionForRequest(req, deps.listenHost).url
      const { pdf, number } = await tickets.jobTicketPdf(deps.db, actor.workshopId, params.id, { requestOrigin, suggestedOrigin, size: query.size })
      res.setHeader('Content-Type', 'application/pdf')
      res.setHeader('Content-Disposition', `inline; filename="job-ticket-${number.replace(/[^A-Za-z0-9-]/g, '')}.pdf"`)
      res.setHeader('Cache-Control', 'no-store')
      res.end(pdf)
      return undefined
    },
  }),
  route({
    method: 'post',
    path: '/job-bags/:id/operations',
    roles: STAFF,
    status: 201,
    summary: 'Add a step to the routing',
    params: idParam,
    body: stepAdd,
    response: jobBagDetail,
    handler: ({ deps, actor, params, body }) => jobBags.addStep(deps, actor, params.id, body),
  }),
  route({
    method: 'patch',
    path: '/job-bags/:id/operations/:operationId',
    roles: STAFF,
    summary: 'Change a step (estimate with a reason, name, level, what it waits for)',
    params: stepParam,
    body: stepUpdate,
    response: jobBagDetail,
    handler: ({ deps, actor, params, body }) => jobBags.updateStep(deps, actor, params.id, params.operationId, body),
  }),
  route({
    method: 'post',
    path: '/job-bags/:id/operations/:operationId/skip',
    roles: STAFF,
    summary: 'Remove a step that nobody has started (it becomes skipped)',
    params: stepParam,
    body: stepSkip,
    response: jobBagDetail,
    handler: ({ deps, actor, params, body }) => jobBags.skipStep(deps, actor, params.id, params.operationId, body),
  }),
  route({
    method: 'put',
    path: '/job-bags/:id/sequence',
    roles: STAFF,
    summary: 'Reorder the steps',
    params: idParam,
    body: sequenceInput,
    response: jobBagDetail,
    handler: ({ deps, actor, params, body }) => jobBags.setSequence(deps, actor, params.id, body),
  }),
  route({
    method: 'put',
    path: '/job-bags/:id/ring-size',
    roles: OFFICE,
    summary: "Change the ring size (or a resize's from and to) after ordering",
    params: idParam,
    body: ringSizeChange,
    response: jobBagDetail,
    handler: ({ deps, actor, params, body }) => jobBags.changeRingSize(deps, actor, params.id, body),
  }),
  route({
    method: 'post',
    path: '/job-bags/:id/status',
    roles: STAFF,
    summary: 'Put on hold, cancel, or lift the hold',
    params: idParam,
    body: jobBagStatusInput,
    response: jobBagDetail,
    handler: ({ deps, actor, params, body }) => jobBags.setJobBagStatus(deps, actor, params.id, body),
  }),
  route({
    method: 'post',
    path: '/operations/:id/time-records',
    roles: STAFF,
    status: 201,
    summary: 'Add a missing time record (kept with who and why)',
    params: idParam,
    body: timeRecordAdd,
    response: effectiveTimeRecord,
    handler: ({ deps, actor, params, body }) => timeRecords.addTimeRecord(deps, actor, params.id, body),
  }),
  route({
    method: 'post',
    path: '/time-records/:id/corrections',
    roles: STAFF,
    status: 201,
    summary: 'Correct or void a time record (the record itself is kept)',
    params: idParam,
    body: timeRecordCorrection,
    response: effectiveTimeRecord,
    handler: ({ deps, actor, params, body }) => timeRecords.correctTimeRecord(deps, actor, params.id, body),
  }),
]
