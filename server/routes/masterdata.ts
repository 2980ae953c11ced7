// Master data routes: operation kinds, benches, people, calendar, routings, customers, users.
import { bench, benchInput, benchUpdate, downtimeInput } from '../../shared/schemas/bench'
import {
  bankHolidaysAdded,
  bankHolidaysInput,
  closure,
  closureInput,
  closureRemoved,
  workshopSettings,
  workshopSettingsInput,
} from '../../shared/schemas/calendar'
import { listQuery } from '../../shared/schemas/common'
import { customer, customerInput, customerPage, customerUpdate } from '../../shared/schemas/customer'
import { operationKind, operationKindInput, operationKindUpdate } from '../../shared/schemas/operation-kind'
import { leaveInput, person, personInput, personUpdate } from '../../shared/schemas/person'
import { routing, routingInput, routingUpdate } from '../../shared/schemas/routing'
import { user, userCreate, userUpdate } from '../../shared/schemas/user'
import { EVERYONE, STAFF, type Role } from '../../shared/domain/roles'
import { route } from '../lib/route'
import { suggestionForRequest } from '../lib/public-url'
import * as benches from '../services/benches'
import * as calendar from '../services/calendar'
import * as customers from '../services/customers'
import * as kinds from '../services/operation-kinds'
import * as people from '../services/people'
import * as routings from '../services/routings'
import * as users from '../services/users'
import { childParam, idParam } from './params'
import { z, type ZodType } from 'zod'

const OWNER: Role[] = ['owner']
const FRONT: Role[] = ['owner', 'manager', 'sales']

/**
 * Partial changes keep only the fields the client sent: zod 4 still fills `.default()` values inside `.partial()`,
 * which would silently reset capacity, skills, linked user, e-mail… on every PATCH.
 */
function sentOnly<T extends Record<string, unknown>>(schema: ZodType<T>): ZodType<T> {
  return z.unknown().transform((raw, ctx) => {
    const r = schema.safeParse(raw)
    if (!r.success) {
      for (const issue of r.error.issues) ctx.addIssue({ ...issue } as Parameters<typeof ctx.addIssue>[0])
      return z.NEVER
    }
    const sent = raw !== null && typeof raw === 'object' ? (raw as Record<string, unknown>) : {}
    return Object.fromEntries(Object.entries(r.data).filter(([k]) => sent[k] !== undefined)) as T
  }) as unknown as ZodType<T>
}

