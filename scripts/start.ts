// `npm start`: private durable PostgreSQL, migrations, demo data once, client build, then the app on 127.0.0.1 (`--lan`: HTTPS on the workshop network).
import { spawnSync } from 'node:child_process'
import { join } from 'node:path'
import { loadConfig } from '../server/config'
import { createDb } from '../server/db/client'
import { runMigrations } from '../server/db/migrate'
import { DEMO_PASSWORD, DEMO_USERS, seedDemo } from '../server/db/seed'
import { publishFirstPlans } from '../server/services/planning/first-plan'
import { startServer } from '../server/index'
import { startFakeSmtp } from '../server/mail/fake-smtp'
import { startPayFake } from '../server/dev/pay-fake'
import { lanBanner } from '../server/lib/tls'
import { app, dataRoot, root, sessionSecret } from './env'
import { databaseUrl, ensureDatabase, startCluster, stopCluster } from './pg'

// `npm start -- --lan` is LAN=1: HTTPS with the workshop's own certificate, listening on the network (server/config.ts).
const lan = process.argv.includes('--lan') ? { LAN: '1' } : {}

await startCluster({ dataDir: app.pgDir, port: app.pgPort, durable: true })
console.log(`[db] PostgreSQL on 127.0.0.1:${app.pgPort} (data in ${app.pgDir})`)
ensureDatabase(app.pgPort, app.dbName)
const url = databaseUrl(app.pgPort, app.dbName)
{
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
}
if (!process.env.SKIP_BUILD) {
  console.log('[build] building the client…')
  const r = spawnSync(join(root, 'node_modules/.bin/vite'), ['build', '--logLevel', 'warn'], { cwd: root, stdio: 'inherit' })
  if (r.status !== 0) throw new Error('client build failed')
}
// Outgoing mail: a provider when SMTP_URL is set; otherwise the local test mailbox (nothing leaves this machine; see the outbox page).
const mailDb = process.env.SMTP_URL ? null : createDb(url, 2)
const mailbox = mailDb ? await startFakeSmtp({ port: Number(process.env.MAIL_PORT ?? 2525), db: mailDb.db, anyPortIfTaken: true }) : null
if (mailbox) console.log(`[mail] local test mailbox on 127.0.0.1:${mailbox.port}`)
// Card payments: a real provider account when its keys are set; otherwise the local test provider (no real money).
const payFake = process.env.STRIPE_SECRET_KEY ? null : await startPayFake({ port: Number(process.env.PAY_FAKE_PORT ?? 12111), anyPortIfTaken: true })
if (payFake) console.log(`[pay] local test payment provider on ${payFake.url}`)
const config = loadConfig({ TLS_DIR: join(dataRoot, 'tls'), ...process.env, ...lan, DATABASE_URL: url, PORT: String(app.port), SESSION_SECRET: sessionSecret(), CLIENT_DIR: join(root, 'dist'), NODE_ENV: process.env.NODE_ENV ?? 'production', ...(mailbox ? { SMTP_URL: mailbox.url } : {}), ...(payFake ? { PAY_FAKE_URL: payFake.url } : {}) })
const server = await startServer(config)
// Over HTTPS on every address (LAN), this computer reaches the app on loopback, trusting the workshop's CA.
const localUrl = server.tls && /^(0\.0\.0\.0|::)$/.test(config.HOST) ? `https://127.0.0.1:${server.port}` : server.url
if (payFake) {
  payFake.webhookUrl = `${localUrl}/api/payments/webhook`
  if (server.tls) payFake.webhookCa = server.tls.ca
}
console.log(`\nMillgrain is running at ${localUrl}\n`)
if (server.tls) console.log(`${await lanBanner({ host: config.HOST, port: server.port })}\n`)
console.log(`Demo sign-ins (password "${DEMO_PASSWORD}"):`)
for (const u of DEMO_USERS) console.log(`  ${u.role.padEnd(8)} ${u.email.padEnd(26)} ${u.name}`)
console.log('\nPress Ctrl-C to stop the app and the database.')

let stopping = false
async function stop() {
  if (stopping) return
  stopping = true
  console.log('\n[stop] closing the app…')
  // Whatever happens, the database is stopped cleanly within a few seconds.
  await Promise.race([server.close().catch(() => {}), new Promise((r) => setTimeout(r, 8000))])
  await mailbox?.close().catch(() => {})
  await payFake?.close().catch(() => {})
  await mailDb?.pool.end().catch(() => {})
  console.log('[stop] stopping PostgreSQL…')
  stopCluster(app.pgDir)
  process.exit(0)
}
process.on('SIGINT', stop)
process.on('SIGTERM', stop)
