// The pieces `npm start` and `npm run start:cluster` share: the durable cluster with the migrated, seeded database, the
// client build, and the local stand-ins for mail and payments when no provider is configured.
import { spawnSync } from 'node:child_process'
import { join } from 'node:path'
import { createDb } from '../server/db/client'
import { runMigrations } from '../server/db/migrate'
import { DEMO_PASSWORD, DEMO_USERS, seedDemo } from '../server/db/seed'
import { publishFirstPlans } from '../server/planning/first-plan'
import { startFakeSmtp } from '../server/mail/fake-smtp'
import { startPayFake } from '../server/dev/pay-fake'
import { app, root } from './env'
import { databaseUrl, ensureDatabase, startCluster } from './pg'

/** Private durable PostgreSQL in `.data/pg`, migrations, and the demo workshop (with a first plan) once. Returns the URL. */
export async function prepareDatabase(): Promise<string> {
  await startCluster({ dataDir: app.pgDir, port: app.pgPort, durable: true })
  console.log(`[db] PostgreSQL on 127.0.0.1:${app.pgPort} (data in ${app.pgDir})`)
  ensureDatabase(app.pgPort, app.dbName)
  const url = databaseUrl(app.pgPort, app.dbName)
  const { db, pool } = createDb(url, 2)
  await runMigrations(db)
  const seeded = await seedDemo(db)
  console.log(seeded ? '[db] demo workshop seeded' : '[db] existing data kept (no re-seed)')
  if (seeded) {
    console.log('[plan] planning the demo week (5 s)…')
    const plans = await publishFirstPlans(db, 5)
    if (plans.length) console.log('[plan] first plan published')
  }
  await pool.end()
  return url
}

/** `vite build` into dist/ unless SKIP_BUILD is set. */
export function buildClient() {
  if (process.env.SKIP_BUILD) return
  console.log('[build] building the client…')
  const r = spawnSync(join(root, 'node_modules/.bin/vite'), ['build', '--logLevel', 'warn'], { cwd: root, stdio: 'inherit' })
  if (r.status !== 0) throw new Error('client build failed')
}

/**
 * Outgoing mail: a provider when SMTP_URL is set, otherwise the local test mailbox (nothing leaves this machine). Card
 * payments: a real provider account when its keys are set, otherwise the local test provider (no real money).
 */
export async function startLocalServices(url: string) {
  const mailDb = process.env.SMTP_URL ? null : createDb(url, 2)
  const mailbox = mailDb ? await startFakeSmtp({ port: Number(process.env.MAIL_PORT ?? 2525), db: mailDb.db, anyPortIfTaken: true }) : null
  if (mailbox) console.log(`[mail] local test mailbox on 127.0.0.1:${mailbox.port}`)
  const payFake = process.env.STRIPE_SECRET_KEY ? null : await startPayFake({ port: Number(process.env.PAY_FAKE_PORT ?? 12111), anyPortIfTaken: true })
  if (payFake) console.log(`[pay] local test payment provider on ${payFake.url}`)
  return {
    mailbox,
    payFake,
    /** What the app needs to reach them. */
    env: { ...(mailbox ? { SMTP_URL: mailbox.url } : {}), ...(payFake ? { PAY_FAKE_URL: payFake.url } : {}) } as Record<string, string>,
    async close() {
      await mailbox?.close().catch(() => {})
      await payFake?.close().catch(() => {})
      await mailDb?.pool.end().catch(() => {})
    },
  }
}

export function printSignIns() {
  console.log(`Demo sign-ins (password "${DEMO_PASSWORD}"):`)
  for (const u of DEMO_USERS) console.log(`  ${u.role.padEnd(8)} ${u.email.padEnd(26)} ${u.name}`)
}
