// Bench station tablets: a manager signs a tablet in for one bench; a person taps their name and enters their PIN to act as themselves.
import { createHash, randomBytes, timingSafeEqual } from 'node:crypto'
import { hash, verify } from '@node-rs/argon2'
import { and, asc, eq, sql } from 'drizzle-orm'
import type { PinSession, PinSet, StationPerson } from '../../shared/schemas/account'
import type { Db } from '../db/client'
import { benches, people, personPins, users } from '../db/schema/index'
import { AppError, invalid, notFound } from '../errors/app-error'
import type { Actor, Deps } from '../lib/route'
import { audit } from './audit'

/** Wrong PINs in a row before a person's PIN is locked, and for how long. Common practice for short PINs, no source. */
export const PIN_TRIES = 5
export const PIN_LOCK_MINUTES = 15

declare module 'express-session' {
  interface SessionData {
    /** Set on a tablet signed in as a bench station. */
    station?: { benchId: number; benchName: string }
    /** The person whose PIN was entered last on this station, until their action or the time runs out. */
    benchPerson?: BenchPersonSession
  }
}
export interface BenchPersonSession {
  tokenHash: string
  personId: number
  name: string
  userId: number | null
  expiresAt: number
}

const sha256 = (s: string) => createHash('sha256').update(s, 'utf8').digest('hex')
/** argon2id with the same cost as passwords. */
const hashPin = (pin: string) => hash(pin, { memoryCost: 19456, timeCost: 2, parallelism: 1 })

export function tokenMatches(sent: string, open: BenchPersonSession | undefined, now = Date.now()): boolean {
  if (!open || open.expiresAt <= now) return false
  const a = Buffer.from(sha256(sent), 'hex')
  const b = Buffer.from(open.tokenHash, 'hex')
  return a.length === b.length && timingSafeEqual(a, b)
}

export async function stationBench(db: Db, workshopId: number, benchId: number) {
  const [b] = await db
    .select({ id: benches.id, name: benches.name, active: benches.active })
    .from(benches)
    .where(and(eq(benches.id, benchId), eq(benches.workshopId, workshopId)))
  if (!b) throw invalid('benchId', 'is not a bench of this workshop')
  if (!b.active) throw invalid('benchId', 'is switched off')
  return { benchId: b.id, benchName: b.name }
}

export async function stationPeople(db: Db, workshopId: number): Promise<StationPerson[]> {
  const rows = await db
    .select({ id: people.id, name: people.name, pin: personPins.personId })
    .from(people)
    .leftJoin(personPins, eq(personPins.personId, people.id))
    .where(and(eq(people.workshopId, workshopId), eq(people.active, true)))
    .orderBy(asc(people.name))
  return rows.map((r) => ({ id: r.id, name: r.name, hasPin: r.pin !== null }))
}

/** Checks a person's PIN; a right one opens a PIN session (returned, with its token, to keep in the tablet's memory only). */
export async function checkPin(
  deps: Pick<Deps, 'db'>,
  actor: Actor,
  station: { benchId: number; benchName: string },
  personId: number,
  pin: string,
  seconds: number,
  now = new Date(),
): Promise<{ session: BenchPersonSession; answer: PinSession }> {
  const { db } = deps
  const [p] = await db
    .select({ id: people.id, name: people.name, active: people.active, userId: people.userId, userActive: users.active, pin: personPins })
    .from(people)
    .leftJoin(personPins, eq(personPins.personId, people.id))
    .leftJoin(users, eq(users.id, people.userId))
    .where(and(eq(people.id, personId), eq(people.workshopId, actor.workshopId)))
  if (!p || !p.active) throw invalid('personId', 'is not a person working here')
  if (!p.pin)
    throw new AppError({
      code: 'unprocessable',
      message: `${p.name} has no PIN yet; set one from your own account, or ask the owner`,
      fields: { pin: 'is not set yet' },
    })
  if (p.pin.lockedUntil && p.pin.lockedUntil.getTime() > now.getTime()) {
    const min = Math.ceil((p.pin.lockedUntil.getTime() - now.getTime()) / 60_000)
    throw new AppError({
      code: 'rate-limited',
      message: `Too many wrong PINs for ${p.name}; try again in ${min} min, or ask the owner to set a new PIN`,
      details: { lockedMinutes: min },
    })
  }
  const ok = await verify(p.pin.pinHash, pin).catch(() => false)
  if (!ok) {
    const [u] = await db
      .update(personPins)
      .set({ failedAttempts: sql`${personPins.failedAttempts} + 1` })
      .where(eq(personPins.personId, p.id))
      .returning({ n: personPins.failedAttempts })
    const n = u?.n ?? PIN_TRIES
    if (n >= PIN_TRIES) {
      await db
        .update(personPins)
        .set({ failedAttempts: 0, lockedUntil: new Date(now.getTime() + PIN_LOCK_MINUTES * 60_000) })
        .where(eq(personPins.personId, p.id))
      await db.transaction((tx) => audit(tx, actor, 'pin-locked', 'person', p.id, { station: station.benchName, tries: PIN_TRIES }))
      throw new AppError({
        code: 'rate-limited',
        message: `Too many wrong PINs for ${p.name}; the PIN is locked for ${PIN_LOCK_MINUTES} min`,
        details: { lockedMinutes: PIN_LOCK_MINUTES },
      })
    }
    throw new AppError({
      code: 'unprocessable',
      message: `That PIN is not right; ${PIN_TRIES - n} ${PIN_TRIES - n === 1 ? 'try' : 'tries'} left`,
      fields: { pin: 'is not right' },
      details: { triesLeft: PIN_TRIES - n },
    })
  }
  if (p.pin.failedAttempts || p.pin.lockedUntil) await db.update(personPins).set({ failedAttempts: 0, lockedUntil: null }).where(eq(personPins.personId, p.id))
  const token = randomBytes(24).toString('base64url')
  const expiresAt = now.getTime() + seconds * 1000
  return {
    session: { tokenHash: sha256(token), personId: p.id, name: p.name, userId: p.userId && p.userActive ? p.userId : null, expiresAt },
    answer: { token, person: { id: p.id, name: p.name }, expiresAt: new Date(expiresAt).toISOString() },
  }
}

/** Sets a person's PIN (themselves, or the owner for anyone); earlier wrong tries and locks are cleared. */
export async function setPin(deps: Pick<Deps, 'db'>, actor: Actor, personId: number, pin: string): Promise<PinSet> {
  const [p] = await deps.db
    .select({ id: people.id, name: people.name })
    .from(people)
    .where(and(eq(people.id, personId), eq(people.workshopId, actor.workshopId)))
  if (!p) throw notFound('Person')
  const pinHash = await hashPin(pin)
  await deps.db.transaction(async (tx) => {
    await tx
      .insert(personPins)
      .values({ personId: p.id, pinHash })
      .onConflictDoUpdate({ target: personPins.personId, set: { pinHash, failedAttempts: 0, lockedUntil: null, updatedAt: new Date() } })
    await audit(tx, actor, 'set-pin', 'person', p.id, { self: actor.personId === p.id })
  })
  return { personId: p.id, hasPin: true }
}
