// `npm run db:backup [FILE]`: writes a pg_dump file of the npm start database (starting its cluster if it is not running).
import { join } from 'node:path'
import { app, dataRoot } from './env'
import { backupDatabase } from './backup'
import { isReady, startCluster, stopCluster } from './pg'

const file = process.argv[2] ?? join(dataRoot, 'backups', `millgrain-${new Date().toISOString().replace(/[:.]/g, '-')}.dump`)
const wasRunning = isReady(app.pgPort)
if (!wasRunning) await startCluster({ dataDir: app.pgDir, port: app.pgPort, durable: true })
try {
  const r = backupDatabase({ port: app.pgPort, database: app.dbName, file })
  console.log(`backup written: ${r.file} (${(r.bytes / 1024).toFixed(0)} KiB)`)
} finally {
  if (!wasRunning) stopCluster(app.pgDir)
}
