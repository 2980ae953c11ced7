// Bench routes: next for me, my work, and the replay-safe transitions claim / release / start / pause / resume / finish; outside work.
import { benchList, claimInput, finishInput, mineQuery, outsideInput, pauseInput, queueQuery, releaseInput, resumeInput, startInput, transitionResult } from '../../shared/schemas/bench-floor'
import { STAFF, type Role } from '../../shared/domain/roles'
import { route } from '../lib/route'
import * as bench from '../services/bench-floor'
import { idParam } from './params'

// Bench users act for themselves; managers and the owner may act on behalf of a person (personId).
const WORKERS: Role[] = ['owner', 'manager', 'bench']

export const benchRoutes = [
  route({ method: 'get', path: '/bench/next', roles: WORKERS, summary: 'Ready operations this person can do at this bench, in plan order', query: queueQuery, response: benchList, handler: ({ deps, actor, query }) => bench.nextForMe(deps.db, actor, query) }),
  route({ method: 'get', path: '/bench/mine', roles: WORKERS, summary: 'Operations this person has claimed, running or paused', query: mineQuery, response: benchList, handler: ({ deps, actor, query }) => bench.myWork(deps.db, actor, query) }),
  route({ method: 'post', path: '/bench/operations/:id/claim', roles: WORKERS, summary: 'Claim a ready operation (exactly one claimer wins)', params: idParam, body: claimInput, response: transitionResult, handler: ({ deps, actor, params, body }) => bench.claim(deps, actor, params.id, body) }),
  route({ method: 'post', path: '/bench/operations/:id/release', roles: WORKERS, summary: 'Give a claimed operation back (ready again)', params: idParam, body: releaseInput, response: transitionResult, handler: ({ deps, actor, params, body }) => bench.release(deps, actor, params.id, body) }),
  route({ method: 'post', path: '/bench/operations/:id/start', roles: WORKERS, summary: 'Start a claimed operation (hazards need acknowledging)', params: idParam, body: startInput, response: transitionResult, handler: ({ deps, actor, params, body }) => bench.start(deps, actor, params.id, body) }),
  route({ method: 'post', path: '/bench/operations/:id/pause', roles: WORKERS, summary: 'Pause with a reason', params: idParam, body: pauseInput, response: transitionResult, handler: ({ deps, actor, params, body }) => bench.pause(deps, actor, params.id, body) }),
  route({ method: 'post', path: '/bench/operations/:id/resume', roles: WORKERS, summary: 'Resume a paused operation', params: idParam, body: resumeInput, response: transitionResult, handler: ({ deps, actor, params, body }) => bench.resume(deps, actor, params.id, body) }),
  route({ method: 'post', path: '/bench/operations/:id/finish', roles: WORKERS, summary: 'Finish (readies the next steps)', params: idParam, body: finishInput, response: transitionResult, handler: ({ deps, actor, params, body }) => bench.finish(deps, actor, params.id, body) }),
  route({ method: 'post', path: '/operations/:id/send-out', roles: STAFF, summary: 'Send outside work out (casting, hallmarking)', params: idParam, body: outsideInput, response: transitionResult, handler: ({ deps, actor, params, body }) => bench.sendOut(deps, actor, params.id, body) }),
  route({ method: 'post', path: '/operations/:id/receive', roles: STAFF, summary: 'Book outside work back (readies the next steps)', params: idParam, body: outsideInput, response: transitionResult, handler: ({ deps, actor, params, body }) => bench.receive(deps, actor, params.id, body) }),
]
