// The API client: error bodies become one ApiError, the CSRF token rides on writes and is refreshed once when stale.
import { afterEach, describe, expect, it, vi } from 'vitest'
import { z } from 'zod'
import { ApiError, api, setCsrfToken } from '@/api/client'

const json = (status: number, body: unknown) => new Response(JSON.stringify(body), { status, headers: { 'content-type': 'application/json' } })

afterEach(() => {
  vi.unstubAllGlobals()
  setCsrfToken(null)
})

describe('api client', () => {
  it('when the server answers 400 with field reasons, then the call rejects with an ApiError carrying status, code, message and fields', async () => {
    setCsrfToken('t1')
    vi.stubGlobal(
      'fetch',
      vi.fn(async () =>
        json(400, {
          error: 'Please correct: name is required',
          code: 'validation',
          fields: { name: 'is required', 'steps.0.key': 'use lower-case letters' },
          requestId: 'r-1',
        }),
      ),
    )
    const err = await api.post('/benches', { name: '' }).catch((e: unknown) => e)
    expect(err).toBeInstanceOf(ApiError)
    expect(err).toMatchObject({
      status: 400,
      code: 'validation',
      message: 'Please correct: name is required',
      fields: { name: 'is required', 'steps.0.key': 'use lower-case letters' },
      requestId: 'r-1',
    })
  })

  it('when the error body is not JSON, then the ApiError still has the status and a readable message', async () => {
    vi.stubGlobal(
      'fetch',
      vi.fn(async () => new Response('<html>bad gateway</html>', { status: 502, statusText: 'Bad Gateway' })),
    )
    const err = (await api.get('/benches').catch((e: unknown) => e)) as ApiError
    expect(err).toBeInstanceOf(ApiError)
    expect(err.status).toBe(502)
    expect(err.code).toBe('internal')
    expect(err.message).toMatch(/502/)
    expect(err.fields).toEqual({})
  })

  it('when a write is refused for a stale security token, then the client fetches a new token and retries once', async () => {
    setCsrfToken('old')
    const calls: { url: string; token: string | null }[] = []
    vi.stubGlobal(
      'fetch',
      vi.fn(async (url: string, init?: RequestInit) => {
        const token = (init?.headers as Record<string, string> | undefined)?.['x-csrf-token'] ?? null
        calls.push({ url, token })
        if (url === '/api/session') return json(200, { user: null, csrfToken: 'fresh' })
        if (token === 'old') return json(403, { error: 'The page is out of date', code: 'forbidden', details: { reason: 'csrf' } })
        return json(201, { id: 7 })
      }),
    )
    await expect(api.post('/closures', { name: 'x' })).resolves.toEqual({ id: 7 })
    expect(calls.map((c) => [c.url, c.token])).toEqual([
      ['/api/closures', 'old'],
      ['/api/session', null],
      ['/api/closures', 'fresh'],
    ])
  })

  it('when a 403 is about the role, then it is not retried', async () => {
    setCsrfToken('t')
    const fetchMock = vi.fn(async () => json(403, { error: 'The bench role may not do this.', code: 'forbidden' }))
    vi.stubGlobal('fetch', fetchMock)
    const err = (await api.put('/workshop', {}).catch((e: unknown) => e)) as ApiError
    expect(err.status).toBe(403)
    expect(err.isCsrf).toBe(false)
    expect(fetchMock).toHaveBeenCalledTimes(1)
  })

  it('when an answer does not match the schema the call names (development and tests), then the call rejects naming the call and the field', async () => {
    vi.stubGlobal(
      'fetch',
      vi.fn(async () => json(200, { id: 'seven', name: 'Polishing bench' })),
    )
    vi.spyOn(console, 'error').mockImplementation(() => undefined)
    const err = (await api.get('/benches/7', { schema: z.object({ id: z.number().int(), name: z.string() }) }).catch((e: unknown) => e)) as ApiError
    expect(err).toBeInstanceOf(ApiError)
    expect(err.message).toContain('GET /benches/7')
    expect(err.message).toMatch(/\bid: /)
    vi.mocked(console.error).mockRestore()
  })

  it('when an answer matches its schema, then the call gives the answer as the server sent it', async () => {
    vi.stubGlobal(
      'fetch',
      vi.fn(async () => json(200, { id: 7, name: 'Polishing bench', extra: true })),
    )
    await expect(api.get('/benches/7', { query: { full: true }, schema: z.object({ id: z.number().int(), name: z.string() }) })).resolves.toEqual({
      id: 7,
      name: 'Polishing bench',
      extra: true,
    })
    expect(vi.mocked(fetch).mock.calls[0]![0]).toBe('/api/benches/7?full=true')
  })
})
