// HTTPS for tablets on the workshop network, exercised on loopback only (TLS on, bound to 127.0.0.1): the certificate's
// names read back with node:crypto, a request trusting only the workshop CA, Secure session cookies, Socket.IO over wss,
// the CA download, ticket QR codes with https links, the certificate kept between starts and made anew when it must be.
import { X509Certificate } from 'node:crypto'
import { mkdtempSync, readFileSync, rmSync, statSync } from 'node:fs'
import { request as httpsRequest, type RequestOptions } from 'node:https'
import { hostname, networkInterfaces, tmpdir } from 'node:os'
import { join } from 'node:path'
import type { TLSSocket } from 'node:tls'
import jsQR from 'jsqr'
import { PDFParse } from 'pdf-parse'
import { PNG } from 'pngjs'
import { io as connect } from 'socket.io-client'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { loadConfig } from '../../server/config'
import { ownAppUrl } from '../../server/lib/public-url'
import { ensureCertificate, lanBanner } from '../../server/lib/tls'
import { startFakeSmtp, type FakeSmtp } from '../../server/mail/fake-smtp'
import { DEMO_EMAIL, startTestServer } from '../setup/app'
import { DEMO_PASSWORD } from '../../server/db/seed'

type Srv = Awaited<ReturnType<typeof startTestServer>>
const dir = mkdtempSync(join(tmpdir(), 'mg-tls-'))
let srv: Srv
let ca: string
let mailbox: FakeSmtp

/** The machine's own non-loopback IPv4 addresses, read here straight from node:os (never contacted). */
const machineIPv4 = Object.values(networkInterfaces())
  .flat()
  .filter((a) => a && a.family === 'IPv4' && !a.internal)
  .map((a) => a!.address)

interface Answer {
  status: number
  headers: Record<string, string | string[] | undefined>
  body: Buffer
  peer: X509Certificate
}
/** One https request to the loopback server, trusting only `ca` (node:https, not the code under test). */
function get(path: string, o: RequestOptions & { body?: string } = {}): Promise<Answer> {
  return new Promise((resolve, reject) => {
    const url = new URL(path, srv.url)
    const req = httpsRequest(url, { ca, agent: false, ...o }, (res) => {
      const peer = new X509Certificate((res.socket as TLSSocket).getPeerCertificate().raw)
      const chunks: Buffer[] = []
      res.on('data', (c: Buffer) => chunks.push(c))
      res.on('end', () => resolve({ status: res.statusCode ?? 0, headers: res.headers, body: Buffer.concat(chunks), peer }))
      res.on('error', reject)
    })
    req.on('error', reject)
    req.end(o.body)
  })
}

async function signIn(email = DEMO_EMAIL.manager) {
  const a = await get('/api/session')
  let cookie = String(a.headers['set-cookie']?.[0] ?? '').split(';')[0]!
  const { csrfToken } = JSON.parse(a.body.toString()) as { csrfToken: string }
  const body = JSON.stringify({ email, password: DEMO_PASSWORD })
  const b = await get('/api/session', {
    method: 'POST',
    headers: { 'content-type': 'application/json', 'x-csrf-token': csrfToken, cookie, 'content-length': String(Buffer.byteLength(body)) },
    body,
  })
  expect(b.status).toBe(200)
  cookie = String(b.headers['set-cookie']?.[0] ?? cookie).split(';')[0]!
  return { cookie, csrf: (JSON.parse(b.body.toString()) as { csrfToken: string }).csrfToken }
}

beforeAll(async () => {
  mailbox = await startFakeSmtp()
  srv = await startTestServer({ HOST: '127.0.0.1', TLS: '1', TLS_DIR: dir, SMTP_URL: mailbox.url })
  mailbox.useDb(srv.db)
  ca = readFileSync(join(dir, 'millgrain-ca.crt'), 'utf8')
}, 60_000)
afterAll(async () => {
  await srv?.stop()
  await mailbox?.close()
  rmSync(dir, { recursive: true, force: true })
})