export const masterDataRoutes = [
  route({
    method: 'get',
    path: '/operation-kinds',
    roles: EVERYONE,
    summary: 'Operation kinds',
    response: z.array(operationKind),
    handler: ({ deps, actor }) => kinds.listKinds(deps.db, actor.workshopId),
  }),
  route({
    method: 'post',
    path: '/operation-kinds',
    roles: STAFF,
    status: 201,
    summary: 'Add an operation kind',
    body: operationKindInput,
    response: operationKind,
    handler: ({ deps, actor, body }) => kinds.createKind(deps, actor, body),
  }),
  route({
    method: 'patch',
    path: '/operation-kinds/:id',
    roles: STAFF,
    summary: 'Change an operation kind',
    params: idParam,
    body: sentOnly(operationKindUpdate),
    response: operationKind,
    handler: ({ deps, actor, params, body }) => kinds.updateKind(deps, actor, params.id, body),
  }),

  route({
    method: 'get',
    path: '/benches',
    roles: EVERYONE,
    summary: 'Benches with capabilities and downtime',
    response: z.array(bench),
    handler: ({ deps, actor }) => benches.listBenches(deps.db, actor.workshopId),
  }),
  route({
    method: 'post',
    path: '/benches',
    roles: STAFF,
    status: 201,
    summary: 'Add a bench',
    body: benchInput,
    response: bench,
    handler: ({ deps, actor, body }) => benches.createBench(deps, actor, body),
  }),
  route({
    method: 'patch',
    path: '/benches/:id',
    roles: STAFF,
    summary: 'Change a bench',
    params: idParam,
    body: sentOnly(benchUpdate),
    response: bench,
    handler: ({ deps, actor, params, body }) => benches.updateBench(deps, actor, params.id, body),
  }),
  route({
    method: 'post',
    path: '/benches/:id/downtime',
    roles: STAFF,
    status: 201,
    summary: 'Add bench downtime',
    params: idParam,
    body: downtimeInput,
    response: bench,
    handler: ({ deps, actor, params, body }) => benches.addDowntime(deps, actor, params.id, body),
  }),
  route({
    method: 'delete',
    path: '/benches/:id/downtime/:childId',
    roles: STAFF,
    summary: 'Remove bench downtime',
    params: childParam,
    response: bench,
    handler: ({ deps, actor, params }) => benches.removeDowntime(deps, actor, params.id, params.childId),
  }),

  route({
    method: 'get',
    path: '/people',
    roles: EVERYONE,
    summary: 'People with skills and leave (hourly costs only for the owner and the manager)',
    response: z.array(person),
    handler: async ({ deps, actor }) => {
      const list = await people.listPeople(deps.db, actor.workshopId)
      if (actor.role === 'owner' || actor.role === 'manager') return list
      // What a colleague's hour costs is not for the bench or the sales desk.
      return list.map(({ hourlyRateMinor: _rate, ...rest }) => rest)
    },
  }),
  route({
    method: 'post',
    path: '/people',
    roles: STAFF,
    status: 201,
    summary: 'Add a person',
    body: personInput,
    response: person,
    handler: ({ deps, actor, body }) => people.createPerson(deps, actor, body),
  }),
  route({
    method: 'patch',
    path: '/people/:id',
    roles: STAFF,
    summary: 'Change a person and their skills',
    params: idParam,
    body: sentOnly(personUpdate),
    response: person,
    handler: ({ deps, actor, params, body }) => people.updatePerson(deps, actor, params.id, body),
  }),
  route({
    method: 'post',
    path: '/people/:id/leave',
    roles: STAFF,
    status: 201,
    summary: 'Add leave',
    params: idParam,
    body: leaveInput,
    response: person,
    handler: ({ deps, actor, params, body }) => people.addLeave(deps, actor, params.id, body),
  }),
  route({
    method: 'delete',
    path: '/people/:id/leave/:childId',
    roles: STAFF,
    summary: 'Remove leave',
    params: childParam,
    response: person,
    handler: ({ deps, actor, params }) => people.removeLeave(deps, actor, params.id, params.childId),
  }),

  route({
    method: 'get',
    path: '/workshop',
    roles: EVERYONE,
    summary: 'Workshop settings and calendar',
    response: workshopSettings,
    handler: async ({ deps, actor, req }) => ({
      ...(await calendar.getSettings(deps.db, actor.workshopId)),
      publicUrlSuggestion: suggestionForRequest(req, deps.listenHost),
    }),
  }),
  route({
    method: 'put',
    path: '/workshop',
    roles: OWNER,
    summary: 'Change workshop settings (owner)',
    body: workshopSettingsInput,
    response: workshopSettings,
    handler: async ({ deps, actor, body, req }) => ({
      ...(await calendar.updateSettings(deps, actor, body)),
      publicUrlSuggestion: suggestionForRequest(req, deps.listenHost),
    }),
  }),
  route({
    method: 'get',
    path: '/closures',
    roles: EVERYONE,
    summary: 'Workshop closures',
    response: z.array(closure),
    handler: ({ deps, actor }) => calendar.listClosures(deps.db, actor.workshopId),
  }),
  route({
    method: 'post',
    path: '/closures',
    roles: STAFF,
    status: 201,
    summary: 'Add a closure',
    body: closureInput,
    response: closure,
    handler: ({ deps, actor, body }) => calendar.addClosure(deps, actor, body),
  }),
  route({
    method: 'post',
    path: '/closures/bank-holidays',
    roles: STAFF,
    status: 201,
    summary: "Add a year's England and Wales bank holidays as closures",
    body: bankHolidaysInput,
    response: bankHolidaysAdded,
    handler: ({ deps, actor, body }) => calendar.addBankHolidays(deps, actor, body),
  }),
  route({
    method: 'delete',
    path: '/closures/:id',
    roles: STAFF,
    summary: 'Remove a closure',
    params: idParam,
    response: closureRemoved,
    handler: ({ deps, actor, params }) => calendar.removeClosure(deps, actor, params.id),
  }),

  route({
    method: 'get',
    path: '/routings',
    roles: EVERYONE,
    summary: 'Routings with steps',
    response: z.array(routing),
    handler: ({ deps, actor }) => routings.listRoutings(deps.db, actor.workshopId),
  }),
  route({
    method: 'get',
    path: '/routings/:id',
    roles: EVERYONE,
    summary: 'One routing',
    params: idParam,
    response: routing,
    handler: ({ deps, actor, params }) => routings.getRouting(deps.db, actor.workshopId, params.id),
  }),
  route({
    method: 'post',
    path: '/routings',
    roles: STAFF,
    status: 201,
    summary: 'Add a routing',
    body: routingInput,
    response: routing,
    handler: ({ deps, actor, body }) => routings.createRouting(deps, actor, body),
  }),
  route({
    method: 'put',
    path: '/routings/:id',
    roles: STAFF,
    summary: 'Replace a routing',
    params: idParam,
    body: routingUpdate,
    response: routing,
    handler: ({ deps, actor, params, body }) => routings.updateRouting(deps, actor, params.id, body),
  }),

  route({
    method: 'get',
    path: '/customers',
    roles: FRONT,
    summary: 'Customers (search, sort, pages)',
    query: listQuery,
    response: customerPage,
    handler: ({ deps, actor, query }) => customers.listCustomers(deps.db, actor.workshopId, query),
  }),
  route({
    method: 'get',
    path: '/customers/:id',
    roles: FRONT,
    summary: 'One customer',
    params: idParam,
    response: customer,
    handler: ({ deps, actor, params }) => customers.getCustomer(deps.db, actor.workshopId, params.id),
  }),
  route({
    method: 'post',
    path: '/customers',
    roles: FRONT,
    status: 201,
    summary: 'Add a customer',
    body: customerInput,
    response: customer,
    handler: ({ deps, actor, body }) => customers.createCustomer(deps, actor, body),
  }),
  route({
    method: 'patch',
    path: '/customers/:id',
    roles: FRONT,
    summary: 'Change a customer',
    params: idParam,
    body: sentOnly(customerUpdate),
    response: customer,
    handler: ({ deps, actor, params, body }) => customers.updateCustomer(deps, actor, params.id, body),
  }),

  route({
    method: 'get',
    path: '/users',
    roles: OWNER,
    summary: 'Users (owner)',
    response: z.array(user),
    handler: ({ deps, actor }) => users.listUsers(deps.db, actor.workshopId),
  }),
  route({
    method: 'post',
    path: '/users',
    roles: OWNER,
    status: 201,
    summary: 'Create a user (owner)',
    body: userCreate,
    response: user,
    handler: ({ deps, actor, body }) => users.createUser(deps, actor, body),
  }),
  route({
    method: 'patch',
    path: '/users/:id',
    roles: OWNER,
    summary: 'Change role, switch off, reset password (owner)',
    params: idParam,
    body: userUpdate,
    response: user,
    handler: ({ deps, actor, params, body }) => users.updateUser(deps, actor, params.id, body),
  }),
]
