// Accounts that look after themselves: invitations and password resets by one-time e-mail links, and signing out everywhere.
import { createHash, randomBytes } from 'node:crypto'
import { and, desc, eq, gt, isNull, sql } from 'drizzle-orm'
import { alias } from 'drizzle-orm/pg-core'
import { ROLE_LABELS } from '../../shared/domain/roles'
import type { Invitation, InvitationInput, LinkInfo, SentInvitation } from '../../shared/schemas/account'
import type { Db, Trx } from '../db/client'
import { accountTokens, people, users, workshops } from '../db/schema/index'
import { AppError, invalid, notFound } from '../errors/app-error'
import type { Actor, Deps } from '../lib/route'
import { LOCK } from '../lib/locks'
import { suggestPublicUrl } from '../lib/public-url'
import { invitationMail, resetMail } from '../mail/account-templates'
import { dropSessionUsers } from '../lib/session-users'
import { audit } from './audit'
import { sendRecorded } from './mail'
import { hashPassword } from './users'
import { isUniqueViolation } from './versioned'

/** How long links last; from the configuration (INVITE_LINK_HOURS, RESET_LINK_MINUTES). */
export interface LinkLifetimes {
  inviteHours: number
  resetMinutes: number
}
export const DEFAULT_LIFETIMES: LinkLifetimes = { inviteHours: 72, resetMinutes: 60 }

export const sha256 = (s: string) => createHash('sha256').update(s, 'utf8').digest('hex')

/** 32 random bytes as base64url for the link; only its SHA-256 is stored. */
export function newLinkToken() {
  const token = randomBytes(32).toString('base64url')
  return { token, hash: sha256(token) }
}

/** Where a request came in: the local port it reached and whether it came over https (the route reads them from the request). */
export interface ArrivedAt {
  port: number | undefined
  secure: boolean
}

/** Where links point: the workshop's public address, else the address this server listens on (never the request's Host header). */
export function linkBase(at: ArrivedAt, listenHost: string | undefined, publicUrl: string): string {
  if (publicUrl.trim()) return publicUrl.trim().replace(/\/+$/, '')
  const port = at.port ?? 8080
  const scheme = at.secure ? 'https' : 'http'
  const s = suggestPublicUrl(port, listenHost ?? '127.0.0.1')
  if (s.reachable && s.url) return s.url.replace(/^http:/, `${scheme}:`)
  return `${scheme}://127.0.0.1:${port}`
}

export const invitePath = (token: string) => `/welcome/${token}`
export const resetPath = (token: string) => `/new-password/${token}`

const inviter = alias(users, 'inviter')

export async function listInvitations(db: Db, workshopId: number, now = new Date()): Promise<Invitation[]> {
  const rows = await db
    .select({ t: accountTokens, personName: people.name, invitedBy: inviter.name })
    .from(accountTokens)
    .leftJoin(people, eq(people.id, accountTokens.personId))
    .leftJoin(inviter, eq(inviter.id, accountTokens.createdBy))
    .where(and(eq(accountTokens.workshopId, workshopId), eq(accountTokens.kind, 'invite'), isNull(accountTokens.usedAt), isNull(accountTokens.withdrawnAt)))
    .orderBy(desc(accountTokens.createdAt), desc(accountTokens.id))
  return rows.map(({ t, personName, invitedBy }) => ({
    id: t.id,
    email: t.email,
    name: t.name,
    role: t.role!,
    personId: t.personId,
    personName: personName ?? null,
    createdAt: t.createdAt.toISOString(),
    expiresAt: t.expiresAt.toISOString(),
    expired: t.expiresAt.getTime() <= now.getTime(),
    invitedBy: invitedBy ?? null,
  }))
}

async function workshopOf(db: Db | Trx, workshopId: number) {
  const [w] = await db.select({ name: workshops.name, publicUrl: workshops.publicUrl }).from(workshops).where(eq(workshops.id, workshopId))
  return w!
}

