// E-mail use-cases: every message is written to the outbox with its send job in one transaction (the caller's, when it
// passes one), and a queue job (server/jobs) sends it, retrying with growing waits; a failed send never undoes the change.
import { and, count, desc, eq } from 'drizzle-orm'
import type { Db, Trx } from '../db/client'
import * as s from '../db/schema/index'
import { notFound } from '../errors/app-error'
import type { Deps } from '../lib/route'
import { vatTermsOf } from '../../shared/domain/vat'
import * as t from '../mail/messages'
import { OUTBOX_HEADER } from '../mail/transport'
import { QUEUES } from '../jobs/queue'

export interface MailRequest {
  workshopId: number
  to: string
  kind: string
  orderId?: number | null
  meta?: Record<string, unknown>
  content: t.MailContent
  /** What the outbox keeps when it must not keep the sent text (a one-time link); same subject. */ kept?: t.MailContent
}

const inTransaction = (db: Db | Trx): db is Trx => typeof (db as Trx).rollback === 'function'

/**
 * Records the message as queued with its send job, in the caller's transaction when `deps.db` is one (the mail then
 * stands or falls with the change), else in its own. The request does not wait for the mail server: the answer says
 * 'queued' and the job sends it. A message whose text must not be kept (`kept`, a one-time link) never goes through the
 * queue's tables: it is sent here at once, as is everything when there is no queue (scripts).
 */
export async function sendRecorded(deps: Pick<Deps, 'db' | 'mailer' | 'jobs'>, m: MailRequest) {
  const jobs = deps.jobs
  if (!jobs || m.kept || !m.to.trim()) return sendNow(deps, m)
  const write = async (tx: Trx) => {
    const [row] = await tx
      .insert(s.outbox)
      .values({
        workshopId: m.workshopId,
        to: m.to,
        subject: m.content.subject,
        text: m.content.text,
        html: m.content.html,
        kind: m.kind,
        orderId: m.orderId ?? null,
        meta: m.meta ?? {},
      })
      .returning({ id: s.outbox.id })
    await jobs.send(QUEUES.mailSend, { outboxId: row!.id }, { tx })
    return row!.id
  }
  const id = inTransaction(deps.db) ? await write(deps.db) : await deps.db.transaction(write)
  if (!inTransaction(deps.db)) jobs.wake(QUEUES.mailSend)
  return { id, status: 'queued' as const, error: null }
}

/**
 * The send job: sends one queued outbox row. A refusal by the mail server is written on the row (still queued) and thrown,
 * so the queue tries again later; the last try marks it failed.
 */
export async function deliverOutboxJob(
  deps: Pick<Deps, 'db' | 'mailer'>,
  { outboxId }: { outboxId: number },
  job?: { retryCount: number; retryLimit: number },
) {
  const [m] = await deps.db.select().from(s.outbox).where(eq(s.outbox.id, outboxId))
  if (!m || m.status !== 'queued') return { skipped: m?.status ?? 'gone' }
  const last = !job || job.retryCount >= job.retryLimit
  if (!deps.mailer) {
    await deps.db.update(s.outbox).set({ status: 'failed', error: 'no mail transport configured' }).where(eq(s.outbox.id, outboxId))
    return { failed: 'no mail transport configured' }
  }
  try {
    await deps.mailer.send({ to: m.to, subject: m.subject, text: m.text, html: m.html, headers: { [OUTBOX_HEADER]: String(outboxId) } })
  } catch (err) {
    const error = ((err as Error).message || String(err)).slice(0, 500)
    console.warn(`[mail] sending "${m.kind}" #${outboxId} failed${last ? '' : ' (will try again)'}:`, error)
    await deps.db
      .update(s.outbox)
      .set({ status: last ? 'failed' : 'queued', error })
      .where(and(eq(s.outbox.id, outboxId), eq(s.outbox.status, 'queued')))
    if (last) return { failed: error }
    throw err
  }
  // The local test mailbox may already have marked it delivered; an earlier try's error no longer holds.
  await deps.db
    .update(s.outbox)
    .set({ status: 'sent', sentAt: new Date().toISOString() })
    .where(and(eq(s.outbox.id, outboxId), eq(s.outbox.status, 'queued')))
  await deps.db.update(s.outbox).set({ error: null }).where(eq(s.outbox.id, outboxId))
  return { sent: outboxId }
}

