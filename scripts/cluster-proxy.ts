// The reverse proxy of `npm run start:cluster`: one address in front of several app instances, WebSocket upgrades
// included, and sticky: a browser keeps its instance through a cookie (so Socket.IO's long-polling fallback stays on
// the instance that holds its session); a client without the cookie (scripts) is kept by a hash of its address.
import { createHash } from 'node:crypto'
import http from 'node:http'
import type { Socket } from 'node:net'
import httpProxy from 'http-proxy'

export const STICKY_COOKIE = 'mg_instance'
/** How long an instance that refused a connection is skipped. */
const DOWN_MS = 3000

export interface ClusterProxy {
  readonly url: string
  readonly port: number
  /** Replaces the instances behind the proxy (e.g. after one was restarted on a new port). */
  setTargets(urls: string[]): void
  close(): Promise<void>
}

type Req = http.IncomingMessage & { stickyCookie?: string; target?: string }

function cookieValue(req: http.IncomingMessage, name: string): string | null {
  for (const part of (req.headers.cookie ?? '').split(';')) {
    const [k, ...v] = part.trim().split('=')
    if (k === name) return v.join('=')
  }
  return null
}

export async function startProxy(o: { port: number; host?: string; targets: string[] }): Promise<ClusterProxy> {
  let targets = [...o.targets]
  const down = new Map<string, number>()
  let next = 0
  const agent = new http.Agent({ keepAlive: true, maxSockets: 512 })
  const proxy = httpProxy.createProxyServer({ xfwd: true, agent })
  const up = () => targets.filter((t) => (down.get(t) ?? 0) < Date.now())

  /** The instance for a request: its cookie's, else (Socket.IO without a cookie) its address's, else the next in turn. */
  const pick = (req: Req): string | null => {
    const live = up()
    if (!live.length) return null
    const named = cookieValue(req, STICKY_COOKIE)
    const byCookie = named !== null ? targets[Number(named)] : undefined
    if (byCookie && live.includes(byCookie)) return byCookie
    let target: string
    if (req.url?.startsWith('/socket.io/')) {
      const addr = req.socket.remoteAddress ?? ''
      target = live[createHash('sha1').update(addr).digest().readUInt32BE(0) % live.length]!
    } else {
      target = live[next++ % live.length]!
    }
    req.stickyCookie = `${STICKY_COOKIE}=${targets.indexOf(target)}; Path=/; HttpOnly; SameSite=Lax`
    return target
  }

  // Our cookie goes beside the app's own (the session cookie), never instead of it.
  proxy.on('proxyRes', (proxyRes, req) => {
    const c = (req as Req).stickyCookie
    if (!c) return
    const existing = proxyRes.headers['set-cookie'] ?? []
    proxyRes.headers['set-cookie'] = [...existing, c]
  })
  proxy.on('error', (err, req, res) => {
    const t = (req as Req).target
    if (t && /ECONNREFUSED|ECONNRESET|EHOSTUNREACH/.test((err as NodeJS.ErrnoException).code ?? err.message)) down.set(t, Date.now() + DOWN_MS)
    if (res instanceof http.ServerResponse) {
      if (!res.headersSent) res.writeHead(502, { 'content-type': 'application/json' })
      res.end(JSON.stringify({ code: 'unavailable', message: 'That app instance is not answering; try again.' }))
    } else {
      ;(res as Socket).destroy()
    }
  })

  const server = http.createServer((req: Req, res) => {
    const target = pick(req)
    if (!target) {
      res.writeHead(503, { 'content-type': 'application/json' })
      return void res.end(JSON.stringify({ code: 'unavailable', message: 'No app instance is running.' }))
    }
    req.target = target
    proxy.web(req, res, { target })
  })
  server.on('upgrade', (req: Req, socket: Socket, head: Buffer) => {
    const target = pick(req)
    if (!target) return void socket.destroy()
    req.target = target
    proxy.ws(req, socket, head, { target })
  })
  await new Promise<void>((res, rej) => {
    server.once('error', rej)
    server.listen(o.port, o.host ?? '127.0.0.1', () => res())
  })
  const address = server.address()
  const port = typeof address === 'object' && address ? address.port : o.port
  return {
    url: `http://${o.host ?? '127.0.0.1'}:${port}`,
    port,
    setTargets(urls) {
      targets = [...urls]
      down.clear()
    },
    async close() {
      const cut = setTimeout(() => server.closeAllConnections(), 2000)
      await new Promise<void>((r) => server.close(() => r()))
      clearTimeout(cut)
      proxy.close()
      agent.destroy()
    },
  }
}
