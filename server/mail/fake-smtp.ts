// The local test mailbox: an SMTP server on loopback that keeps what it receives (in memory) and marks the outbox row delivered.
import { and, eq, inArray, sql } from 'drizzle-orm'
import { SMTPServer } from 'smtp-server'
import type { Db } from '../db/client'
import { outbox } from '../db/schema/index'
import { OUTBOX_HEADER } from './transport'

export interface ReceivedMessage {
  from: string
  to: string[]
  subject: string
  text: string
  html: string
  headers: Record<string, string>
  outboxId: number | null
  receivedAt: string
  raw: string
}

export interface FakeSmtp {
  port: number
  url: string
  messages: ReceivedMessage[]
  /** Marks outbox rows delivered in this database from now on (when it is created after the mailbox). */
  useDb(db: Db): void
  /** Refuses the next `n` messages with a temporary error (451), as a busy mail server does; counted in `refused`. */
  refuseNext(n: number): void
  refused: number
  /** Resolves with the first message matching `test` (already received or arriving within timeoutMs). */
  waitFor(test: (m: ReceivedMessage) => boolean, timeoutMs?: number): Promise<ReceivedMessage>
  close(): Promise<void>
}

export interface FakeSmtpOptions {
  port?: number
  host?: string
  /** Marks outbox rows delivered when given. */
  db?: Db
  /** When the port is taken, listen on a free one instead of failing. */
  anyPortIfTaken?: boolean
  /** Keep at most this many messages in memory. */
  keep?: number
}

export async function startFakeSmtp(o: FakeSmtpOptions = {}): Promise<FakeSmtp> {
  const host = o.host ?? '127.0.0.1'
  let db = o.db
  const messages: ReceivedMessage[] = []
  const waiters: { test: (m: ReceivedMessage) => boolean; resolve: (m: ReceivedMessage) => void }[] = []
  let refuse = 0
  const server = new SMTPServer({
    authOptional: true,
    disabledCommands: ['STARTTLS', 'AUTH'],
    logger: false,
    size: 25 * 1024 * 1024,
    onData(stream, session, callback) {
      if (refuse > 0) {
        refuse--
        box.refused++
        stream.resume()
        stream.on('end', () => callback(Object.assign(new Error('Mailbox busy, try again later'), { responseCode: 451 })))
        return
      }
      const chunks: Buffer[] = []
      stream.on('data', (c: Buffer) => chunks.push(c))
      stream.on('end', async () => {
        try {
          const raw = Buffer.concat(chunks).toString('utf8')
          const m = parseMessage(raw)
          const msg: ReceivedMessage = {
            ...m,
            from: session.envelope.mailFrom ? session.envelope.mailFrom.address : '',
            to: session.envelope.rcptTo.map((r) => r.address),
            outboxId: Number(m.headers[OUTBOX_HEADER.toLowerCase()]) || null,
            receivedAt: new Date().toISOString(),
            raw,
          }
          messages.push(msg)
          if (messages.length > (o.keep ?? 1000)) messages.shift()
          if (db && msg.outboxId) {
            await db
              .update(outbox)
              .set({ status: 'delivered', sentAt: sql`coalesce(${outbox.sentAt}, now())` })
              .where(and(eq(outbox.id, msg.outboxId), eq(outbox.subject, msg.subject), inArray(outbox.status, ['queued', 'sent'])))
              .catch((err: Error) => console.error('[mail] test mailbox could not mark the outbox row:', err.message))
          }
          for (const w of [...waiters])
            if (w.test(msg)) {
              waiters.splice(waiters.indexOf(w), 1)
              w.resolve(msg)
            }
          callback()
        } catch (err) {
          callback(err as Error)
        }
      })
    },
  })
  server.on('error', (err) => console.error('[mail] test mailbox error:', err.message))
  const listen = (port: number) =>
    new Promise<number>((resolve, reject) => {
      const net = server.server
      const onError = (err: Error) => {
        net.off('listening', onListening)
        reject(err)
      }
      const onListening = () => {
        net.off('error', onError)
        const a = net.address()
        resolve(typeof a === 'object' && a ? a.port : port)
      }
      net.once('error', onError)
      net.once('listening', onListening)
      server.listen(port, host)
    })
  let port: number
  try {
    port = await listen(o.port ?? 0)
  } catch (err) {
    if ((err as NodeJS.ErrnoException).code !== 'EADDRINUSE' || !o.anyPortIfTaken) throw err
    port = await listen(0)
  }
  const box: FakeSmtp = {
    port,
    url: `smtp://${host}:${port}`,
    messages,
    refused: 0,
    refuseNext(n) {
      refuse = n
    },
    useDb(d) {
      db = d
    },
    waitFor(test, timeoutMs = 5_000) {
      const hit = messages.find(test)
      if (hit) return Promise.resolve(hit)
      return new Promise((resolve, reject) => {
        const w = {
          test,
          resolve: (m: ReceivedMessage) => {
            clearTimeout(timer)
            resolve(m)
          },
        }
        const timer = setTimeout(() => {
          waiters.splice(waiters.indexOf(w), 1)
          reject(new Error('no such message arrived in the test mailbox'))
        }, timeoutMs)
        waiters.push(w)
      })
    },
    close: () => new Promise<void>((resolve) => server.close(() => resolve())),
  }
  return box
}

