// Account routes: invitations (owner), one-time links (public), reset requests (public), sign out everywhere, bench stations and PINs.
import type { Request } from 'express'
import { z } from 'zod'
import {
  invitation,
  invitationInput,
  linkInfo,
  linkPassword,
  linkToken,
  pinCheck,
  pinInput,
  pinSession,
  pinSet,
  resetRequest,
  resetRequested,
  sentInvitation,
  signedOutEverywhere,
  stationInput,
  stationPerson,
} from '../../shared/schemas/account'
import { sessionInfo, type SessionUser } from '../../shared/schemas/session'
import { EVERYONE, STAFF, type Role } from '../../shared/domain/roles'
import { AppError } from '../errors/app-error'
import { route, type Deps } from '../lib/route'
import { csrfToken } from '../middleware/csrf'
import { loadSessionUser, stationUser } from '../middleware/auth'
import * as accounts from '../services/accounts'
import * as station from '../services/bench-station'
import { audit } from '../services/audit'
import { idParam } from './params'

const OWNER: Role[] = ['owner']
const BENCH: Role[] = ['bench']
const lifetimes = (deps: Deps) => deps.accounts ?? { ...accounts.DEFAULT_LIFETIMES, pinSeconds: 120, benchSessionDays: 30 }
/** Where the request came in, for links when the workshop has no public address. */
const arrivedAt = (req: Request): accounts.ArrivedAt => ({ port: req.socket.localPort, secure: req.secure })
const save = (req: Request) => new Promise<void>((r, j) => req.session.save((e) => (e ? j(e) : r())))
const notStation = () =>
  new AppError({ code: 'unprocessable', message: 'This tablet is not signed in as a bench station; a manager can make it one from the bench page' })

/** Signs the browser in as this user (a new session id) and answers like POST /session. */
async function signInAs(req: Request, deps: Deps, userId: number) {
  const user = await loadSessionUser(deps.db, userId)
  if (!user) throw new AppError({ code: 'unauthenticated', message: 'This account cannot sign in; ask the workshop owner.' })
  await new Promise<void>((r, j) => req.login(user, (e) => (e ? j(e) : r())))
  const token = csrfToken(req)
  await save(req)
  return { user, csrfToken: token }
}

