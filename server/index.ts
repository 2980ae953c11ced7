// The server process: HTTP + Socket.IO on one port, closed cleanly on SIGINT/SIGTERM.
import { Server } from 'socket.io'
import { createAdapter } from '@socket.io/postgres-adapter'
import { createApp } from './app'
import { loadConfig, type Config } from './config'
import { createDb } from './db/client'
import { attachSockets } from './realtime/sockets'
import { Realtime } from './realtime/hub'
import { startDigestTimer } from './mail/digest-timer'
import { createAppJobs } from './jobs/index'
import { createHttpServer } from './lib/tls'
import { closePlanner, prewarmPlanner } from './scheduler/run-in-worker'

export async function startServer(config: Config) {
  const { db, pool } = createDb(config.DATABASE_URL)
  const realtime = new Realtime()
  const jobs = createAppJobs(config)
  const { app, sessionMiddleware, passport, deps } = createApp({ db, pool, config, realtime, jobs })
  await jobs.start(deps)
  const { server: http, scheme, tls } = await createHttpServer(config, app)
  // Tests drive the digest by hand; a timer firing into a test database being dropped would only make noise.
  const digest = config.NODE_ENV === 'test' ? { stop() {} } : startDigestTimer(deps)
  const io = new Server(http, { serveClient: false })
  // Broadcasts and disconnects reach the sockets of every instance over this database (one instance works the same).
  io.adapter(createAdapter(pool, { errorHandler: (err) => console.error('[realtime] adapter:', err.message) }))
  await realtime.listen(config.DATABASE_URL)
  attachSockets(io, { sessionMiddleware, passport, realtime, sweepMs: config.SOCKET_SESSION_SWEEP_MS })
  await new Promise<void>((resolve, reject) => {
    http.once('error', reject)
    http.listen(config.PORT, config.HOST, () => resolve())
  })
  // A planning worker loaded and warmed up now, so the manager's first run starts at once (see run-in-worker.ts).
  prewarmPlanner()
  const address = http.address()
  const port = typeof address === 'object' && address ? address.port : config.PORT
  return {
    port,
    url: `${scheme}://${config.HOST}:${port}`,
    /** The certificate served over HTTPS (TLS on), else null. */
    tls,
    db,
    async close() {
      digest.stop()
      await jobs.stop()
      deps.mailer?.close()
      await realtime.close()
      await closePlanner()
      io.close()
      // Requests in flight get a few seconds to finish; then remaining connections are cut so shutdown never hangs.
      const cut = setTimeout(() => http.closeAllConnections(), 3000)
      await new Promise<void>((r) => http.close(() => r()))
      clearTimeout(cut)
      await Promise.race([pool.end(), new Promise((r) => setTimeout(r, 3000))])
    },
  }
}

const isMain = import.meta.url === `file://${process.argv[1]}`
if (isMain) {
  const server = await startServer(loadConfig())
  console.log(`Millgrain listening on ${server.url}`)
  const stop = async () => {
    await server.close()
    process.exit(0)
  }
  process.on('SIGINT', stop)
  process.on('SIGTERM', stop)
}