// A small MIME reader: enough for what nodemailer writes (headers, multipart/alternative, quoted-printable, base64).

function splitHead(raw: string): { headers: Record<string, string>; body: string } {
  const cut = raw.search(/\r?\n\r?\n/)
  const head = cut < 0 ? raw : raw.slice(0, cut)
  const body = cut < 0 ? '' : raw.slice(cut).replace(/^\r?\n\r?\n/, '')
  const headers: Record<string, string> = {}
  for (const line of head.replace(/\r?\n[ \t]+/g, ' ').split(/\r?\n/)) {
    const i = line.indexOf(':')
    if (i > 0) headers[line.slice(0, i).trim().toLowerCase()] = line.slice(i + 1).trim()
  }
  return { headers, body }
}

function decodeQuotedPrintable(s: string): string {
  const bytes: number[] = []
  const text = s.replace(/=\r?\n/g, '')
  for (let i = 0; i < text.length; i++) {
    const ch = text[i]!
    if (ch === '=' && /^[0-9A-F]{2}$/i.test(text.slice(i + 1, i + 3))) {
      bytes.push(parseInt(text.slice(i + 1, i + 3), 16))
      i += 2
    } else bytes.push(...Buffer.from(ch, 'utf8'))
  }
  return Buffer.from(bytes).toString('utf8')
}

function decodeBody(body: string, encoding = ''): string {
  const e = encoding.toLowerCase()
  if (e === 'quoted-printable') return decodeQuotedPrintable(body)
  if (e === 'base64') return Buffer.from(body.replace(/\s+/g, ''), 'base64').toString('utf8')
  return body
}

/** Decodes RFC 2047 encoded words (=?UTF-8?Q?…?= and =?UTF-8?B?…?=) in a header. */
export function decodeHeader(value: string): string {
  return value.replace(/=\?([^?]+)\?([QqBb])\?([^?]*)\?=\s*/g, (_m, _cs, enc: string, data: string) =>
    enc.toUpperCase() === 'B' ? Buffer.from(data, 'base64').toString('utf8') : decodeQuotedPrintable(data.replace(/_/g, ' ')),
  )
}

function parseMessage(raw: string): Pick<ReceivedMessage, 'subject' | 'text' | 'html' | 'headers'> {
  const { headers, body } = splitHead(raw)
  let text = '',
    html = ''
  const visit = (h: Record<string, string>, b: string) => {
    const type = h['content-type'] ?? 'text/plain'
    const boundary = /boundary="?([^";]+)"?/i.exec(type)?.[1]
    if (/^multipart\//i.test(type) && boundary) {
      for (const part of b.split(`--${boundary}`).slice(1)) {
        if (part.startsWith('--')) break
        const p = splitHead(part.replace(/^\r?\n/, ''))
        visit(p.headers, p.body.replace(/\r?\n$/, ''))
      }
    } else if (/^text\/html/i.test(type)) html ||= decodeBody(b, h['content-transfer-encoding'])
    else if (/^text\//i.test(type)) text ||= decodeBody(b, h['content-transfer-encoding'])
  }
  visit(headers, body)
  return { subject: decodeHeader(headers.subject ?? ''), text: text.replace(/\r\n/g, '\n'), html, headers }
}
