// Outgoing mail transport from configuration: an SMTP provider by URL, the local test mailbox by default; swapping is configuration only.
import nodemailer from 'nodemailer'
import type SMTPTransport from 'nodemailer/lib/smtp-transport'
import type { Config } from '../config'

export interface OutgoingMessage {
  to: string
  subject: string
  text: string
  html: string
  headers?: Record<string, string>
}

/** What the services need from a mail transport. */
export interface Mailer {
  /** Where the messages go, without credentials (for logs). */
  readonly target: string
  send(msg: OutgoingMessage): Promise<{ messageId: string }>
  close(): void
}

/** Header carrying the outbox row id, so the local test mailbox can mark the row delivered. */
export const OUTBOX_HEADER = 'X-Millgrain-Outbox'

const withoutCredentials = (url: string) => url.replace(/\/\/[^@/]*@/, '//')

export function smtpUrlFor(config: Pick<Config, 'SMTP_URL' | 'MAIL_PORT'>) {
  return config.SMTP_URL ?? `smtp://127.0.0.1:${config.MAIL_PORT}`
}

export function createMailer(config: Pick<Config, 'SMTP_URL' | 'MAIL_PORT' | 'MAIL_FROM' | 'NODE_ENV'>): Mailer {
  // In tests without an SMTP_URL nothing leaves the process: a developer's local mailbox must not receive test mail.
  const inProcess = config.NODE_ENV === 'test' && !config.SMTP_URL
  const url = smtpUrlFor(config)
  const transport = inProcess
    ? nodemailer.createTransport({ jsonTransport: true })
    : nodemailer.createTransport({ url, connectionTimeout: 5_000, greetingTimeout: 5_000, socketTimeout: 10_000 } as SMTPTransport.Options)
  return {
    target: inProcess ? 'in-process (test)' : withoutCredentials(url),
    async send(msg) {
      // Quoted-printable keeps the text readable for the local mailbox's small decoder and for people reading raw mail.
      const info = await transport.sendMail({
        from: config.MAIL_FROM,
        to: msg.to,
        subject: msg.subject,
        text: msg.text,
        html: msg.html,
        headers: msg.headers,
        textEncoding: 'quoted-printable',
      })
      return { messageId: String(info.messageId ?? '') }
    },
    close: () => transport.close(),
  }
}
