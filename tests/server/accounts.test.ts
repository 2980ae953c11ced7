// Accounts that look after themselves: invitations and password resets by one-time e-mail links (read from the local test
// mailbox, as the person would), signing out everywhere, rate limits, and bench stations where people act with their PIN.
import { createHash } from 'node:crypto'
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest'
import { startFakeSmtp, type FakeSmtp, type ReceivedMessage } from '../../server/mail/fake-smtp'
import { DEMO_PASSWORD } from '../../server/db/seed'
import { count, eq } from 'drizzle-orm'
import * as s from '../../server/db/schema/index'
import { Agent, DEMO_EMAIL, createTestApp, signedIn, type TestApp } from '../setup/app'
import { addPerson } from '../setup/fixtures'
import { auditRows, expectCleanError, expectFieldError, userIdOf } from './helpers'
import { benchId, freshReady, personIdOf, rid } from './bench-fixtures'

let t: TestApp
let fake: FakeSmtp
let owner: Agent

beforeAll(async () => {
  fake = await startFakeSmtp()
  t = await createTestApp({ SMTP_URL: fake.url, ACCOUNT_REQUESTS_PER_15_MIN: '1000' })
  fake.useDb(t.db)
  owner = await signedIn(t.app, 'owner')
})
afterAll(async () => {
  await t?.close()
  await fake?.close()
})

/** The one-time link's token from a received message (the path after /welcome/ or /new-password/). */
function tokenIn(m: ReceivedMessage, path: 'welcome' | 'new-password'): string {
  const found = m.text.match(new RegExp(`https?://[^\\s/]+/${path}/([A-Za-z0-9_-]+)`))
  if (!found) throw new Error(`no ${path} link in: ${m.text}`)
  return found[1]!
}
const mailTo = (to: string, subject: RegExp, after = 0) =>
  fake.waitFor((m) => m.to.includes(to) && subject.test(m.subject) && fake.messages.indexOf(m) >= after, 15_000)

async function sessionEmail(a: Agent): Promise<string | null> {
  return (await a.get('/api/session')).body.user?.email ?? null
}

