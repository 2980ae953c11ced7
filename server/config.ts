// Configuration read once from the environment at start; a bad value stops the process with a clear message.
import { z } from 'zod'

const schema = z
  .object({
    DATABASE_URL: z.string().url('must be a postgres:// URL'),
    PORT: z.coerce.number().int().min(0).max(65535).default(8080),
    /** Listening address: 127.0.0.1 unless LAN (then 0.0.0.0). */
    HOST: z.string().optional(),
    SESSION_SECRET: z.string().min(16, 'must be at least 16 characters'),
    /** Idle sessions expire after this many minutes. */
    SESSION_IDLE_MINUTES: z.coerce
      .number()
      .int()
      .min(1)
      .default(12 * 60),
    /** Bench tablets stay signed in this long. */
    BENCH_SESSION_DAYS: z.coerce.number().int().min(1).default(30),
    /** How often open sockets are checked for a session that ended without a request (idle expiry, another process). */
    SOCKET_SESSION_SWEEP_MS: z.coerce.number().int().min(50).default(30_000),
    /** Failed sign-ins allowed in 15 minutes, counted per address and per account (successful ones do not count). */
    LOGIN_ATTEMPTS_PER_15_MIN: z.coerce.number().int().min(1).default(20),
    /** Invitation links stay usable this many hours, password-reset links this many minutes; a bench PIN lasts this many seconds (or one action). */
    INVITE_LINK_HOURS: z.coerce.number().int().min(1).default(72),
    RESET_LINK_MINUTES: z.coerce.number().int().min(1).default(60),
    BENCH_PIN_SECONDS: z.coerce.number().int().min(10).default(120),
    /** Requests allowed in 15 minutes per address to each of: invitations, reset requests, one-time links, PIN checks. */
    ACCOUNT_REQUESTS_PER_15_MIN: z.coerce.number().int().min(1).default(20),
    NODE_ENV: z.enum(['development', 'production', 'test']).default('development'),
    /** Built client to serve (omitted in API-only tests). */
    CLIENT_DIR: z.string().optional(),
    /** Outgoing mail: smtp(s):// URL of the provider; unset → the local test mailbox on MAIL_PORT (tests: nothing leaves the process). */
    SMTP_URL: z.string().url('must be an smtp:// or smtps:// URL').optional(),
    MAIL_PORT: z.coerce.number().int().min(0).max(65535).default(2525),
    MAIL_FROM: z.string().default('Millgrain <no-reply@millgrain.invalid>'),
    /** Uploaded sketches and photos live here, outside the web root. */
    UPLOAD_DIR: z.string().default('.data/uploads'),
    UPLOAD_MAX_BYTES: z.coerce
      .number()
      .int()
      .min(1)
      .default(10 * 1024 * 1024),
    /** The payment provider's account (both set → real card payments); unset → the local fake at PAY_FAKE_URL, if any. */
    STRIPE_SECRET_KEY: z.string().min(1).optional(),
    STRIPE_WEBHOOK_SECRET: z.string().min(1).optional(),
    /** The local fake provider (server/dev/pay-fake.ts), started by `npm start` and the tests when no account is set. */
    PAY_FAKE_URL: z.string().url('must be an http:// URL').optional(),
    /** The job queue (server/jobs): how often an idle instance looks for work; after how long without a heartbeat a planner run counts as lost; the first wait before an e-mail is tried again (doubling). */
    JOBS_POLL_SECONDS: z.coerce.number().min(0.5).default(1),
    PLAN_RUN_STALE_SECONDS: z.coerce.number().int().min(2).default(30),
    MAIL_RETRY_SECONDS: z.coerce.number().int().min(1).default(30),
    /** `npm start -- --lan`: HTTPS on the workshop network (HOST defaults to 0.0.0.0, TLS on). */
    LAN: z.stringbool().default(false),
    /** Serve HTTPS with the workshop's own certificate, on whatever HOST is (LAN turns it on; tests use it on loopback). */
    TLS: z.stringbool().optional(),
    /** The local CA and server certificate (server/lib/tls.ts). */
    TLS_DIR: z.string().default('.data/tls'),
  })
  .transform(({ HOST, TLS, ...c }) => ({ ...c, HOST: HOST ?? (c.LAN ? '0.0.0.0' : '127.0.0.1'), TLS: TLS ?? c.LAN }))
export type Config = z.infer<typeof schema>

export function loadConfig(env: NodeJS.ProcessEnv = process.env): Config {
  const r = schema.safeParse(env)
  if (!r.success) {
    const lines = r.error.issues.map((i) => `  ${i.path.join('.')}: ${i.message}`).join('\n')
    throw new Error(`Invalid configuration:\n${lines}`)
  }
  return r.data
}
