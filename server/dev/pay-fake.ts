// A local fake of the payment provider's API on loopback (checkout sessions, refunds, signed webhooks) with a small hosted
// payment page, so `npm start` and the tests take card payments without an account and without card data reaching the app.
import { createHmac, randomBytes } from 'node:crypto'
import { createServer, type IncomingMessage, type Server, type ServerResponse } from 'node:http'
import { request as httpsRequest } from 'node:https'
import type { AddressInfo } from 'node:net'

export const FAKE_SECRET_KEY = 'sk_test_millgrain_fake'
export const FAKE_WEBHOOK_SECRET = 'whsec_millgrain_fake'
/** The provider's documented test cards: paid, declined, and one that asks for a second confirming step. */
export const TEST_CARDS = { paid: '4242424242424242', declined: '4000000000000002', confirm: '4000002500003155' } as const

export interface FakeSession {
  id: string
  object: 'checkout.session'
  mode: 'payment'
  status: 'open' | 'complete' | 'expired'
  payment_status: 'unpaid' | 'paid'
  amount_total: number
  currency: string
  metadata: Record<string, string>
  client_reference_id: string | null
  success_url: string
  cancel_url: string | null
  url: string
  payment_intent: string | null
  created: number
}
export interface FakeEvent {
  id: string
  object: 'event'
  type: string
  created: number
  livemode: false
  api_version: string
  data: { object: unknown }
}
export interface Delivery {
  eventId: string
  status: number
  body: string
}

export interface PayFake {
  port: number
  /** Base URL the SDK is pointed at (PAY_FAKE_URL). */
  url: string
  sessions: Map<string, FakeSession>
  events: FakeEvent[]
  deliveries: Delivery[]
  /** Where webhooks go (the app's /api/payments/webhook); set once the app listens. */
  webhookUrl: string | null
  /** The CA to trust when the webhook URL is https with the workshop's own certificate (`npm start -- --lan`). */
  webhookCa?: string
  /** The `Stripe-Signature` header for a payload, made as the provider documents: t=<unix>,v1=HMAC-SHA256(secret, "t.payload"). */
  sign(payload: string, secret?: string, t?: number): string
  /** Sends an event (again) to the webhook URL, signed; returns the app's answer. */
  deliver(event: FakeEvent, o?: { secret?: string }): Promise<Delivery>
  /** What the hosted page does when a card is entered (also used by tests without a browser). */
  pay(sessionId: string, card: string): Promise<{ outcome: 'paid' | 'declined' | 'confirm' | 'closed'; delivery?: Delivery }>
  close(): Promise<void>
}

const rid = (prefix: string) => `${prefix}_test_${randomBytes(12).toString('hex')}`
const esc = (s: string) => s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!)

/** Form-encoded nested parameters (`a[b][0][c]=x`) as the SDK sends them, back into an object. */
export function parseForm(body: string): Record<string, unknown> {
  const out: Record<string, unknown> = {}
  for (const [k, v] of new URLSearchParams(body)) {
    const path = k.replace(/\]/g, '').split('[')
    let cur = out as Record<string, unknown>
    path.forEach((p, i) => {
      if (i === path.length - 1) cur[p] = v
      else cur = (cur[p] ??= {}) as Record<string, unknown>
    })
  }
  return out
}

async function readBody(req: IncomingMessage): Promise<string> {
  const chunks: Buffer[] = []
  for await (const c of req) chunks.push(c as Buffer)
  return Buffer.concat(chunks).toString('utf8')
}

function apiError(res: ServerResponse, status: number, message: string, param?: string) {
  res
    .writeHead(status, { 'content-type': 'application/json' })
    .end(JSON.stringify({ error: { type: 'invalid_request_error', message, ...(param ? { param } : {}) } }))
}

const amountText = (minor: number, currency: string) =>
  new Intl.NumberFormat('en-GB', { style: 'currency', currency: currency.toUpperCase() }).format(minor / 100)