describe('invitations', () => {
  it('when the owner invites someone, then the e-mail carries a link that sets their password once and signs them in, linked to their person', async () => {
    const p = { id: await addPerson(t.db, { workshopId: 1, name: 'Petra Quill' }) }
    const { name: ownerName } = (await t.db.select({ name: s.users.name }).from(s.users).where(eq(s.users.email, DEMO_EMAIL.owner)))[0]!
    const r = await owner.post('/api/invitations', { email: 'Petra@Quill.test', name: 'Petra Quill', role: 'bench', personId: p.id })
    expect(r.status, JSON.stringify(r.body)).toBe(201)
    expect(r.body).toMatchObject({ email: 'petra@quill.test', role: 'bench', personId: p.id, personName: 'Petra Quill', expired: false, invitedBy: ownerName })
    // Default lifetime 72 hours (the setting's default): expiry minus creation, to the second.
    expect(Math.round((Date.parse(r.body.expiresAt) - Date.parse(r.body.createdAt)) / 1000)).toBe(72 * 3600)
    const m = await mailTo('petra@quill.test', /invited/)
    const token = tokenIn(m, 'welcome')
    // Only the SHA-256 of the token is kept. Reference vector: SHA-256("abc") from FIPS 180-2, appendix B.1.
    expect(createHash('sha256').update('abc').digest('hex')).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad')
    const stored = await t.db.select({ tokenHash: s.accountTokens.tokenHash }).from(s.accountTokens).where(eq(s.accountTokens.id, r.body.id))
    expect(stored[0]!.tokenHash).toBe(createHash('sha256').update(token).digest('hex'))
    expect(JSON.stringify(await t.db.select().from(s.accountTokens))).not.toContain(token)
    // The outbox keeps the message without the link (staff read the outbox).
    const kept = (
      await t.db
        .select({ text: s.outbox.text, html: s.outbox.html })
        .from(s.outbox)
        .where(eq(s.outbox.id, Number(m.outboxId)))
    )[0]!
    expect(kept.text).not.toContain(token)
    expect(kept.html).not.toContain(token)
    expect(kept.text).toContain('not kept here')

    const newcomer = new Agent(t.app)
    await newcomer.refreshCsrf()
    const info = await newcomer.get(`/api/account-links/${token}`)
    expect(info.body).toMatchObject({ kind: 'invite', email: 'petra@quill.test', name: 'Petra Quill', workshopName: 'Wrenfield Street Workshop' })
    expectFieldError(await newcomer.post(`/api/account-links/${token}`, { password: 'short' }), 'password', /at least 10/)
    const used = await newcomer.post(`/api/account-links/${token}`, { password: 'a good long password' })
    expect(used.status, JSON.stringify(used.body)).toBe(200)
    expect(used.body.user).toMatchObject({ email: 'petra@quill.test', role: 'bench', personId: p.id })
    newcomer.csrf = used.body.csrfToken
    expect(await sessionEmail(newcomer)).toBe('petra@quill.test')
    const [linked] = await t.db.select({ userId: s.people.userId }).from(s.people).where(eq(s.people.id, p.id))
    expect(linked!.userId).toBe(used.body.user.id)
    expect((await auditRows(t, 'user', used.body.user.id))[0]).toMatchObject({ action: 'accept-invitation', user_id: used.body.user.id })
    // No longer pending.
    expect((await owner.get('/api/invitations')).body.map((i: { id: number }) => i.id)).not.toContain(r.body.id)

    // Used once: the same link again is refused, and it changes nothing.
    const again = await new Agent(t.app).post(`/api/account-links/${token}`, { password: 'another long password' })
    expect(again.status).toBe(403) // no CSRF token: refused before anything else
    const other = new Agent(t.app)
    await other.refreshCsrf()
    const reuse = await other.post(`/api/account-links/${token}`, { password: 'another long password' })
    expectCleanError(reuse, 410)
    expect(reuse.body.details).toMatchObject({ reason: 'used' })
    expect((await new Agent(t.app).signIn('petra@quill.test', 'a good long password')).status).toBe(200)
  })

  it('when a link is forged or expired, then it is refused and nothing is made', async () => {
    const a = new Agent(t.app)
    await a.refreshCsrf()
    const forged = 'A'.repeat(43)
    expectCleanError(await a.get(`/api/account-links/${forged}`), 404)
    expectCleanError(await a.post(`/api/account-links/${forged}`, { password: 'a good long password' }), 404)
    expectFieldError(await a.get('/api/account-links/not*a*token'), 'token')

    const r = await owner.post('/api/invitations', { email: 'late@quill.test', name: 'Late Comer', role: 'sales' })
    const token = tokenIn(await mailTo('late@quill.test', /invited/), 'welcome')
    await t.db
      .update(s.accountTokens)
      .set({ expiresAt: new Date(Date.now() - 1000) })
      .where(eq(s.accountTokens.id, r.body.id))
    const expired = await a.post(`/api/account-links/${token}`, { password: 'a good long password' })
    expectCleanError(expired, 410)
    expect(expired.body.details).toMatchObject({ reason: 'expired' })
    expect((await owner.get('/api/invitations')).body.find((i: { id: number }) => i.id === r.body.id)).toMatchObject({ expired: true })
    expect(await t.db.select({ id: s.users.id }).from(s.users).where(eq(s.users.email, 'late@quill.test'))).toEqual([])
  })

  it('when the owner sends an invitation again, then only the new link works; when withdrawn, none does', async () => {
    const r = await owner.post('/api/invitations', { email: 'twice@quill.test', name: 'Twice Asked', role: 'manager' })
    const first = tokenIn(await mailTo('twice@quill.test', /invited/), 'welcome')
    const before = fake.messages.length
    const dup = await owner.post('/api/invitations', { email: 'twice@quill.test', name: 'Twice Asked', role: 'manager' })
    expectCleanError(dup, 409)
    expect(dup.body.fields).toEqual({ email: 'is invited already' })
    expect((await owner.post('/api/invitations', { email: DEMO_EMAIL.sales, name: 'Dup', role: 'sales' })).status).toBe(409)
    const again = await owner.post(`/api/invitations/${r.body.id}/resend`)
    expect(again.status, JSON.stringify(again.body)).toBe(200)
    const second = tokenIn(await mailTo('twice@quill.test', /invited/, before), 'welcome')
    expect(second).not.toBe(first)
    const a = new Agent(t.app)
    await a.refreshCsrf()
    expectCleanError(await a.get(`/api/account-links/${first}`), 404)
    expect((await a.get(`/api/account-links/${second}`)).status).toBe(200)
    expect((await owner.delete(`/api/invitations/${r.body.id}`)).status).toBe(204)
    const gone = await a.post(`/api/account-links/${second}`, { password: 'a good long password' })
    expectCleanError(gone, 410)
    expect(gone.body.details).toMatchObject({ reason: 'withdrawn' })
    expectCleanError(await owner.post(`/api/invitations/${r.body.id}/resend`), 404)
  })

  it('when the invitation names an e-mail that is not one or a person of another workshop, then 400 names the field', async () => {
    expectFieldError(await owner.post('/api/invitations', { email: 'nope', name: 'X', role: 'bench' }), 'email', /e-mail/)
    expectFieldError(await owner.post('/api/invitations', { email: 'x@quill.test', name: 'X', role: 'boss' }), 'role')
    expectFieldError(await owner.post('/api/invitations', { email: 'x@quill.test', name: 'X', role: 'bench', personId: 999999 }), 'personId', /not a person/)
  })
})