async function sendInvitation(
  deps: Deps,
  actor: Actor,
  row: { id: number; email: string; name: string; role: string | null },
  token: string,
  at: ArrivedAt,
  hours: number,
) {
  const w = await workshopOf(deps.db, actor.workshopId)
  const link = `${linkBase(at, deps.listenHost, w.publicUrl)}${invitePath(token)}`
  const mail = invitationMail({
    workshopName: w.name,
    name: row.name,
    invitedBy: actor.name,
    roleLabel: ROLE_LABELS[row.role as keyof typeof ROLE_LABELS] ?? String(row.role),
    link,
    hours,
  })
  return sendRecorded(deps, {
    workshopId: actor.workshopId,
    to: row.email,
    kind: 'invitation',
    meta: { invitationId: row.id },
    content: mail.sent,
    kept: mail.kept,
  })
}

export async function invite(deps: Deps, actor: Actor, input: InvitationInput, at: ArrivedAt, life = DEFAULT_LIFETIMES): Promise<SentInvitation> {
  const { token, hash } = newLinkToken()
  const row = await deps.db.transaction(async (tx) => {
    const [taken] = await tx.select({ id: users.id }).from(users).where(eq(users.email, input.email))
    if (taken) throw new AppError({ code: 'conflict', message: `${input.email} has an account already`, fields: { email: 'has an account already' } })
    await tx.execute(sql`select pg_advisory_xact_lock(${LOCK.invitations}, ${actor.workshopId})`)
    const [pending] = await tx
      .select({ id: accountTokens.id })
      .from(accountTokens)
      .where(
        and(
          eq(accountTokens.workshopId, actor.workshopId),
          eq(accountTokens.kind, 'invite'),
          eq(accountTokens.email, input.email),
          isNull(accountTokens.usedAt),
          isNull(accountTokens.withdrawnAt),
        ),
      )
    if (pending)
      throw new AppError({
        code: 'conflict',
        message: `${input.email} is invited already; send that invitation again instead`,
        fields: { email: 'is invited already' },
        details: { invitationId: pending.id },
      })
    if (input.personId) {
      const [p] = await tx
        .select({ id: people.id, userId: people.userId })
        .from(people)
        .where(and(eq(people.id, input.personId), eq(people.workshopId, actor.workshopId)))
      if (!p) throw invalid('personId', 'is not a person of this workshop')
      if (p.userId) throw invalid('personId', 'has an account already')
    }
    const [r] = await tx
      .insert(accountTokens)
      .values({
        workshopId: actor.workshopId,
        kind: 'invite',
        tokenHash: hash,
        email: input.email,
        name: input.name,
        role: input.role,
        personId: input.personId ?? null,
        createdBy: actor.userId,
        expiresAt: new Date(Date.now() + life.inviteHours * 3_600_000),
      })
      .returning()
    await audit(tx, actor, 'invite', 'user-invitation', r!.id, { email: input.email, role: input.role, personId: input.personId ?? null })
    return r!
  })
  const mail = await sendInvitation(deps, actor, row, token, at, life.inviteHours)
  const inv = (await listInvitations(deps.db, actor.workshopId)).find((i) => i.id === row.id)!
  return { ...inv, mail: { status: mail.status, error: mail.error } }
}

async function pendingInvitation(tx: Trx, workshopId: number, id: number) {
  const [r] = await tx
    .select()
    .from(accountTokens)
    .where(and(eq(accountTokens.id, id), eq(accountTokens.workshopId, workshopId), eq(accountTokens.kind, 'invite')))
    .for('update')
  if (!r || r.withdrawnAt) throw notFound('Invitation')
  if (r.usedAt) throw new AppError({ code: 'conflict', message: `${r.name} has accepted the invitation already` })
  return r
}

/** A new link with a full lifetime; the old link stops working at once. */
export async function resendInvitation(deps: Deps, actor: Actor, id: number, at: ArrivedAt, life = DEFAULT_LIFETIMES): Promise<SentInvitation> {
  const { token, hash } = newLinkToken()
  const row = await deps.db.transaction(async (tx) => {
    const r = await pendingInvitation(tx, actor.workshopId, id)
    const [u] = await tx
      .update(accountTokens)
      .set({ tokenHash: hash, expiresAt: new Date(Date.now() + life.inviteHours * 3_600_000) })
      .where(eq(accountTokens.id, r.id))
      .returning()
    await audit(tx, actor, 'resend', 'user-invitation', r.id, { email: r.email })
    return u!
  })
  const mail = await sendInvitation(deps, actor, row, token, at, life.inviteHours)
  const inv = (await listInvitations(deps.db, actor.workshopId)).find((i) => i.id === row.id)!
  return { ...inv, mail: { status: mail.status, error: mail.error } }
}

