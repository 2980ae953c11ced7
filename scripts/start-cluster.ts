// `npm run start:cluster -- --instances N` (or INSTANCES=N; default 2): the same durable database, demo data and client
// build as `npm start`, then N app processes on loopback ports behind one sticky reverse proxy on PORT (default 8080).
// An instance that dies is started again; Ctrl-C stops the proxy, the instances and the database.
import { join } from 'node:path'
import { app, root, sessionSecret } from './env'
import { startProxy } from './cluster-proxy'
import { instanceName, spawnInstance, type InstanceProcess } from './instance-process'
import { stopCluster } from './pg'
import { buildClient, prepareDatabase, printSignIns, startLocalServices } from './start-common'

function instanceCount(argv: string[], env: NodeJS.ProcessEnv): number {
  const i = argv.indexOf('--instances')
  const raw = i >= 0 ? argv[i + 1] : (argv.find((a) => a.startsWith('--instances='))?.split('=')[1] ?? env.INSTANCES ?? '2')
  const n = Number(raw)
  if (!Number.isInteger(n) || n < 1 || n > 16) throw new Error(`--instances must be a whole number from 1 to 16 (got ${raw})`)
  return n
}

const n = instanceCount(process.argv, process.env)
const url = await prepareDatabase()
buildClient()
const local = await startLocalServices(url)
// Every instance: the one database and session secret (a session made on one is valid on all), plain HTTP on loopback.
const env: Record<string, string> = {
  DATABASE_URL: url,
  SESSION_SECRET: sessionSecret(),
  CLIENT_DIR: join(root, 'dist'),
  NODE_ENV: process.env.NODE_ENV ?? 'production',
  LAN: 'false',
  TLS: 'false',
  ...local.env,
}
const instances: InstanceProcess[] = await Promise.all(Array.from({ length: n }, (_, i) => spawnInstance(instanceName(i), env, { echo: true })))
const proxy = await startProxy({ port: app.port, host: process.env.HOST ?? '127.0.0.1', targets: instances.map((i) => i.url) })
if (local.payFake) local.payFake.webhookUrl = `${proxy.url}/api/payments/webhook`

let stopping = false
// A crashed instance is started again on a new port; the proxy sends its browsers to the new one (their sessions are in PostgreSQL).
const watch = (slot: number) => {
  void instances[slot]!.exited.then(async (code) => {
    if (stopping) return
    console.log(`[cluster] instance ${instances[slot]!.name} ended (${code ?? 'signal'}); starting it again…`)
    await new Promise((r) => setTimeout(r, 1000))
    try {
      instances[slot] = await spawnInstance(instanceName(slot), env, { echo: true })
      proxy.setTargets(instances.map((i) => i.url))
      watch(slot)
    } catch (err) {
      console.error(`[cluster] could not start instance ${instanceName(slot)} again:`, (err as Error).message)
    }
  })
}
instances.forEach((_, i) => watch(i))

console.log(`\nMillgrain is running at ${proxy.url} — ${n} instance${n === 1 ? '' : 's'} (${instances.map((i) => `${i.name}: ${i.url}`).join(', ')})\n`)
printSignIns()
console.log('\nPress Ctrl-C to stop the proxy, the instances and the database.')

async function stop() {
  if (stopping) return
  stopping = true
  console.log('\n[stop] closing the proxy and the instances…')
  await Promise.race([proxy.close().catch(() => {}), new Promise((r) => setTimeout(r, 3000))])
  await Promise.all(instances.map((i) => i.kill('SIGTERM')))
  await local.close()
  console.log('[stop] stopping PostgreSQL…')
  stopCluster(app.pgDir)
  process.exit(0)
}
process.on('SIGINT', stop)
process.on('SIGTERM', stop)