describe('password reset', () => {
  it('when a reset is asked for an unknown address, then the answer is the same as for a known one and no mail goes out', async () => {
    const anon = new Agent(t.app)
    await anon.refreshCsrf()
    const unknown = await anon.post('/api/password-reset', { email: 'nobody@nowhere.test' })
    const known = await anon.post('/api/password-reset', { email: DEMO_EMAIL.manager })
    expect(unknown.status).toBe(202)
    expect(known.status).toBe(202)
    expect(Object.keys(unknown.body)).toEqual(Object.keys(known.body))
    expect(unknown.body.message.replace('nobody@nowhere.test', 'X')).toBe(known.body.message.replace(DEMO_EMAIL.manager, 'X'))
    await mailTo(DEMO_EMAIL.manager, /new Millgrain password/)
    const [sent] = await t.db.select({ n: count() }).from(s.outbox).where(eq(s.outbox.to, 'nobody@nowhere.test'))
    expect(sent!.n).toBe(0)
    expectFieldError(await anon.post('/api/password-reset', { email: 'not-an-address' }), 'email', /e-mail address/)
  })

  it('when the new password is set by the link, then every other session and live connection of that user ends, and the link works once', async () => {
    const elsewhere = await signedIn(t.app, 'sales')
    const alsoElsewhere = await signedIn(t.app, 'sales')
    const ended = vi.spyOn(t.realtime, 'endSessions')
    const anon = new Agent(t.app)
    await anon.refreshCsrf()
    const before = fake.messages.length
    await anon.post('/api/password-reset', { email: DEMO_EMAIL.sales })
    const m = await mailTo(DEMO_EMAIL.sales, /new Millgrain password/, before)
    const token = tokenIn(m, 'new-password')
    const row = (
      await t.db
        .select({ expiresAt: s.accountTokens.expiresAt, createdAt: s.accountTokens.createdAt })
        .from(s.accountTokens)
        .where(eq(s.accountTokens.tokenHash, createHash('sha256').update(token).digest('hex')))
    )[0]!
    // Default lifetime 60 minutes.
    expect(Math.round((row.expiresAt.getTime() - row.createdAt.getTime()) / 1000)).toBe(3600)
    expect((await anon.get(`/api/account-links/${token}`)).body).toMatchObject({ kind: 'reset', email: DEMO_EMAIL.sales })
    const r = await anon.post(`/api/account-links/${token}`, { password: 'a brand new password' })
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    anon.csrf = r.body.csrfToken
    expect(await sessionEmail(anon)).toBe(DEMO_EMAIL.sales)
    expect(await sessionEmail(elsewhere)).toBeNull()
    expect(await sessionEmail(alsoElsewhere)).toBeNull()
    const salesId = await userIdOf(t, DEMO_EMAIL.sales)
    expect(ended).toHaveBeenCalledWith({ userId: salesId })
    ended.mockRestore()
    expect((await new Agent(t.app).signIn(DEMO_EMAIL.sales, DEMO_PASSWORD)).status).toBe(401)
    expect((await new Agent(t.app).signIn(DEMO_EMAIL.sales, 'a brand new password')).status).toBe(200)
    const reuse = await anon.post(`/api/account-links/${token}`, { password: 'yet another password' })
    expectCleanError(reuse, 410)
    expect((await auditRows(t, 'user', salesId)).map((a) => a.action).slice(0, 2)).toEqual(['reset-password', 'request-reset'])
  })

  it('when a second reset is asked, then the first link stops working; an expired link is refused', async () => {
    const anon = new Agent(t.app)
    await anon.refreshCsrf()
    let before = fake.messages.length
    await anon.post('/api/password-reset', { email: DEMO_EMAIL.bench })
    const first = tokenIn(await mailTo(DEMO_EMAIL.bench, /new Millgrain password/, before), 'new-password')
    before = fake.messages.length
    await anon.post('/api/password-reset', { email: DEMO_EMAIL.bench })
    const second = tokenIn(await mailTo(DEMO_EMAIL.bench, /new Millgrain password/, before), 'new-password')
    expect((await anon.get(`/api/account-links/${first}`)).body.details).toMatchObject({ reason: 'withdrawn' })
    await t.db
      .update(s.accountTokens)
      .set({ expiresAt: new Date(Date.now() - 1000) })
      .where(eq(s.accountTokens.tokenHash, createHash('sha256').update(second).digest('hex')))
    const expired = await anon.post(`/api/account-links/${second}`, { password: 'a brand new password' })
    expectCleanError(expired, 410)
    expect(expired.body.details).toMatchObject({ reason: 'expired' })
    expect((await new Agent(t.app).signIn(DEMO_EMAIL.bench, DEMO_PASSWORD)).status).toBe(200)
  })
})