export const accountRoutes = [
  route({
    method: 'get',
    path: '/invitations',
    roles: OWNER,
    summary: 'Invitations not yet accepted (owner)',
    response: z.array(invitation),
    handler: ({ deps, actor }) => accounts.listInvitations(deps.db, actor.workshopId),
  }),
  route({
    method: 'post',
    path: '/invitations',
    roles: OWNER,
    status: 201,
    summary: 'Invite someone by e-mail with a one-time link (owner)',
    body: invitationInput,
    response: sentInvitation,
    handler: ({ deps, actor, body, req }) => accounts.invite(deps, actor, body, arrivedAt(req), lifetimes(deps)),
  }),
  route({
    method: 'post',
    path: '/invitations/:id/resend',
    roles: OWNER,
    summary: 'Send an invitation again with a new link; the old link stops working (owner)',
    params: idParam,
    response: sentInvitation,
    handler: ({ deps, actor, params, req }) => accounts.resendInvitation(deps, actor, params.id, arrivedAt(req), lifetimes(deps)),
  }),
  route({
    method: 'delete',
    path: '/invitations/:id',
    roles: OWNER,
    summary: 'Withdraw an invitation; its link stops working (owner)',
    params: idParam,
    handler: async ({ deps, actor, params }) => {
      await accounts.withdrawInvitation(deps, actor, params.id)
    },
  }),

  route({
    method: 'get',
    path: '/account-links/:token',
    roles: 'public',
    summary: 'What a one-time link is for (invitation or new password), if it still works',
    params: linkToken,
    response: linkInfo,
    handler: ({ deps, params }) => accounts.linkInfo(deps.db, params.token),
  }),
  route({
    method: 'post',
    path: '/account-links/:token',
    roles: 'public',
    summary: 'Use a one-time link: choose the password, then be signed in (a reset signs out every other session)',
    params: linkToken,
    body: linkPassword,
    response: sessionInfo,
    handler: async ({ deps, params, body, req }) => {
      const used = await accounts.useLink(deps, params.token, body.password)
      if (used.kind === 'reset') await accounts.endUserSessions(deps, used.userId)
      return signInAs(req, deps, used.userId)
    },
  }),
  route({
    method: 'post',
    path: '/password-reset',
    roles: 'public',
    status: 202,
    summary: 'Ask for a new-password link by e-mail (the answer is the same whether or not the address has an account)',
    body: resetRequest,
    response: resetRequested,
    handler: async ({ deps, body, req }) => {
      // Not awaited: the answer must not wait longer (or differ) when the address has an account.
      void accounts
        .requestReset(deps, body.email, arrivedAt(req), lifetimes(deps))
        .catch((err: Error) => console.error('[accounts] reset request failed:', err.message))
      return {
        ok: true,
        message: `If ${body.email} belongs to an account here, a link to choose a new password is on its way. It works once, for ${lifetimes(deps).resetMinutes} minutes.`,
      }
    },
  }),
  route({
    method: 'delete',
    path: '/session/everywhere',
    roles: EVERYONE,
    summary: 'Sign out everywhere: every session of this user ends, this one too',
    response: signedOutEverywhere,
    handler: async ({ deps, actor, req, res }) => {
      if (actor.station)
        throw new AppError({ code: 'unprocessable', message: 'A bench station is signed out with “Sign out”; sign out everywhere from your own account' })
      await deps.db.transaction((tx) => audit(tx, actor, 'sign-out-everywhere', 'user', actor.userId, {}))
      const ended = await accounts.endUserSessions(deps, actor.userId)
      await new Promise<void>((r) => req.session.destroy(() => r()))
      res.clearCookie('millgrain.sid')
      return { ok: true, ended }
    },
  }),

  route({
    method: 'put',
    path: '/me/pin',
    roles: EVERYONE,
    summary: 'Set my own bench PIN (4–6 digits)',
    body: pinInput,
    response: pinSet,
    handler: ({ deps, actor, body }) => {
      if (actor.station) throw new AppError({ code: 'unprocessable', message: 'Set your PIN from your own account, not at the station' })
      if (actor.personId === null)
        throw new AppError({ code: 'unprocessable', message: 'Your account is not linked to a person at a bench; ask the owner to link it' })
      return station.setPin(deps, actor, actor.personId, body.pin)
    },
  }),
  route({
    method: 'put',
    path: '/people/:id/pin',
    roles: OWNER,
    summary: 'Set a person’s bench PIN (owner)',
    params: idParam,
    body: pinInput,
    response: pinSet,
    handler: ({ deps, actor, params, body }) => station.setPin(deps, actor, params.id, body.pin),
  }),

  route({
    method: 'post',
    path: '/bench-station',
    roles: STAFF,
    summary: 'Sign this tablet in as a bench station for one bench (people act there with their PIN)',
    body: stationInput,
    response: sessionInfo,
    handler: async ({ deps, actor, body, req }) => {
      const s = await station.stationBench(deps.db, actor.workshopId, body.benchId)
      await deps.db.transaction((tx) => audit(tx, actor, 'start-station', 'bench', s.benchId, { benchName: s.benchName }))
      req.session.station = s
      delete req.session.benchPerson
      req.session.cookie.maxAge = lifetimes(deps).benchSessionDays * 86_400_000
      const token = csrfToken(req)
      await save(req)
      return { user: stationUser(req.user as SessionUser, s), csrfToken: token }
    },
  }),
  route({
    method: 'get',
    path: '/bench-station/people',
    roles: BENCH,
    summary: 'The people who can act at this station, and whether each has a PIN',
    response: z.array(stationPerson),
    handler: ({ deps, actor }) => {
      if (!actor.station) throw notStation()
      return station.stationPeople(deps.db, actor.workshopId)
    },
  }),
  route({
    method: 'post',
    path: '/bench-station/pin',
    roles: BENCH,
    summary: 'A person enters their PIN at the station; the answer’s token lets them act until their action or the time runs out',
    body: pinCheck,
    response: pinSession,
    handler: async ({ deps, actor, body, req }) => {
      if (!actor.station) throw notStation()
      const r = await station.checkPin(deps, actor, actor.station, body.personId, body.pin, lifetimes(deps).pinSeconds)
      req.session.benchPerson = r.session
      return r.answer
    },
  }),
  route({
    method: 'delete',
    path: '/bench-station/pin',
    roles: BENCH,
    summary: 'End the PIN session now (the person is done)',
    handler: async ({ req }) => {
      delete req.session.benchPerson
    },
  }),
]
