// HTTPS for the workshop network: a small local CA and a server certificate (kept in TLS_DIR), and the HTTP or HTTPS server for the app.
import { X509Certificate } from 'node:crypto'
import { chmodSync, closeSync, existsSync, mkdirSync, openSync, readFileSync, renameSync, rmSync, statSync, writeFileSync } from 'node:fs'
import { createServer as createPlainServer, type RequestListener, type Server } from 'node:http'
import { createServer as createTlsServer } from 'node:https'
import { hostname, networkInterfaces, type NetworkInterfaceInfo } from 'node:os'
import { join, resolve } from 'node:path'
import type { RequestHandler } from 'express'
import QRCode from 'qrcode'
import { generate } from 'selfsigned'
import type { Config } from '../config'

type Interfaces = NodeJS.Dict<NetworkInterfaceInfo[]>

const DAY = 24 * 60 * 60_000
/** The CA a tablet trusts once: ten years. */
const CA_DAYS = 3650
/** The server certificate: 397 days, under the 398-day ceiling browsers hold publicly trusted certificates to (CA/Browser Forum, ballot SC31). */
const LEAF_DAYS = 397
/** Made anew when less than this is left, so a certificate never runs out during a working week. */
const RENEW_DAYS = 30

/** The file names in TLS_DIR; the CA's certificate is the one tablets download (CA_PATH). */
export const TLS_FILES = { caKey: 'ca.key', caCert: 'millgrain-ca.crt', key: 'server.key', cert: 'server.crt' } as const
/** Where the app serves the CA's certificate for tablets to download and trust. */
export const CA_PATH = '/tls/millgrain-ca.crt'

const isIPv4 = (s: string) => /^\d{1,3}(\.\d{1,3}){3}$/.test(s)
const isIP = (s: string) => isIPv4(s) || s.includes(':')
const isWildcard = (host: string) => host === '' || host === '0.0.0.0' || host === '::'

/** One spelling per address: IPv6 shortened as URLs write it (0:0:0:0:0:0:0:1 → ::1), names in lower case. */
export function canonicalName(name: string): string {
  const n = name.trim().toLowerCase()
  if (!n.includes(':')) return n
  try {
    return new URL(`http://[${n.replace(/^\[|\]$/g, '')}]`).hostname.replace(/^\[|\]$/g, '')
  } catch {
    return n
  }
}

/** This machine's IPv4 addresses on its networks (not loopback), as the system lists them. Read only: nothing is sent to them. */
export function lanIPv4Addresses(interfaces: Interfaces = networkInterfaces()): string[] {
  const out: string[] = []
  for (const list of Object.values(interfaces)) {
    for (const a of list ?? []) {
      if ((a.family === 'IPv4' || (a.family as unknown) === 4) && !a.internal && !out.includes(a.address)) out.push(a.address)
    }
  }
  return out
}

/** The names the server certificate must cover: loopback, the host name, the LAN IPv4 addresses and a specific listening address. */
export function certificateNames(o: { host?: string; interfaces?: Interfaces; machineName?: string } = {}): string[] {
  const names = ['localhost', '127.0.0.1', '::1', o.machineName ?? hostname(), ...lanIPv4Addresses(o.interfaces ?? networkInterfaces())]
  if (o.host && !isWildcard(o.host)) names.push(o.host)
  return [...new Set(names.filter(Boolean).map(canonicalName))]
}

/** The names a certificate covers (its subject alternative names), read with node:crypto. */
export function namesIn(cert: X509Certificate): string[] {
  return (cert.subjectAltName ?? '')
    .split(', ')
    .map((e) => /^(?:DNS|IP Address):(.+)$/.exec(e)?.[1])
    .filter((x): x is string => !!x)
    .map(canonicalName)
}

const writeKey = (path: string, pem: string) => {
  writeFileSync(`${path}.tmp`, pem, { mode: 0o600 })
  chmodSync(`${path}.tmp`, 0o600)
  renameSync(`${path}.tmp`, path)
}
const writeCert = (path: string, pem: string) => {
  writeFileSync(`${path}.tmp`, pem, { mode: 0o644 })
  renameSync(`${path}.tmp`, path)
}
const readCert = (path: string) => {
  try {
    return existsSync(path) ? new X509Certificate(readFileSync(path)) : null
  } catch {
    return null
  }
}
const lastsUntil = (cert: X509Certificate, at: Date) => new Date(cert.validTo).getTime() > at.getTime()