describe('sign out everywhere', () => {
  it('when a user signs out everywhere, then all their sessions end and other users stay signed in', async () => {
    const a = await signedIn(t.app, 'manager')
    const b = await signedIn(t.app, 'manager')
    const someoneElse = await signedIn(t.app, 'owner')
    const r = await a.delete('/api/session/everywhere')
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    expect(r.body.ended).toBeGreaterThanOrEqual(2)
    expect(await sessionEmail(a)).toBeNull()
    expect(await sessionEmail(b)).toBeNull()
    expect(await sessionEmail(someoneElse)).toBe(DEMO_EMAIL.owner)
  })
})

describe('rate limits', () => {
  it('when reset requests, link tries or invitations come too often from one address, then 429 says to wait', async () => {
    const limited = await createTestApp({ ACCOUNT_REQUESTS_PER_15_MIN: '3' })
    try {
      const anon = new Agent(limited.app)
      await anon.refreshCsrf()
      for (let i = 0; i < 3; i++) expect((await anon.post('/api/password-reset', { email: `n${i}@nowhere.test` })).status).toBe(202)
      const r = await anon.post('/api/password-reset', { email: 'n4@nowhere.test' })
      expectCleanError(r, 429)
      expect(r.body.code).toBe('rate-limited')
      for (let i = 0; i < 3; i++) expect((await anon.get(`/api/account-links/${'B'.repeat(43)}`)).status).toBe(404)
      expectCleanError(await anon.get(`/api/account-links/${'B'.repeat(43)}`), 429)
      const o = await signedIn(limited.app, 'owner')
      for (let i = 0; i < 3; i++) expect((await o.post('/api/invitations', { email: `r${i}@quill.test`, name: 'R', role: 'sales' })).status).toBe(201)
      expectCleanError(await o.post('/api/invitations', { email: 'r9@quill.test', name: 'R', role: 'sales' }), 429)
    } finally {
      await limited.close()
    }
  })
})