export async function withdrawInvitation(deps: Deps, actor: Actor, id: number) {
  await deps.db.transaction(async (tx) => {
    const r = await pendingInvitation(tx, actor.workshopId, id)
    await tx.update(accountTokens).set({ withdrawnAt: new Date() }).where(eq(accountTokens.id, r.id))
    await audit(tx, actor, 'withdraw', 'user-invitation', r.id, { email: r.email })
  })
}

type TokenRow = typeof accountTokens.$inferSelect

/** Why a link cannot be used, or null when it can. */
function refusal(r: TokenRow | undefined, now: Date): AppError | null {
  if (!r)
    return new AppError({
      code: 'not-found',
      message: 'This link is not valid. Check that it was copied whole, or ask for a new one.',
      details: { reason: 'unknown' },
    })
  const gone = (message: string, reason: string) => new AppError({ code: 'not-found', status: 410, message, details: { reason } })
  if (r.usedAt) return gone('This link has been used already; each link works once. Sign in, or ask for a new link.', 'used')
  if (r.withdrawnAt)
    return gone(
      r.kind === 'invite' ? 'This invitation was withdrawn; ask the workshop owner.' : 'A newer link was sent since; use the newest one.',
      'withdrawn',
    )
  if (r.expiresAt.getTime() <= now.getTime())
    return gone(
      r.kind === 'invite'
        ? 'This invitation has expired; ask the workshop owner to send it again.'
        : 'This link has expired; ask for a new one from the sign-in page.',
      'expired',
    )
  return null
}

/** What a link is for (to show before the password is chosen). */
export async function linkInfo(db: Db, token: string, now = new Date()): Promise<LinkInfo> {
  const [row] = await db
    .select({ t: accountTokens, workshopName: workshops.name, userName: users.name, userActive: users.active })
    .from(accountTokens)
    .innerJoin(workshops, eq(workshops.id, accountTokens.workshopId))
    .leftJoin(users, eq(users.id, accountTokens.userId))
    .where(eq(accountTokens.tokenHash, sha256(token)))
  const no = refusal(row?.t, now)
  if (no) throw no
  if (row!.t.kind === 'reset' && !row!.userActive)
    throw new AppError({
      code: 'not-found',
      status: 410,
      message: 'This account has been switched off; ask the workshop owner.',
      details: { reason: 'switched-off' },
    })
  return {
    kind: row!.t.kind,
    email: row!.t.email,
    name: row!.t.kind === 'reset' ? (row!.userName ?? '') : row!.t.name,
    workshopName: row!.workshopName,
    expiresAt: row!.t.expiresAt.toISOString(),
  }
}

/** Uses a link once: an invitation makes the account, a reset sets the new password. Returns the user to sign in. */
export async function useLink(
  deps: Pick<Deps, 'db'>,
  token: string,
  password: string,
  now = new Date(),
): Promise<{ userId: number; kind: 'invite' | 'reset' }> {
  const passwordHash = await hashPassword(password)
  return deps.db.transaction(async (tx) => {
    const [r] = await tx
      .select()
      .from(accountTokens)
      .where(eq(accountTokens.tokenHash, sha256(token)))
      .for('update')
    const no = refusal(r, now)
    if (no) throw no
    const t = r!
    if (t.kind === 'invite') {
      const [u] = await tx
        .insert(users)
        .values({ workshopId: t.workshopId, email: t.email, name: t.name, role: t.role!, passwordHash })
        .returning({ id: users.id })
        .catch((e) => {
          throw isUniqueViolation(e) ? new AppError({ code: 'conflict', message: `${t.email} has an account already; sign in instead` }) : e
        })
      const userId = u!.id
      let personId: number | null = null
      if (t.personId) {
        const linked = await tx
          .update(people)
          .set({ userId, version: sql`${people.version} + 1` })
          .where(and(eq(people.id, t.personId), isNull(people.userId)))
          .returning({ id: people.id })
        personId = linked[0]?.id ?? null
      }
      await tx.update(accountTokens).set({ usedAt: now, userId }).where(eq(accountTokens.id, t.id))
      const actor: Actor = { userId, workshopId: t.workshopId, role: t.role!, personId, name: t.name }
      await audit(tx, actor, 'accept-invitation', 'user', userId, { email: t.email, role: t.role, personId, invitationId: t.id })
      return { userId, kind: 'invite' as const }
    }
    const [u] = await tx.select().from(users).where(eq(users.id, t.userId!))
    if (!u || !u.active)
      throw new AppError({
        code: 'not-found',
        status: 410,
        message: 'This account has been switched off; ask the workshop owner.',
        details: { reason: 'switched-off' },
      })
    await tx
      .update(users)
      .set({ passwordHash, version: sql`${users.version} + 1`, updatedAt: now })
      .where(eq(users.id, u.id))
    await tx.update(accountTokens).set({ usedAt: now }).where(eq(accountTokens.id, t.id))
    await tx
      .update(accountTokens)
      .set({ withdrawnAt: now })
      .where(and(eq(accountTokens.userId, u.id), eq(accountTokens.kind, 'reset'), isNull(accountTokens.usedAt), isNull(accountTokens.withdrawnAt)))
    await audit(tx, { userId: u.id, workshopId: u.workshopId, role: u.role, personId: null, name: u.name }, 'reset-password', 'user', u.id, {
      by: 'e-mail link',
    })
    return { userId: u.id, kind: 'reset' as const }
  })
}

