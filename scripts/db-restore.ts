// `npm run db:restore FILE`: brings a backup back into an empty cluster/database (creating both if needed).
import { resolve } from 'node:path'
import { app } from './env'
import { restoreDatabase } from './backup'
import { ensureDatabase, isReady, startCluster, stopCluster } from './pg'

const file = process.argv[2]
if (!file) {
  console.error('usage: npm run db:restore FILE')
  process.exit(2)
}
const wasRunning = isReady(app.pgPort)
if (!wasRunning) await startCluster({ dataDir: app.pgDir, port: app.pgPort, durable: true })
try {
  ensureDatabase(app.pgPort, app.dbName)
  restoreDatabase({ port: app.pgPort, database: app.dbName, file: resolve(file) })
  console.log(`restored ${file} into ${app.dbName} on port ${app.pgPort}`)
} catch (err) {
  console.error(String((err as Error).message))
  process.exitCode = 1
} finally {
  if (!wasRunning) stopCluster(app.pgDir)
}