describe('settings', () => {
  const base = { DATABASE_URL: 'postgres://x@127.0.0.1:1/x', SESSION_SECRET: 'test-secret-test-secret' }
  it('when nothing is set, then the server listens on loopback over plain http as before', () => {
    const c = loadConfig(base)
    expect([c.HOST, c.TLS, c.LAN]).toEqual(['127.0.0.1', false, false])
    expect(ownAppUrl({ ...c, PORT: 8080 })).toBe('http://127.0.0.1:8080')
  })
  it('when LAN is set, then it listens on every address with TLS; a HOST given still wins, and TLS alone keeps loopback', () => {
    expect(loadConfig({ ...base, LAN: '1' })).toMatchObject({ HOST: '0.0.0.0', TLS: true })
    expect(loadConfig({ ...base, LAN: 'true', HOST: '192.0.2.5' })).toMatchObject({ HOST: '192.0.2.5', TLS: true })
    expect(loadConfig({ ...base, TLS: '1' })).toMatchObject({ HOST: '127.0.0.1', TLS: true, LAN: false })
    expect(() => loadConfig({ ...base, LAN: 'maybe' })).toThrow(/LAN/)
  })
  it('when serving https on every address, then links the server hands out use the network address tablets open', () => {
    // 192.0.2.0/24 is reserved for documentation (RFC 5737): written into the link, never contacted.
    const interfaces = {
      lo: [{ address: '127.0.0.1', family: 'IPv4', internal: true }],
      eth0: [{ address: '192.0.2.7', family: 'IPv4', internal: false }],
    } as unknown as ReturnType<typeof networkInterfaces>
    expect(ownAppUrl({ HOST: '0.0.0.0', PORT: 8080, TLS: true }, interfaces)).toBe('https://192.0.2.7:8080')
    expect(ownAppUrl({ HOST: '0.0.0.0', PORT: 8080, TLS: false }, interfaces)).toBe('http://0.0.0.0:8080')
  })
})

