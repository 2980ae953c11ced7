// Metal routes: alloys and prices, issues and returns at the bench, corrections, purchases and stock, the job bag's metal account,
// loss figures, tolerances per kind of work, and refining lots.
import type { Role } from '../../shared/domain/roles'
import {
  adjustmentInput, alloyInput, alloyPriceInput, alloyUpdate, correctionInput, issueInput, lossQuery, movementQuery, purchaseInput, refiningItemInput, refiningLotInput,
  refiningSendInput, refiningSettleInput, returnInput, toleranceInput,
} from '../../shared/schemas/metal'
import { route } from '../lib/route'
import * as metal from '../services/metal'
import { idParam } from './params'

const ALL: Role[] = ['owner', 'manager', 'bench', 'sales']
const STAFF: Role[] = ['owner', 'manager']
const OWNER: Role[] = ['owner']
/** Everyone who works at a bench weighs metal out and back in. */
const WORKERS: Role[] = ['owner', 'manager', 'bench']

export const metalRoutes = [
  // alloys and prices
  route({ method: 'get', path: '/alloys', roles: ALL, summary: 'The workshop’s alloys (price per gram in force today for owner and manager)', handler: ({ deps, actor }) => metal.listAlloys(deps.db, actor) }),
  route({ method: 'post', path: '/alloys', roles: OWNER, status: 201, summary: 'Add an alloy (owner)', body: alloyInput, handler: ({ deps, actor, body }) => metal.createAlloy(deps, actor, body) }),
  route({ method: 'patch', path: '/alloys/:id', roles: OWNER, summary: 'Change an alloy (owner; names the version edited)', params: idParam, body: alloyUpdate, handler: ({ deps, actor, params, body }) => metal.updateAlloy(deps, actor, params.id, body) }),
  route({ method: 'get', path: '/alloys/:id/prices', roles: STAFF, summary: 'Price history of an alloy, newest first (owner, manager)', params: idParam, handler: ({ deps, actor, params }) => metal.listPrices(deps.db, actor, params.id) }),
  route({ method: 'post', path: '/alloys/:id/prices', roles: OWNER, status: 201, summary: 'Set an alloy’s price per gram from a date (owner)', params: idParam, body: alloyPriceInput, handler: ({ deps, actor, params, body }) => metal.setPrice(deps, actor, params.id, body) }),
  // the ledger
  route({ method: 'get', path: '/metal/movements', roles: WORKERS, summary: 'Metal entries (by job bag, alloy, lot or person) with their corrections', query: movementQuery, handler: ({ deps, actor, query }) => metal.listMovements(deps.db, actor, query) }),
  route({ method: 'post', path: '/metal/issues', roles: WORKERS, status: 201, summary: 'Issue metal to a person for a job bag (and step), from stock or the customer’s own', body: issueInput, handler: ({ deps, actor, body }) => metal.issueMetal(deps, actor, body) }),
  route({ method: 'post', path: '/metal/returns', roles: WORKERS, status: 201, summary: 'Weigh metal back from a job bag: the piece, scrap or lemel', body: returnInput, handler: ({ deps, actor, body }) => metal.returnMetal(deps, actor, body) }),
  route({ method: 'post', path: '/metal/movements/:id/corrections', roles: WORKERS, status: 201, summary: 'Correct a metal entry to the right weight, saying why (kept with who and when)', params: idParam, body: correctionInput, handler: ({ deps, actor, params, body }) => metal.correctMovement(deps, actor, params.id, body) }),
  route({ method: 'post', path: '/metal/purchases', roles: STAFF, status: 201, summary: 'Metal bought into stock (owner, manager)', body: purchaseInput, handler: ({ deps, actor, body }) => metal.purchaseMetal(deps, actor, body) }),
  route({ method: 'post', path: '/metal/adjustments', roles: OWNER, status: 201, summary: 'Stock count difference, with a reason (owner)', body: adjustmentInput, handler: ({ deps, actor, body }) => metal.adjustStock(deps, actor, body) }),
  route({ method: 'get', path: '/metal/stock', roles: STAFF, summary: 'Stock per alloy: bought, issued, returned, refining, adjustments, balance, fine weight and value (owner, manager)', handler: ({ deps, actor }) => metal.stock(deps.db, actor.workshopId) }),
  route({ method: 'get', path: '/metal/losses', roles: OWNER, summary: 'Metal loss by person, kind of work, month or alloy (owner)', query: lossQuery, handler: ({ deps, actor, query }) => metal.lossReport(deps.db, actor.workshopId, query) }),
  route({ method: 'get', path: '/job-bags/:id/metal', roles: ALL, summary: 'A job bag’s metal: issued, returned by form, loss per step and person against tolerance, hallmarking', params: idParam, handler: ({ deps, actor, params }) => metal.jobBagMetal(deps.db, actor, params.id) }),
  // tolerances
  route({ method: 'get', path: '/metal/tolerances', roles: ALL, summary: 'Loss tolerance of each kind of work', handler: ({ deps, actor }) => metal.listTolerances(deps.db, actor.workshopId) }),
  route({ method: 'put', path: '/metal/tolerances/:id', roles: OWNER, summary: 'Set the loss tolerance of a kind of work (owner; id = kind)', params: idParam, body: toleranceInput, handler: ({ deps, actor, params, body }) => metal.setTolerance(deps, actor, params.id, body) }),
  // refining lots
  route({ method: 'get', path: '/refining-lots', roles: STAFF, summary: 'Refining lots, newest first (owner, manager)', handler: ({ deps, actor }) => metal.listLots(deps.db, actor.workshopId) }),
  route({ method: 'get', path: '/refining-lots/:id', roles: STAFF, summary: 'One refining lot with its contents and recovery (owner, manager)', params: idParam, handler: ({ deps, actor, params }) => metal.getLot(deps.db, actor.workshopId, params.id) }),
  route({ method: 'post', path: '/refining-lots', roles: STAFF, status: 201, summary: 'Open a refining lot (owner, manager)', body: refiningLotInput, handler: ({ deps, actor, body }) => metal.createLot(deps, actor, body) }),
  route({ method: 'post', path: '/refining-lots/:id/items', roles: STAFF, status: 201, summary: 'Put scrap or lemel from stock into an open lot (owner, manager)', params: idParam, body: refiningItemInput, handler: ({ deps, actor, params, body }) => metal.addToLot(deps, actor, params.id, body) }),
  route({ method: 'post', path: '/refining-lots/:id/send', roles: STAFF, summary: 'Mark a lot sent to the refiner (owner, manager; names the version)', params: idParam, body: refiningSendInput, handler: ({ deps, actor, params, body }) => metal.sendLot(deps, actor, params.id, body) }),
  route({ method: 'post', path: '/refining-lots/:id/settle', roles: STAFF, summary: 'Record what the refiner credited: fine metal, money, metal returned (owner, manager; names the version)', params: idParam, body: refiningSettleInput, handler: ({ deps, actor, params, body }) => metal.settleLot(deps, actor, params.id, body) }),
]