/**
 * A reset link to the account with this address, if there is an active one; nothing otherwise. The caller answers the
 * same either way (and does not wait for this), so the answer tells nobody which addresses have accounts.
 */
export async function requestReset(deps: Deps, email: string, at: ArrivedAt, life = DEFAULT_LIFETIMES) {
  const [u] = await deps.db
    .select({ id: users.id, name: users.name, role: users.role, workshopId: users.workshopId, active: users.active })
    .from(users)
    .where(eq(users.email, email))
  if (!u || !u.active) return null
  const { token, hash } = newLinkToken()
  const now = new Date()
  await deps.db.transaction(async (tx) => {
    // Only the newest link works.
    await tx
      .update(accountTokens)
      .set({ withdrawnAt: now })
      .where(
        and(
          eq(accountTokens.userId, u.id),
          eq(accountTokens.kind, 'reset'),
          isNull(accountTokens.usedAt),
          isNull(accountTokens.withdrawnAt),
          gt(accountTokens.expiresAt, now),
        ),
      )
    const [r] = await tx
      .insert(accountTokens)
      .values({
        workshopId: u.workshopId,
        kind: 'reset',
        tokenHash: hash,
        email,
        userId: u.id,
        expiresAt: new Date(now.getTime() + life.resetMinutes * 60_000),
      })
      .returning({ id: accountTokens.id })
    await audit(tx, { userId: u.id, workshopId: u.workshopId, role: u.role, personId: null, name: u.name }, 'request-reset', 'user', u.id, { linkId: r!.id })
  })
  const w = await workshopOf(deps.db, u.workshopId)
  const mail = resetMail({
    workshopName: w.name,
    name: u.name,
    link: `${linkBase(at, deps.listenHost, w.publicUrl)}${resetPath(token)}`,
    minutes: life.resetMinutes,
  })
  return sendRecorded(deps, { workshopId: u.workshopId, to: email, kind: 'password-reset', content: mail.sent, kept: mail.kept })
}

/**
 * Ends every signed-in session of a user (the session rows are deleted) and their live connections. Bench station
 * tablets a manager signed in stay: they belong to the workshop, not to the person who set them up.
 */
export async function endUserSessions(deps: Pick<Deps, 'db' | 'realtime' | 'cache'>, userId: number): Promise<number> {
  let ended = 0
  try {
    const r = await deps.db.execute(
      sql`delete from user_sessions where (sess::jsonb -> 'passport' ->> 'user') = ${String(userId)} and (sess::jsonb -> 'station') is null`,
    )
    ended = (r as { rowCount?: number | null }).rowCount ?? 0
  } catch (err) {
    // No session was ever stored: nothing to end.
    if ((err as { code?: string }).code !== '42P01') throw err
  }
  dropSessionUsers(deps.cache, userId)
  deps.realtime.endSessions({ userId })
  return ended
}