/** Records and sends in place; never throws: the outcome is returned. */
async function sendNow(deps: Pick<Deps, 'db' | 'mailer'>, m: MailRequest) {
  const [row] = await deps.db
    .insert(s.outbox)
    .values({
      workshopId: m.workshopId,
      to: m.to,
      subject: m.content.subject,
      text: (m.kept ?? m.content).text,
      html: (m.kept ?? m.content).html,
      kind: m.kind,
      orderId: m.orderId ?? null,
      meta: m.meta ?? {},
    })
    .returning({ id: s.outbox.id })
  const id = row!.id
  const fail = async (error: string) => {
    await deps.db
      .update(s.outbox)
      .set({ status: 'failed', error: error.slice(0, 500) })
      .where(eq(s.outbox.id, id))
    return { id, status: 'failed' as const, error }
  }
  if (!m.to.trim()) return fail('no e-mail address on file')
  if (!deps.mailer) return fail('no mail transport configured')
  try {
    await deps.mailer.send({ to: m.to, subject: m.content.subject, text: m.content.text, html: m.content.html, headers: { [OUTBOX_HEADER]: String(id) } })
  } catch (err) {
    console.warn(`[mail] sending "${m.kind}" #${id} failed:`, (err as Error).message)
    return fail((err as Error).message || String(err))
  }
  // The local test mailbox may already have marked it delivered.
  await deps.db
    .update(s.outbox)
    .set({ status: 'sent', sentAt: new Date().toISOString() })
    .where(and(eq(s.outbox.id, id), eq(s.outbox.status, 'queued')))
  const [after] = await deps.db.select({ status: s.outbox.status }).from(s.outbox).where(eq(s.outbox.id, id))
  return { id, status: after?.status ?? 'sent', error: null }
}

async function orderFacts(db: Db, workshopId: number, orderId: number) {
  const [r] = await db
    .select({
      order: s.orders,
      customerName: s.customers.name,
      customerEmail: s.customers.email,
      workshopName: s.workshops.name,
      workshop: {
        name: s.workshops.name,
        address: s.workshops.address,
        phone: s.workshops.phone,
        email: s.workshops.contactEmail,
        currency: s.workshops.currency,
      },
      // The VAT terms the order was made under, not the workshop's as they are now: its e-mails say what it was sold under.
      vat: { vatRegistered: s.orders.vatRegistered, vatNumber: s.orders.vatNumber, vatRateBasisPoints: s.orders.vatRateBasisPoints },
    })
    .from(s.orders)
    .innerJoin(s.customers, eq(s.customers.id, s.orders.customerId))
    .innerJoin(s.workshops, eq(s.workshops.id, s.orders.workshopId))
    .where(and(eq(s.orders.id, orderId), eq(s.orders.workshopId, workshopId)))
  if (!r) throw notFound('Order')
  return { ...r, workshop: { ...r.workshop, vat: vatTermsOf(r.vat) } }
}

/** The customer's confirmation; `booking` says whether the steps are in the live plan (with their dates) or not yet. */
export async function sendPromiseConfirmation(
  deps: Pick<Deps, 'db' | 'mailer' | 'jobs'>,
  workshopId: number,
  orderId: number,
  booking: t.BookingFacts = { booked: false },
) {
  const f = await orderFacts(deps.db, workshopId, orderId)
  const promised = f.order.promisedDate ?? f.order.dueDate
  return sendRecorded(deps, {
    workshopId,
    to: f.customerEmail,
    kind: 'promise-confirmation',
    orderId,
    meta: { promisedDate: promised, booked: booking.booked, ...(booking.booked ? { startDate: booking.startDate, endDate: booking.endDate } : {}) },
    content: t.promiseConfirmation({
      workshop: f.workshop,
      customerName: f.customerName,
      orderNumber: f.order.number,
      title: f.order.title,
      promisedDate: promised,
      priceQuotedMinor: f.order.priceQuotedMinor,
      booking,
    }),
  })
}

export async function sendReadyNotice(deps: Pick<Deps, 'db' | 'mailer' | 'jobs'>, workshopId: number, orderId: number) {
  const f = await orderFacts(deps.db, workshopId, orderId)
  return sendRecorded(deps, {
    workshopId,
    to: f.customerEmail,
    kind: 'ready-for-collection',
    orderId,
    content: t.readyForCollection({ workshop: f.workshop, customerName: f.customerName, orderNumber: f.order.number, title: f.order.title }),
  })
}

export async function listOutbox(db: Db, workshopId: number, q: { page: number; pageSize: number; kind?: string; orderId?: number }) {
  const where = and(
    eq(s.outbox.workshopId, workshopId),
    q.kind ? eq(s.outbox.kind, q.kind) : undefined,
    q.orderId ? eq(s.outbox.orderId, q.orderId) : undefined,
  )
  const [total] = await db.select({ n: count() }).from(s.outbox).where(where)
  const items = await db
    .select({
      id: s.outbox.id,
      to: s.outbox.to,
      subject: s.outbox.subject,
      kind: s.outbox.kind,
      orderId: s.outbox.orderId,
      orderNumber: s.orders.number,
      status: s.outbox.status,
      error: s.outbox.error,
      createdAt: s.outbox.createdAt,
      sentAt: s.outbox.sentAt,
    })
    .from(s.outbox)
    .leftJoin(s.orders, eq(s.orders.id, s.outbox.orderId))
    .where(where)
    .orderBy(desc(s.outbox.id))
    .limit(q.pageSize)
    .offset((q.page - 1) * q.pageSize)
  return { items, total: total?.n ?? 0, page: q.page, pageSize: q.pageSize }
}

export async function getOutboxMessage(db: Db, workshopId: number, id: number) {
  const [m] = await db
    .select()
    .from(s.outbox)
    .where(and(eq(s.outbox.id, id), eq(s.outbox.workshopId, workshopId)))
  if (!m) throw notFound('Message')
  return m
}