describe('https on loopback with the workshop certificate', () => {
  it('when the server starts with TLS, then its certificate names loopback, the host name and every network IPv4 address, signed by the workshop CA', () => {
    expect(srv.url).toMatch(/^https:\/\/127\.0\.0\.1:\d+$/)
    const leaf = new X509Certificate(readFileSync(join(dir, 'server.crt')))
    const root = new X509Certificate(ca)
    // node:crypto writes names as "DNS:x" and "IP Address:y", IPv6 in full (::1 → 0:0:0:0:0:0:0:1).
    const sans = leaf.subjectAltName!.split(', ')
    expect(sans).toEqual(
      expect.arrayContaining([
        'DNS:localhost',
        'IP Address:127.0.0.1',
        'IP Address:0:0:0:0:0:0:0:1',
        `DNS:${hostname().toLowerCase()}`,
        ...machineIPv4.map((ip) => `IP Address:${ip}`),
      ]),
    )
    expect(leaf.checkIssued(root) && leaf.verify(root.publicKey)).toBe(true)
    expect(root.ca).toBe(true)
    expect(leaf.ca).toBe(false)
    // Private keys readable by the owner only.
    expect(statSync(join(dir, 'server.key')).mode & 0o777).toBe(0o600)
    expect(statSync(join(dir, 'ca.key')).mode & 0o777).toBe(0o600)
  })

  it('when a client trusts only the workshop CA, then the request succeeds; without it, the certificate is refused', async () => {
    const r = await get('/api/session')
    expect(r.status).toBe(200)
    expect(r.peer.fingerprint256).toBe(new X509Certificate(readFileSync(join(dir, 'server.crt'))).fingerprint256)
    await expect(
      new Promise((resolve, reject) => httpsRequest(new URL('/api/session', srv.url), { agent: false }, resolve).on('error', reject).end()),
    ).rejects.toThrow(/self[- ]signed|unable to verify|certificate/i)
  })

  it('when a session starts over https, then its cookie is Secure and HttpOnly, and no HSTS header is sent', async () => {
    const r = await get('/api/session')
    const cookie = String(r.headers['set-cookie']?.[0] ?? '')
    expect(cookie).toMatch(/^millgrain\.sid=/)
    expect(cookie.split(/;\s*/).map((p) => p.toLowerCase())).toEqual(expect.arrayContaining(['secure', 'httponly']))
    // A self-signed certificate must not pin browsers to https (RFC 6797 header name).
    expect(r.headers['strict-transport-security']).toBeUndefined()
  })

  it('when a signed-in tablet opens Socket.IO over the same https port, then it connects', async () => {
    const { cookie } = await signIn()
    const socket = connect(srv.url, { transports: ['websocket'], extraHeaders: { cookie }, ca, reconnection: false })
    try {
      await new Promise<void>((resolve, reject) => {
        socket.once('connect', () => resolve())
        socket.once('connect_error', reject)
      })
      expect(socket.connected).toBe(true)
    } finally {
      socket.close()
    }
  })

  it('when a tablet downloads the workshop certificate, then it gets the CA certificate as a file to install', async () => {
    const r = await get('/tls/millgrain-ca.crt')
    expect(r.status).toBe(200)
    expect(r.headers['content-type']).toBe('application/x-x509-ca-cert')
    expect(new X509Certificate(r.body).fingerprint256).toBe(new X509Certificate(ca).fingerprint256)
  })

  it('when a ticket is printed over https with no public address set, then its QR code holds an https link to the job bag', async () => {
    const { cookie } = await signIn()
    const bags = JSON.parse((await get('/api/job-bags', { headers: { cookie } })).body.toString()) as { id: number }[]
    const id = bags[0]!.id
    const r = await get(`/api/job-bags/${id}/ticket.pdf`, { headers: { cookie } })
    expect(r.status).toBe(200)
    const parser = new PDFParse({ data: new Uint8Array(r.body) })
    const images = await parser.getImage({ imageThreshold: 0 })
    await parser.destroy()
    const png = PNG.sync.read(Buffer.from(images.pages[0]!.images[0]!.data))
    const link = jsQR(new Uint8ClampedArray(png.data.buffer, png.data.byteOffset, png.data.length), png.width, png.height)?.data
    // The seeded demo sets no public address; the suggestion is this machine's first network IPv4 address on the server's port, else the address asked.
    const port = new URL(srv.url).port
    expect(link).toBe(machineIPv4.length ? `https://${machineIPv4[0]}:${port}/job-bags/${id}` : `${srv.url}/job-bags/${id}`)
  })

  it('when an invitation is e-mailed over https with no public address set, then its link is an https address of this server', async () => {
    const { cookie, csrf } = await signIn(DEMO_EMAIL.owner)
    const body = JSON.stringify({ email: 'tablet@lan.test', name: 'Lan Tablet', role: 'bench' })
    const r = await get('/api/invitations', {
      method: 'POST',
      headers: { 'content-type': 'application/json', 'x-csrf-token': csrf, cookie, 'content-length': String(Buffer.byteLength(body)) },
      body,
    })
    expect(r.status, r.body.toString()).toBe(201)
    const m = await mailbox.waitFor((x) => x.to.includes('tablet@lan.test'), 15_000)
    // Listening on loopback, the link names the address asked (server/services/accounts.ts linkBase), now over https.
    expect(m.text).toMatch(new RegExp(`${srv.url.replace(/[.:/]/g, '\\$&')}/welcome/[A-Za-z0-9_-]+`))
  })
})

describe('keeping and renewing the certificate', () => {
  it('when the server starts a second time on the same folder, then it serves the same certificate', async () => {
    const before = readFileSync(join(dir, 'server.crt'), 'utf8')
    const second = await startTestServer({ HOST: '127.0.0.1', TLS: '1', TLS_DIR: dir })
    try {
      expect(second.tls?.made).toBe('none')
      expect(readFileSync(join(dir, 'server.crt'), 'utf8')).toBe(before)
      const peer = await new Promise<X509Certificate>((resolve, reject) => {
        httpsRequest(new URL('/api/session', second.url), { ca, agent: false }, (res) => {
          resolve(new X509Certificate((res.socket as TLSSocket).getPeerCertificate().raw))
          res.resume()
        })
          .on('error', reject)
          .end()
      })
      expect(peer.fingerprint256).toBe(new X509Certificate(before).fingerprint256)
    } finally {
      await second.stop()
    }
  }, 60_000)

  it('when an address is missing or the certificate is about to run out, then a new one is made under the same CA', async () => {
    const own = mkdtempSync(join(tmpdir(), 'mg-tls-renew-'))
    try {
      const names = ['localhost', '127.0.0.1', '::1']
      const first = await ensureCertificate({ dir: own, names })
      expect(first.made).toBe('ca+server')
      expect((await ensureCertificate({ dir: own, names })).made).toBe('none')
      // A new address (documentation range, RFC 5737; only written into the certificate).
      const moved = await ensureCertificate({ dir: own, names: [...names, '192.0.2.10'] })
      expect(moved.made).toBe('server')
      expect(new X509Certificate(moved.cert).subjectAltName).toContain('IP Address:192.0.2.10')
      expect(new X509Certificate(moved.ca).fingerprint256).toBe(new X509Certificate(first.ca).fingerprint256)
      expect(new X509Certificate(moved.cert).checkIssued(new X509Certificate(first.ca))).toBe(true)
      // Ten days before it runs out (inside the 30-day renewal window): made anew, still under the same CA.
      const late = new Date(new Date(moved.validTo).getTime() - 10 * 86_400_000)
      const renewed = await ensureCertificate({ dir: own, names: [...names, '192.0.2.10'], now: late })
      expect(renewed.made).toBe('server')
      expect(new Date(renewed.validTo).getTime()).toBeGreaterThan(new Date(moved.validTo).getTime())
      expect(new X509Certificate(renewed.ca).fingerprint256).toBe(new X509Certificate(first.ca).fingerprint256)
    } finally {
      rmSync(own, { recursive: true, force: true })
    }
  })
})

