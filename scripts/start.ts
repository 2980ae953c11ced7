// `npm start`: private durable PostgreSQL, migrations, demo data once, client build, then the app on 127.0.0.1 (`--lan`: HTTPS on the workshop network).
import { join } from 'node:path'
import { loadConfig } from '../server/config'
import { startServer } from '../server/index'
import { lanBanner } from '../server/lib/tls'
import { app, dataRoot, root, sessionSecret } from './env'
import { stopCluster } from './pg'
import { buildClient, prepareDatabase, printSignIns, startLocalServices } from './start-common'

// `npm start -- --lan` is LAN=1: HTTPS with the workshop's own certificate, listening on the network (server/config.ts).
const lan = process.argv.includes('--lan') ? { LAN: '1' } : {}

const url = await prepareDatabase()
buildClient()
// Mail and payments: the configured providers, or the local stand-ins (see the outbox page and the test payment page).
const local = await startLocalServices(url)
const { payFake } = local
const config = loadConfig({
  TLS_DIR: join(dataRoot, 'tls'),
  ...process.env,
  ...lan,
  DATABASE_URL: url,
  PORT: String(app.port),
  SESSION_SECRET: sessionSecret(),
  CLIENT_DIR: join(root, 'dist'),
  NODE_ENV: process.env.NODE_ENV ?? 'production',
  ...local.env,
})
const server = await startServer(config)
// Over HTTPS on every address (LAN), this computer reaches the app on loopback, trusting the workshop's CA.
const localUrl = server.tls && /^(0\.0\.0\.0|::)$/.test(config.HOST) ? `https://127.0.0.1:${server.port}` : server.url
if (payFake) {
  payFake.webhookUrl = `${localUrl}/api/payments/webhook`
  if (server.tls) payFake.webhookCa = server.tls.ca
}
console.log(`\nMillgrain is running at ${localUrl}\n`)
if (server.tls) console.log(`${await lanBanner({ host: config.HOST, port: server.port })}\n`)
printSignIns()
console.log('\nPress Ctrl-C to stop the app and the database.')

let stopping = false
async function stop() {
  if (stopping) return
  stopping = true
  console.log('\n[stop] closing the app…')
  // Whatever happens, the database is stopped cleanly within a few seconds.
  await Promise.race([server.close().catch(() => {}), new Promise((r) => setTimeout(r, 8000))])
  await local.close()
  console.log('[stop] stopping PostgreSQL…')
  stopCluster(app.pgDir)
  process.exit(0)
}
process.on('SIGINT', stop)
process.on('SIGTERM', stop)
