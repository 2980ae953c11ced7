// Insights and estimating routes: the owner's estimate-vs-actual tables, job costing, learned estimates and their acceptance.
import type { Role } from '../../shared/domain/roles'
import { z } from 'zod'
import {
  acceptSuggestionInput,
  biasTrend,
  comparisonTable,
  costingTable,
  drillDown,
  learnedEstimates,
  operationCostSet,
  scatterPoint,
  stepChange,
  stepCost,
  stepCostSet,
  threePointEstimate,
  comparisonQuery,
  costingQuery,
  insightFilter,
  operationCostInput,
  recordsQuery,
  stepCostInput,
  threePointInput,
} from '../../shared/schemas/insights'
import { route } from '../lib/route'
import * as estimates from '../services/estimates'
import * as insights from '../services/insights'
import { idParam } from './params'

const OWNER: Role[] = ['owner']
// Managers plan with the estimates, so they may read how far each kind of work runs over; figures by person, order and money stay with the owner.
const STAFF: Role[] = ['owner', 'manager']

export const insightRoutes = [
  route({
    method: 'get',
    path: '/insights/comparison',
    roles: OWNER,
    summary: 'Estimated against actual hours by kind, person, routing, order or month (owner; ?format=csv)',
    query: comparisonQuery,
    response: comparisonTable,
    handler: async ({ deps, actor, query, res }) => {
      const t = await insights.comparison(deps.db, actor.workshopId, query.groupBy, query)
      return query.format === 'csv' ? insights.sendCsv(res, `estimates-by-${query.groupBy}`, insights.comparisonCsv(t)) : t
    },
  }),
  route({
    method: 'get',
    path: '/insights/kind-accuracy',
    roles: STAFF,
    summary: 'Estimate accuracy by operation kind (owner, manager; ?format=csv)',
    query: costingQuery,
    response: comparisonTable,
    handler: async ({ deps, actor, query, res }) => {
      const t = await insights.comparison(deps.db, actor.workshopId, 'kind', query)
      return query.format === 'csv' ? insights.sendCsv(res, 'estimate-accuracy-by-kind', insights.comparisonCsv(t)) : t
    },
  }),
  route({
    method: 'get',
    path: '/insights/records',
    roles: OWNER,
    summary: 'The operations and time records behind one row (owner; ?format=csv)',
    query: recordsQuery,
    response: drillDown,
    handler: async ({ deps, actor, query, res }) => {
      const d = await insights.drillDown(deps.db, actor.workshopId, query.groupBy, query.key, query)
      return query.format === 'csv' ? insights.sendCsv(res, `time-records-${query.groupBy}-${query.key}`, insights.drillCsv(d)) : d
    },
  }),
  route({
    method: 'get',
    path: '/insights/scatter',
    roles: OWNER,
    summary: 'Estimate and actual minutes of each finished operation (owner)',
    query: insightFilter,
    response: z.array(scatterPoint),
    handler: ({ deps, actor, query }) => insights.scatter(deps.db, actor.workshopId, query),
  }),
  route({
    method: 'get',
    path: '/insights/bias-trend',
    roles: OWNER,
    summary: 'Bias by kind per month (owner)',
    query: insightFilter,
    response: biasTrend,
    handler: ({ deps, actor, query }) => insights.biasTrend(deps.db, actor.workshopId, query),
  }),
  route({
    method: 'get',
    path: '/insights/costing',
    roles: OWNER,
    summary: 'Job costing: labour and outside work against the price quoted, margins at estimate and actual (owner; ?format=csv)',
    query: costingQuery,
    response: costingTable,
    handler: async ({ deps, actor, query, res }) => {
      const t = await insights.costing(deps.db, actor.workshopId, query)
      return query.format === 'csv' ? insights.sendCsv(res, 'job-costing', insights.costingCsv(t)) : t
    },
  }),
  route({
    method: 'get',
    path: '/insights/outside-costs',
    roles: OWNER,
    summary: 'Outside-work steps of the routings with their expected cost per unit (owner)',
    response: z.array(stepCost),
    handler: ({ deps, actor }) => insights.listStepCosts(deps.db, actor.workshopId),
  }),
  route({
    method: 'put',
    path: '/insights/routings/:id/outside-cost',
    roles: OWNER,
    summary: 'Expected outside cost per unit of a routing step (owner)',
    params: idParam,
    body: stepCostInput,
    response: stepCostSet,
    handler: ({ deps, actor, params, body }) => insights.setStepCost(deps, actor, params.id, body.stepKey, body.outsideCostMinor),
  }),
  route({
    method: 'put',
    path: '/insights/operations/:id/outside-cost',
    roles: OWNER,
    summary: 'Invoiced outside cost of an operation (owner)',
    params: idParam,
    body: operationCostInput,
    response: operationCostSet,
    handler: ({ deps, actor, params, body }) => insights.setOperationCost(deps, actor, params.id, body.outsideCostMinor),
  }),

  route({
    method: 'get',
    path: '/estimates/learned',
    roles: OWNER,
    summary: 'Figures learned from actual times: kinds, people, routing steps with suggestions (owner)',
    query: insightFilter,
    response: learnedEstimates,
    handler: ({ deps, actor, query }) => estimates.learnEstimates(deps.db, actor.workshopId, query),
  }),
  route({
    method: 'post',
    path: '/estimates/accept',
    roles: OWNER,
    summary: 'Accept learned minutes into a routing step (owner; bumps the routing version)',
    body: acceptSuggestionInput,
    response: stepChange,
    handler: ({ deps, actor, body }) => estimates.acceptSuggestion(deps, actor, body),
  }),
  route({
    method: 'get',
    path: '/estimates/changes',
    roles: OWNER,
    summary: 'Accepted changes of routing minutes, newest first (owner)',
    response: z.array(stepChange),
    handler: ({ deps, actor }) => estimates.listStepChanges(deps.db, actor.workshopId),
  }),
  route({
    method: 'post',
    path: '/estimates/three-point',
    roles: STAFF,
    summary: 'PERT mean and variance from optimistic / most likely / pessimistic minutes',
    body: threePointInput,
    response: threePointEstimate,
    handler: async ({ body }) => estimates.threePoint(body),
  }),
]
