// `npm start -- --lan` end to end, kept on loopback (HOST=127.0.0.1): the start script turns HTTPS on, makes the workshop
// certificate in its data folder, says where it runs, answers over https trusting that CA, and stops cleanly on Ctrl-C.
import { spawn, type ChildProcess } from 'node:child_process'
import { randomBytes, X509Certificate } from 'node:crypto'
import { existsSync, readFileSync, rmSync } from 'node:fs'
import { request as httpsRequest } from 'node:https'
import { join, resolve } from 'node:path'
import { afterAll, describe, expect, it } from 'vitest'

const root = resolve(import.meta.dirname, '../..')
const dataDir = join(root, '.data', `lan-start-${randomBytes(4).toString('hex')}`)
// Below the kernel's ephemeral range (32768–60999 here), where an outgoing connection's own port could already hold it.
const pgPort = 29700 + Math.floor(Math.random() * 90)
const appPort = 30700 + Math.floor(Math.random() * 90)
const env = {
  ...process.env,
  MILLGRAIN_DATA_DIR: dataDir,
  PG_PORT: String(pgPort),
  PORT: String(appPort),
  HOST: '127.0.0.1',
  MAIL_PORT: String(appPort + 100),
  PAY_FAKE_PORT: String(appPort + 200),
  SKIP_BUILD: '1',
  NODE_ENV: 'production',
}
let child: ChildProcess | null = null
let out = ''

afterAll(async () => {
  if (child && child.exitCode === null) {
    try {
      process.kill(-child.pid!, 'SIGINT')
    } catch {
      /* gone */
    }
    await new Promise((r) => {
      child!.once('exit', r)
      setTimeout(r, 20_000)
    })
  }
  rmSync(dataDir, { recursive: true, force: true })
}, 40_000)

describe('npm start -- --lan', () => {
  it('when started with --lan on loopback, then it serves https with the certificate it made, says so, and stops cleanly on Ctrl-C', async () => {
    child = spawn(join(root, 'node_modules/.bin/tsx'), ['scripts/start.ts', '--lan'], { cwd: root, env, detached: true, stdio: ['ignore', 'pipe', 'pipe'] })
    await new Promise<void>((res, rej) => {
      const t = setTimeout(() => rej(new Error(`app did not start:\n${out}`)), 90_000)
      const onData = (d: Buffer) => {
        out += d.toString()
        if (out.includes('Press Ctrl-C')) {
          clearTimeout(t)
          res()
        }
      }
      child!.stdout!.on('data', onData)
      child!.stderr!.on('data', onData)
      child!.on('exit', (code) => {
        clearTimeout(t)
        rej(new Error(`app exited (${code}):\n${out}`))
      })
    })
    expect(out).toContain(`Millgrain is running at https://127.0.0.1:${appPort}`)
    expect(out).toContain('HTTPS on this computer only (HOST=127.0.0.1)')

    const tls = join(dataDir, 'tls')
    const ca = readFileSync(join(tls, 'millgrain-ca.crt'), 'utf8')
    const answer = await new Promise<{ status: number; cookie: string; fingerprint: string }>((res, rej) => {
      httpsRequest(`https://127.0.0.1:${appPort}/api/session`, { ca, agent: false }, (r) => {
        const fingerprint = new X509Certificate((r.socket as import('node:tls').TLSSocket).getPeerCertificate().raw).fingerprint256
        r.resume()
        r.on('end', () => res({ status: r.statusCode ?? 0, cookie: String(r.headers['set-cookie']?.[0] ?? ''), fingerprint }))
      })
        .on('error', rej)
        .end()
    })
    expect(answer.status).toBe(200)
    expect(answer.cookie).toMatch(/;\s*Secure/i)
    expect(answer.fingerprint).toBe(new X509Certificate(readFileSync(join(tls, 'server.crt'))).fingerprint256)

    // Ctrl-C reaches the whole process group, as in a terminal (tsx itself then exits with 130, the shell's code for it).
    await new Promise((r) => {
      child!.once('exit', r)
      process.kill(-child!.pid!, 'SIGINT')
    })
    expect(out).toContain('[stop] stopping PostgreSQL')
    // PostgreSQL removes its pid file when it has stopped (the script's own process may still be finishing after tsx exits).
    await expect.poll(() => existsSync(join(dataDir, 'pg', 'postmaster.pid')), { timeout: 30_000, interval: 250 }).toBe(false)
  }, 150_000)
})