describe('several processes on one folder', () => {
  it('when two starts make the certificate at the same moment, then one makes it and the other uses the same CA and certificate', async () => {
    const own = mkdtempSync(join(tmpdir(), 'mg-tls-race-'))
    try {
      const names = ['localhost', '127.0.0.1', '::1']
      const [a, b] = await Promise.all([ensureCertificate({ dir: own, names }), ensureCertificate({ dir: own, names })])
      expect([a.made, b.made].sort()).toEqual(['ca+server', 'none'])
      expect(new X509Certificate(a.cert).fingerprint256).toBe(new X509Certificate(b.cert).fingerprint256)
      expect(new X509Certificate(b.cert).checkIssued(new X509Certificate(readFileSync(join(own, 'millgrain-ca.crt'))))).toBe(true)
    } finally {
      rmSync(own, { recursive: true, force: true })
    }
  })
})

describe('what npm start -- --lan prints', () => {
  it('when the machine has a network address, then it prints the https address, a terminal QR code of it that a reader decodes, and how to trust the certificate', async () => {
    const interfaces = { eth0: [{ address: '192.0.2.7', family: 'IPv4', internal: false }] } as unknown as ReturnType<typeof networkInterfaces>
    const text = await lanBanner({ host: '0.0.0.0', port: 8443, interfaces })
    expect(text).toContain('  https://192.0.2.7:8443')
    expect(text).toContain('https://192.0.2.7:8443/tls/millgrain-ca.crt')
    expect(text).toMatch(/trusted CA certificate/)
    expect(decodeTerminalQr(text)).toBe('https://192.0.2.7:8443')
  })
})

/**
 * Reads a QR code drawn with half blocks (qrcode's small terminal output: dark ink on a light background, two module rows
 * per text row: █ both dark, ▀ top dark, ▄ bottom dark, space both light) back into pixels and decodes it with jsqr.
 */
function decodeTerminalQr(text: string): string | null {
  // The final row draws the light quiet zone in the foreground colour (escape 37): it is all light.
  const rows = text
    .split('\n')
    .filter((l) => l.startsWith('\u001b[47m\u001b[30m ') && !l.includes('\u001b[37m'))
    // eslint-disable-next-line no-control-regex -- the terminal's colour escapes are what this strips
    .map((l) => l.replace(/\u001b\[\d+m/g, ''))
  const modules: boolean[][] = []
  for (const r of rows) {
    modules.push([...r].map((ch) => ch === '█' || ch === '▀'))
    modules.push([...r].map((ch) => ch === '█' || ch === '▄'))
  }
  const scale = 6
  const margin = 4
  const w = (modules[0]!.length + 2 * margin) * scale
  const h = (modules.length + 2 * margin) * scale
  const px = new Uint8ClampedArray(w * h * 4).fill(255)
  modules.forEach((row, y) =>
    row.forEach((dark, x) => {
      if (!dark) return
      for (let dy = 0; dy < scale; dy++)
        for (let dx = 0; dx < scale; dx++) {
          const i = (((y + margin) * scale + dy) * w + (x + margin) * scale + dx) * 4
          px[i] = px[i + 1] = px[i + 2] = 0
        }
    }),
  )
  return jsQR(px, w, h)?.data ?? null
}