export interface TlsMaterial {
  key: string
  cert: string
  /** The local CA's certificate (PEM), the one tablets trust. */
  ca: string
  dir: string
  /** What this start did: nothing (reused), a new server certificate, or a new CA and server certificate. */
  made: 'none' | 'server' | 'ca+server'
  names: string[]
  validTo: string
}

/**
 * The local CA and the server certificate in `dir`, made on first use and kept. The server certificate is made anew when
 * a name is missing from it, it runs out within RENEW_DAYS, or the CA changed; the CA only when it runs out within RENEW_DAYS,
 * so a tablet that trusted it keeps trusting the new server certificate. Private keys are written 0600.
 */
export async function ensureCertificate(o: { dir: string; names: string[]; now?: Date }): Promise<TlsMaterial> {
  const dir = resolve(o.dir)
  mkdirSync(dir, { recursive: true, mode: 0o700 })
  // Several app processes starting at once on one folder: one at a time, so a CA and its key are never from two makers.
  const lock = join(dir, 'making.lock')
  for (const until = Date.now() + 30_000; ;) {
    try {
      closeSync(openSync(lock, 'wx'))
      break
    } catch {
      // A lock left by a process that died while making (older than a minute) is taken over.
      try {
        if (Date.now() - statSync(lock).mtimeMs > 60_000) rmSync(lock, { force: true })
      } catch {
        /* gone meanwhile */
      }
      if (Date.now() > until) throw new Error(`Another process is still making the certificate in ${dir} (remove ${lock} if none is running)`)
      await new Promise((r) => setTimeout(r, 100))
    }
  }
  try {
    return await ensureLocked(dir, o.names, o.now ?? new Date())
  } finally {
    rmSync(lock, { force: true })
  }
}

async function ensureLocked(dir: string, wanted: string[], now: Date): Promise<TlsMaterial> {
  const renewBy = new Date(now.getTime() + RENEW_DAYS * DAY)
  const path = (f: keyof typeof TLS_FILES) => join(dir, TLS_FILES[f])
  const names = [...new Set(wanted.map(canonicalName))]
  let made: TlsMaterial['made'] = 'none'

  let caCert = readCert(path('caCert'))
  if (!caCert || !existsSync(path('caKey')) || !caCert.ca || !lastsUntil(caCert, renewBy)) {
    const ca = await generate(
      [
        { name: 'commonName', value: `Millgrain workshop CA (${hostname()})` },
        { name: 'organizationName', value: 'Millgrain' },
      ],
      {
        keyType: 'ec',
        curve: 'P-256',
        algorithm: 'sha256',
        notBeforeDate: new Date(now.getTime() - DAY),
        notAfterDate: new Date(now.getTime() + CA_DAYS * DAY),
        extensions: [
          { name: 'basicConstraints', cA: true, pathLenConstraint: 0, critical: true },
          { name: 'keyUsage', keyCertSign: true, cRLSign: true, critical: true },
        ],
      },
    )
    writeKey(path('caKey'), ca.private)
    writeCert(path('caCert'), ca.cert)
    caCert = new X509Certificate(ca.cert)
    made = 'ca+server'
  }
  const caPem = readFileSync(path('caCert'), 'utf8')

  let leaf = readCert(path('cert'))
  const covers = leaf ? new Set(namesIn(leaf)) : new Set<string>()
  const fresh =
    leaf &&
    existsSync(path('key')) &&
    made === 'none' &&
    leaf.checkIssued(caCert) &&
    leaf.verify(caCert.publicKey) &&
    lastsUntil(leaf, renewBy) &&
    names.every((n) => covers.has(n))
  if (!fresh) {
    const issued = await generate(
      [
        { name: 'commonName', value: names.find((n) => !isIP(n) && n !== 'localhost') ?? 'localhost' },
        { name: 'organizationName', value: 'Millgrain' },
      ],
      {
        keyType: 'ec',
        curve: 'P-256',
        algorithm: 'sha256',
        notBeforeDate: new Date(now.getTime() - DAY),
        notAfterDate: new Date(now.getTime() + LEAF_DAYS * DAY),
        ca: { key: readFileSync(path('caKey'), 'utf8'), cert: caPem },
        extensions: [
          { name: 'basicConstraints', cA: false },
          // An EC key signs the handshake; key encipherment belongs to RSA keys (RFC 5480 §3).
          { name: 'keyUsage', digitalSignature: true, critical: true },
          { name: 'extKeyUsage', serverAuth: true },
          { name: 'subjectAltName', altNames: names.map((n) => (isIP(n) ? { type: 7 as const, ip: n } : { type: 2 as const, value: n })) },
        ],
      },
    )
    writeKey(path('key'), issued.private)
    writeCert(path('cert'), issued.cert)
    leaf = new X509Certificate(issued.cert)
    if (made === 'none') made = 'server'
  }
  return {
    key: readFileSync(path('key'), 'utf8'),
    cert: readFileSync(path('cert'), 'utf8'),
    ca: caPem,
    dir,
    made,
    names: namesIn(leaf!),
    validTo: leaf!.validTo,
  }
}

