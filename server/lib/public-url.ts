// The address tablets on the workshop network open the app at (a ticket's QR code): the owner's setting, else one this machine offers.
import { networkInterfaces, type NetworkInterfaceInfo } from 'node:os'

type Interfaces = NodeJS.Dict<NetworkInterfaceInfo[]>

export interface PublicUrlSuggestion {
  /** http(s)://<first non-internal IPv4 address>:<port>, or null when the machine has no network address but loopback. */
  url: string | null
  /** False when the server listens on this machine only (HOST is a loopback address), so a tablet cannot open the suggestion. */
  reachable: boolean
}

const isLoopback = (host: string) => host === 'localhost' || host === '::1' || /^127\./.test(host)
const isWildcard = (host: string) => host === '' || host === '0.0.0.0' || host === '::'

/** The first IPv4 address of this machine that is not loopback (in the order the system lists them), or null. */
export function firstNetworkIPv4(interfaces: Interfaces = networkInterfaces()): string | null {
  for (const list of Object.values(interfaces)) {
    for (const a of list ?? []) {
      // Node 18.0–18.3 gave the family as a number.
      if ((a.family === 'IPv4' || (a.family as unknown) === 4) && !a.internal) return a.address
    }
  }
  return null
}

/**
 * The address to suggest when the owner has set none: the server's own listening host when that is a real address,
 * else the machine's first network IPv4 address, with the port the server answers on. Nothing is sent to it.
 */
export function suggestPublicUrl(
  port: number,
  listenHost: string,
  interfaces: Interfaces = networkInterfaces(),
  scheme: 'http' | 'https' = 'http',
): PublicUrlSuggestion {
  const host = listenHost.trim()
  if (host && !isWildcard(host) && !isLoopback(host)) return { url: `${scheme}://${host.includes(':') ? `[${host}]` : host}:${port}`, reachable: true }
  const ip = firstNetworkIPv4(interfaces)
  return { url: ip ? `${scheme}://${ip}:${port}` : null, reachable: !isLoopback(host) }
}

/**
 * The suggestion for a request: the port it came in on (the server's own, before any proxy), the configured listening host,
 * and https when the server itself speaks TLS (`npm start -- --lan`), so tickets point at the address the tablets use.
 */
export function suggestionForRequest(req: { socket: { localPort?: number; encrypted?: boolean } }, listenHost = '127.0.0.1'): PublicUrlSuggestion {
  return suggestPublicUrl(req.socket.localPort ?? 8080, listenHost, networkInterfaces(), req.socket.encrypted ? 'https' : 'http')
}

/**
 * This server's own address for links it hands out (e.g. the payment provider's return page) when the workshop has set no
 * public address. Plain HTTP: http://HOST:PORT as always. HTTPS (LAN): the network address the tablets use when listening on
 * all addresses, else the listening host.
 */
export function ownAppUrl(config: { HOST: string; PORT: number; TLS?: boolean }, interfaces: Interfaces = networkInterfaces()): string {
  if (!config.TLS) return `http://${config.HOST}:${config.PORT}`
  if (isWildcard(config.HOST.trim())) return suggestPublicUrl(config.PORT, config.HOST, interfaces, 'https').url ?? `https://127.0.0.1:${config.PORT}`
  return `https://${config.HOST.includes(':') ? `[${config.HOST}]` : config.HOST}:${config.PORT}`
}
