// On a bench station tablet, writes are made by the person whose PIN was entered: the x-bench-person token names them.
import type { Request, RequestHandler } from 'express'
import type { SessionUser } from '../../shared/schemas/session'
import { AppError } from '../errors/app-error'
import { tokenMatches, type BenchPersonSession } from '../services/bench-station'

export const BENCH_PERSON_HEADER = 'x-bench-person'

/** Routes a station may call without a PIN: entering or ending a PIN, and signing the tablet out. */
const WITHOUT_PIN = new Set(['POST /bench-station/pin', 'DELETE /bench-station/pin', 'DELETE /session'])

export interface BenchPersonRequest extends Request {
  benchPerson?: BenchPersonSession
}

const pinFirst = (message: string) => new AppError({ code: 'forbidden', message, details: { reason: 'bench-pin' } })

/**
 * Resolves the acting person on a station tablet. With a valid token the request acts as that person (their own account
 * when they have one, else the station's); reads without one see the station only; writes without one are refused.
 */
export const resolveBenchPerson: RequestHandler = (req, _res, next) => {
  const user = req.user as SessionUser | undefined
  if (!user?.station) return next()
  const sent = req.get(BENCH_PERSON_HEADER)
  const open = req.session.benchPerson
  if (sent && tokenMatches(sent, open)) {
    req.user = { ...user, id: open!.userId ?? user.id, name: open!.name, personId: open!.personId }
    ;(req as BenchPersonRequest).benchPerson = open
    return next()
  }
  if (open && open.expiresAt <= Date.now()) delete req.session.benchPerson
  if (req.method === 'GET' || WITHOUT_PIN.has(`${req.method} ${req.path}`)) return next()
  next(pinFirst(sent ? 'Your PIN time is over; tap your name and enter your PIN again.' : 'Tap your name and enter your PIN first.'))
}

/** After a write made with a PIN, that PIN session ends (not one opened by this very request), so the next person must enter theirs. */
export function endPinAfterWrite(req: Request) {
  const used = (req as BenchPersonRequest).benchPerson
  if (req.method !== 'GET' && used && req.session.benchPerson?.tokenHash === used.tokenHash) delete req.session.benchPerson
}