/** Serves the local CA's certificate for tablets to download and install (a public certificate: no sign-in). */
export function caCertificateHandler(dir: string): RequestHandler {
  return (_req, res, next) => {
    const file = join(resolve(dir), TLS_FILES.caCert)
    if (!existsSync(file)) return next()
    res.setHeader('Content-Type', 'application/x-x509-ca-cert')
    res.setHeader('Content-Disposition', 'attachment; filename="millgrain-ca.crt"')
    res.setHeader('Cache-Control', 'no-cache')
    res.send(readFileSync(file))
  }
}

export interface AppServer {
  server: Server
  scheme: 'http' | 'https'
  /** The certificate in use (HTTPS only). */
  tls: TlsMaterial | null
}

/** Plain HTTP, or HTTPS with the workshop certificate when TLS is on (LAN, or TLS set). Socket.IO attaches to either. */
export async function createHttpServer(config: Pick<Config, 'TLS' | 'TLS_DIR' | 'HOST'>, app: RequestListener): Promise<AppServer> {
  if (!config.TLS) return { server: createPlainServer(app), scheme: 'http', tls: null }
  const tls = await ensureCertificate({ dir: config.TLS_DIR, names: certificateNames({ host: config.HOST }) })
  return { server: createTlsServer({ key: tls.key, cert: tls.cert }, app), scheme: 'https', tls }
}

/**
 * What `npm start -- --lan` prints: the https address(es) tablets open, a QR code of the first (the one job tickets use
 * when the workshop has set no public address), and how to trust the workshop's certificate on a tablet.
 */
export async function lanBanner(o: { host: string; port: number; interfaces?: Interfaces }): Promise<string> {
  const host = o.host.trim()
  if (host === 'localhost' || host === '::1' || /^127\./.test(host))
    return `HTTPS on this computer only (HOST=${host}): tablets cannot reach it; start without HOST to listen on the workshop network.`
  const ips = isWildcard(host) ? lanIPv4Addresses(o.interfaces ?? networkInterfaces()) : [host]
  const urls = ips.map((ip) => `https://${ip.includes(':') ? `[${ip}]` : ip}:${o.port}`)
  if (!urls.length)
    return `No network address found: only this computer can open https://localhost:${o.port} (connect it to the workshop network and start again).`
  const lines = ['Tablets on the workshop network open:', ...urls.map((u) => `  ${u}`)]
  lines.push('', await QRCode.toString(urls[0]!, { type: 'terminal', small: true, errorCorrectionLevel: 'M' }))
  lines.push(
    `Trust this computer once per tablet: open ${urls[0]}${CA_PATH} (accept the browser's warning this one time) to download its certificate,`,
    'then install it as a trusted CA certificate (Android: Settings › Security › Install a certificate › CA certificate; iPad: install the profile, then turn it on in General › About › Certificate Trust Settings).',
  )
  return lines.join('\n')
}