function page(title: string, body: string) {
  return `<!doctype html><html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width,initial-scale=1"><title>${esc(title)}</title>
<style>body{font-family:system-ui,sans-serif;max-width:420px;margin:40px auto;padding:0 16px;color:#222}h1{font-size:20px}.amount{font-size:28px;font-weight:600;margin:12px 0}
label{display:block;margin:16px 0 4px}input{font-size:18px;padding:8px;width:100%;box-sizing:border-box}button{font-size:16px;padding:10px 18px;margin:16px 8px 0 0;cursor:pointer}
.note{color:#666;font-size:13px}.error{color:#b00020}.ok{color:#1b7a3a}</style></head><body><p class="note">Test payment page (local, no real money)</p>${body}</body></html>`
}

export async function startPayFake(o: { port?: number; host?: string; webhookUrl?: string; anyPortIfTaken?: boolean } = {}): Promise<PayFake> {
  const host = o.host ?? '127.0.0.1'
  const sessions = new Map<string, FakeSession>()
  const refunded = new Map<string, number>()
  const paidAmount = new Map<string, { amount: number; currency: string }>()
  const events: FakeEvent[] = []
  const deliveries: Delivery[] = []
  let base = ''

  const sign = (payload: string, secret = FAKE_WEBHOOK_SECRET, t = Math.floor(Date.now() / 1000)) =>
    `t=${t},v1=${createHmac('sha256', secret).update(`${t}.${payload}`, 'utf8').digest('hex')}`

  async function deliver(event: FakeEvent, d: { secret?: string } = {}): Promise<Delivery> {
    if (!fake.webhookUrl) return { eventId: event.id, status: 0, body: 'no webhook URL' }
    const payload = JSON.stringify(event, null, 2)
    try {
      const headers = { 'content-type': 'application/json', 'stripe-signature': sign(payload, d.secret) }
      const r =
        fake.webhookCa && fake.webhookUrl.startsWith('https:')
          ? await postTrusting(fake.webhookUrl, fake.webhookCa, headers, payload)
          : await fetch(fake.webhookUrl, { method: 'POST', headers, body: payload }).then(async (x) => ({ status: x.status, text: await x.text() }))
      const out = { eventId: event.id, status: r.status, body: r.text }
      deliveries.push(out)
      return out
    } catch (err) {
      const out = { eventId: event.id, status: 0, body: (err as Error).message }
      deliveries.push(out)
      return out
    }
  }

  async function complete(s: FakeSession) {
    s.status = 'complete'
    s.payment_status = 'paid'
    s.payment_intent = rid('pi')
    paidAmount.set(s.payment_intent, { amount: s.amount_total, currency: s.currency })
    const event: FakeEvent = {
      id: rid('evt'),
      object: 'event',
      type: 'checkout.session.completed',
      created: Math.floor(Date.now() / 1000),
      livemode: false,
      api_version: '2025-01-01',
      data: { object: { ...s } },
    }
    events.push(event)
    return deliver(event)
  }

  async function pay(sessionId: string, cardText: string) {
    const s = sessions.get(sessionId)
    if (!s || s.status !== 'open') return { outcome: 'closed' as const }
    const card = cardText.replace(/\D/g, '')
    if (card === TEST_CARDS.paid) return { outcome: 'paid' as const, delivery: await complete(s) }
    if (card === TEST_CARDS.confirm) return { outcome: 'confirm' as const }
    return { outcome: 'declined' as const }
  }

  const server: Server = createServer(async (req, res) => {
    try {
      const url = new URL(req.url ?? '/', 'http://x')
      const parts = url.pathname.split('/').filter(Boolean)
      // The provider's API (the SDK's calls).
      if (parts[0] === 'v1') {
        if (req.headers.authorization !== `Bearer ${FAKE_SECRET_KEY}`) return apiError(res, 401, 'Invalid API key provided')
        const body = req.method === 'POST' ? parseForm(await readBody(req)) : {}
        if (req.method === 'POST' && parts[1] === 'checkout' && parts[2] === 'sessions' && parts.length === 3) {
          const items = (body.line_items ?? {}) as Record<string, { price_data?: { currency?: string; unit_amount?: string }; quantity?: string }>
          const first = items['0']
          const unit = Number(first?.price_data?.unit_amount),
            qty = Number(first?.quantity ?? 1)
          if (!first?.price_data?.currency)
            return apiError(res, 400, 'Missing required param: line_items[0][price_data][currency].', 'line_items[0][price_data][currency]')
          if (!Number.isInteger(unit) || unit < 1) return apiError(res, 400, 'Invalid integer: unit_amount', 'line_items[0][price_data][unit_amount]')
          if (typeof body.success_url !== 'string') return apiError(res, 400, 'Missing required param: success_url.', 'success_url')
          const id = rid('cs')
          const s: FakeSession = {
            id,
            object: 'checkout.session',
            mode: 'payment',
            status: 'open',
            payment_status: 'unpaid',
            amount_total: unit * qty,
            currency: String(first.price_data.currency).toLowerCase(),
            metadata: (body.metadata ?? {}) as Record<string, string>,
            client_reference_id: typeof body.client_reference_id === 'string' ? body.client_reference_id : null,
            success_url: body.success_url,
            cancel_url: typeof body.cancel_url === 'string' ? body.cancel_url : null,
            url: `${base}/pay/${id}`,
            payment_intent: null,
            created: Math.floor(Date.now() / 1000),
          }
          sessions.set(id, s)
          return res.writeHead(200, { 'content-type': 'application/json' }).end(JSON.stringify(s))
        }
        if (req.method === 'GET' && parts[1] === 'checkout' && parts[2] === 'sessions' && parts[3]) {
          const s = sessions.get(parts[3])
          if (!s) return apiError(res, 404, `No such checkout.session: '${parts[3]}'`, 'id')
          return res.writeHead(200, { 'content-type': 'application/json' }).end(JSON.stringify(s))
        }
        if (req.method === 'POST' && parts[1] === 'checkout' && parts[2] === 'sessions' && parts[4] === 'expire') {
          const s = sessions.get(parts[3]!)
          if (!s) return apiError(res, 404, `No such checkout.session: '${parts[3]}'`, 'id')
          if (s.status === 'open') s.status = 'expired'
          return res.writeHead(200, { 'content-type': 'application/json' }).end(JSON.stringify(s))
        }
        if (req.method === 'POST' && parts[1] === 'refunds' && parts.length === 2) {
          const pi = String(body.payment_intent ?? '')
          const paid = paidAmount.get(pi)
          if (!paid) return apiError(res, 404, `No such payment_intent: '${pi}'`, 'payment_intent')
          const left = paid.amount - (refunded.get(pi) ?? 0)
          const amount = body.amount === undefined ? left : Number(body.amount)
          if (!Number.isInteger(amount) || amount < 1 || amount > left)
            return apiError(res, 400, `Refund amount (${amount}) is greater than the unrefunded amount on the charge (${left})`, 'amount')
          refunded.set(pi, (refunded.get(pi) ?? 0) + amount)
          const refund = {
            id: rid('re'),
            object: 'refund',
            amount,
            currency: paid.currency,
            payment_intent: pi,
            status: 'succeeded',
            created: Math.floor(Date.now() / 1000),
            metadata: body.metadata ?? {},
          }
          return res.writeHead(200, { 'content-type': 'application/json' }).end(JSON.stringify(refund))
        }
        return apiError(res, 404, `Unrecognized request URL (${req.method}: ${url.pathname})`)
      }
      // The hosted payment page.
      if (parts[0] === 'pay' && parts[1]) {
        const s = sessions.get(parts[1])
        const html = (title: string, body: string, status = 200) => res.writeHead(status, { 'content-type': 'text/html; charset=utf-8' }).end(page(title, body))
        if (!s) return html('Not found', '<h1>This payment link is not known</h1>', 404)
        const heading = `<h1>${esc(s.metadata.description ?? 'Payment')}</h1><div class="amount" data-test="amount">${esc(amountText(s.amount_total, s.currency))}</div>`
        const back = `<p><a href="${esc(s.success_url)}" data-test="back">Back to the shop</a></p>`
        const form = (error = '') => `${heading}<form method="post" action="/pay/${s.id}">${error ? `<p class="error" data-test="error">${esc(error)}</p>` : ''}
<label for="card">Card number</label><input id="card" name="card" autocomplete="off" inputmode="numeric" placeholder="4242 4242 4242 4242">
<button type="submit">Pay ${esc(amountText(s.amount_total, s.currency))}</button></form>
<p class="note">Test cards: 4242 4242 4242 4242 pays · 4000 0000 0000 0002 is declined · 4000 0025 0000 3155 asks to confirm</p>`
        if (req.method === 'GET' && parts.length === 2) {
          if (s.status === 'complete') return html('Paid', `${heading}<p class="ok" data-test="paid">Paid. Thank you.</p>${back}`)
          if (s.status === 'expired') return html('Closed', `${heading}<p class="error">This payment link is closed.</p>`)
          return html('Pay', form())
        }
        if (req.method === 'POST' && parts.length === 2) {
          const card = String(new URLSearchParams(await readBody(req)).get('card') ?? '')
          const r = await pay(s.id, card)
          if (r.outcome === 'paid') return html('Paid', `${heading}<p class="ok" data-test="paid">Paid. Thank you.</p>${back}`)
          if (r.outcome === 'confirm')
            return html(
              'Confirm',
              `${heading}<p data-test="confirm-step">Your bank asks you to confirm this payment.</p>
<form method="post" action="/pay/${s.id}/confirm"><button name="answer" value="yes" type="submit">Confirm</button><button name="answer" value="no" type="submit">Cancel</button></form>`,
            )
          if (r.outcome === 'closed') return html('Closed', `${heading}<p class="error">This payment link is closed.</p>`)
          return html('Declined', form('The card was declined. Try another card.'))
        }
        if (req.method === 'POST' && parts[2] === 'confirm') {
          const answer = new URLSearchParams(await readBody(req)).get('answer')
          if (s.status !== 'open') return html('Closed', `${heading}<p class="error">This payment link is closed.</p>`)
          if (answer !== 'yes') return html('Pay', form('The payment was not confirmed.'))
          await complete(s)
          return html('Paid', `${heading}<p class="ok" data-test="paid">Paid. Thank you.</p>${back}`)
        }
      }
      res.writeHead(404, { 'content-type': 'text/plain' }).end('not found')
    } catch (err) {
      res.writeHead(500, { 'content-type': 'text/plain' }).end((err as Error).message)
    }
  })
  const listen = (port: number) =>
    new Promise<void>((resolve, reject) => {
      server.once('error', reject)
      server.listen(port, host, () => {
        server.off('error', reject)
        resolve()
      })
    })
  try {
    await listen(o.port ?? 0)
  } catch (err) {
    if (!o.anyPortIfTaken || (err as NodeJS.ErrnoException).code !== 'EADDRINUSE') throw err
    await listen(0)
  }
  const port = (server.address() as AddressInfo).port
  base = `http://${host}:${port}`
  const fake: PayFake = {
    port,
    url: base,
    sessions,
    events,
    deliveries,
    webhookUrl: o.webhookUrl ?? null,
    sign,
    deliver,
    pay,
    close: () =>
      new Promise<void>((r) => {
        server.closeAllConnections?.()
        server.close(() => r())
      }),
  }
  return fake
}

/** POST over https trusting one CA (fetch offers no way to add one without another package). */
function postTrusting(url: string, ca: string, headers: Record<string, string>, body: string): Promise<{ status: number; text: string }> {
  return new Promise((resolve, reject) => {
    const req = httpsRequest(url, { method: 'POST', ca, headers: { ...headers, 'content-length': String(Buffer.byteLength(body)) } }, (res) => {
      const chunks: Buffer[] = []
      res.on('data', (c: Buffer) => chunks.push(c))
      res.on('end', () => resolve({ status: res.statusCode ?? 0, text: Buffer.concat(chunks).toString('utf8') }))
      res.on('error', reject)
    })
    req.on('error', reject)
    req.end(body)
  })
}