describe('bench station and PINs', () => {
  let station: Agent
  let setA: number
  let ines: number
  let hand: number
  const asPerson = (token: string, path: string, body: object) =>
    station.agent.post(path).set('x-csrf-token', station.csrf).set('x-bench-person', token).send(body)

  beforeAll(async () => {
    setA = await benchId(t, 'Setting bench A')
    ines = await personIdOf(t, DEMO_EMAIL.bench)
    // A bench hand without an account of their own, who can set stones.
    hand = await addPerson(t.db, { workshopId: 1, name: 'Tomas Vane', skills: { codes: ['setting', 'inspection'], level: 3 } })
  })

  it('when PINs are set by the person and by the owner, then a PIN must be 4 to 6 digits', async () => {
    const ownInes = await signedIn(t.app, 'bench')
    expectFieldError(await ownInes.put('/api/me/pin', { pin: '12' }), 'pin', /4 to 6 digits/)
    expectFieldError(await ownInes.put('/api/me/pin', { pin: '12a4' }), 'pin', /4 to 6 digits/)
    expect((await ownInes.put('/api/me/pin', { pin: '4821' })).body).toEqual({ personId: ines, hasPin: true })
    expect((await owner.put(`/api/people/${hand}/pin`, { pin: '907153' })).status).toBe(200)
    expect((await (await signedIn(t.app, 'manager')).put(`/api/people/${hand}/pin`, { pin: '1111' })).status).toBe(403)
  })

  it('when a manager signs a tablet in as a station, then it lists the people and refuses work until a PIN is entered', async () => {
    station = await signedIn(t.app, 'manager')
    const r = await station.post('/api/bench-station', { benchId: setA })
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    expect(r.body.user).toMatchObject({ role: 'bench', personId: null, station: { benchId: setA, benchName: 'Setting bench A' } })
    station.csrf = r.body.csrfToken
    const s = (await station.get('/api/session')).body.user
    expect(s).toMatchObject({ role: 'bench', station: { benchId: setA } })
    // The manager's own powers are gone on this tablet.
    expect((await station.get('/api/users')).status).toBe(403)
    expect((await station.get('/api/plans')).status).toBe(403)
    const people = (await station.get('/api/bench-station/people')).body as { id: number; name: string; hasPin: boolean }[]
    expect(people.find((p) => p.id === ines)).toMatchObject({ name: 'Ines Harrowby', hasPin: true })
    const op = await freshReady(t, 'setting', 'set')
    const refused = await station.post(`/api/bench/operations/${op.id}/claim`, { requestId: rid(), benchId: setA })
    expectCleanError(refused, 403)
    expect(refused.body.details).toMatchObject({ reason: 'bench-pin' })
  })

  it('when a wrong PIN is entered, then it is refused with the tries left, and five in a row lock it', async () => {
    const wrong = await station.post('/api/bench-station/pin', { personId: hand, pin: '000000' })
    expectCleanError(wrong, 422)
    expect(wrong.body.details).toMatchObject({ triesLeft: 4 })
    for (let i = 0; i < 3; i++) await station.post('/api/bench-station/pin', { personId: hand, pin: '000000' })
    const locked = await station.post('/api/bench-station/pin', { personId: hand, pin: '000000' })
    expectCleanError(locked, 429)
    // Locked: even the right PIN waits.
    expectCleanError(await station.post('/api/bench-station/pin', { personId: hand, pin: '907153' }), 429)
    // The owner setting the PIN again lifts the lock.
    await owner.put(`/api/people/${hand}/pin`, { pin: '907153' })
  })

  it('when a person enters the right PIN and claims, then the step is theirs, audited as them at the station, and the PIN ends with the action', async () => {
    const op = await freshReady(t, 'setting', 'set')
    const pin = await station.post('/api/bench-station/pin', { personId: ines, pin: '4821' })
    expect(pin.status, JSON.stringify(pin.body)).toBe(200)
    expect(pin.body.person).toEqual({ id: ines, name: 'Ines Harrowby' })
    const claim = await asPerson(pin.body.token, `/api/bench/operations/${op.id}/claim`, { requestId: rid(), benchId: setA })
    expect(claim.status, JSON.stringify(claim.body)).toBe(200)
    expect(claim.body.operation).toMatchObject({ status: 'claimed', claimedBy: ines, claimedByName: 'Ines Harrowby' })
    const [a] = await auditRows(t, 'operation', op.id)
    // Ines has her own account, so the audit row is hers; the station and the acting person are named too.
    expect(a).toMatchObject({
      action: 'claim',
      user_id: await userIdOf(t, DEMO_EMAIL.bench),
      details: expect.objectContaining({ personId: ines, actingPersonId: ines, actingPersonName: 'Ines Harrowby', station: 'Setting bench A' }),
    })
    // The PIN session ended with the action: the next tap needs a PIN again.
    const next = await asPerson(pin.body.token, `/api/bench/operations/${op.id}/start`, { requestId: rid(), benchId: setA })
    expectCleanError(next, 403)
    expect(next.body.details).toMatchObject({ reason: 'bench-pin' })

    // Tomas has no account: his step is his, the audit names him and the station.
    const op2 = await freshReady(t, 'setting', 'set')
    const pin2 = await station.post('/api/bench-station/pin', { personId: hand, pin: '907153' })
    expect(pin2.status, JSON.stringify(pin2.body)).toBe(200)
    const mine = await station.agent.get('/api/bench/mine').set('x-bench-person', pin2.body.token)
    expect(mine.body.person).toMatchObject({ id: hand, name: 'Tomas Vane' })
    // Ines's token no longer works for Tomas's turn.
    expectCleanError(await asPerson(pin.body.token, `/api/bench/operations/${op2.id}/claim`, { requestId: rid(), benchId: setA }), 403)
    const c2 = await asPerson(pin2.body.token, `/api/bench/operations/${op2.id}/claim`, { requestId: rid(), benchId: setA })
    expect(c2.status, JSON.stringify(c2.body)).toBe(200)
    expect(c2.body.operation).toMatchObject({ claimedBy: hand, claimedByName: 'Tomas Vane' })
    const [a2] = await auditRows(t, 'operation', op2.id)
    expect(a2!.details).toMatchObject({ personId: hand, actingPersonName: 'Tomas Vane', station: 'Setting bench A' })
    // The job bag's history names him, not the manager who set the station up.
    const bag = (await owner.get(`/api/job-bags/${op2.job_bag_id}`)).body
    expect(bag.history.find((h: { action: string; operationId: number | null }) => h.action === 'claim' && h.operationId === op2.id)).toMatchObject({
      who: 'Tomas Vane',
    })
  })

  it('when the next person enters their PIN while the tablet still sends the last token, then the new PIN session is the one that stays', async () => {
    const first = await station.post('/api/bench-station/pin', { personId: ines, pin: '4821' })
    const second = await station.agent
      .post('/api/bench-station/pin')
      .set('x-csrf-token', station.csrf)
      .set('x-bench-person', first.body.token)
      .send({ personId: hand, pin: '907153' })
    expect(second.status, JSON.stringify(second.body)).toBe(200)
    const mine = await station.agent.get('/api/bench/mine').set('x-bench-person', second.body.token)
    expect(mine.body.person).toMatchObject({ id: hand })
    expect((await station.agent.get('/api/bench/mine').set('x-bench-person', first.body.token)).status).toBe(422)
    await station.delete('/api/bench-station/pin')
  })

  it('when the PIN time runs out, then the token is refused', async () => {
    const pin = await station.post('/api/bench-station/pin', { personId: ines, pin: '4821' })
    // Raw SQL on purpose: the session table belongs to connect-pg-simple, not to our schema.
    const {
      rows: [stored],
    } = await t.pool.query(`select sid, sess from user_sessions where sess::jsonb -> 'station' is not null`)
    const sess = stored.sess
    sess.benchPerson.expiresAt = Date.now() - 1000
    await t.pool.query(`update user_sessions set sess = $1 where sid = $2`, [sess, stored.sid])
    const op = await freshReady(t, 'setting', 'set')
    const r = await asPerson(pin.body.token, `/api/bench/operations/${op.id}/claim`, { requestId: rid(), benchId: setA })
    expectCleanError(r, 403)
    expect(r.body.error).toMatch(/PIN time is over/)
  })
})
