// Every moment an API answer carries is ISO 8601 with its offset (RFC 3339 profile), whichever route sends it:
// all JSON reads walked with demo data and a planned workshop, plus the writes that answer with times.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { allRoutes } from '../../server/routes/index'
import { waitForRun } from '../../server/planning/runs'
import { dayjs } from '../../server/lib/time'
import { startFakeSmtp, type FakeSmtp } from '../../server/mail/fake-smtp'
import { createTestApp, signedIn, type Agent, type TestApp } from '../setup/app'

// Anything that reads as a date followed by a time of day is a moment and must be written the one way:
// ISO 8601 extended format, "T" between date and time, seconds, optional fraction, and Z or ±hh:mm
// (RFC 3339 section 5.6, "date-time"). PostgreSQL's own text ("2026-12-17 09:39:00+00") fails it.
const LOOKS_LIKE_MOMENT = /\d{4}-\d{2}-\d{2}[ T]\d{2}:\d{2}/
const RFC3339 = /^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}(\.\d{1,6})?(Z|[+-]\d{2}:\d{2})$/

/** Every string in a JSON value that looks like a moment but is not written as RFC 3339, with its path. */
function offenders(value: unknown, path = '$', out: string[] = []): string[] {
  if (typeof value === 'string') {
    if (LOOKS_LIKE_MOMENT.test(value) && !RFC3339.test(value) && value.length < 40) out.push(`${path} = ${JSON.stringify(value)}`)
  } else if (Array.isArray(value)) value.forEach((v, i) => offenders(v, `${path}[${i}]`, out))
  else if (value && typeof value === 'object') for (const [k, v] of Object.entries(value)) offenders(v, `${path}.${k}`, out)
  return out
}

let t: TestApp
let fake: FakeSmtp
let station: Agent
let owner: Agent
let manager: Agent
let bench: Agent
const ids: Record<string, number | string> = {}
const from = dayjs().tz('Europe/London').startOf('isoWeek').format('YYYY-MM-DD')
const to = dayjs(from).add(27, 'day').format('YYYY-MM-DD')

const firstId = (body: any): number => {
  const list = Array.isArray(body) ? body : (body.items ?? body.rows ?? body.orders ?? body.messages ?? [])
  return list[0]?.id
}

beforeAll(async () => {
  // The local mailbox receives the invitation whose one-time link the link page reads.
  fake = await startFakeSmtp()
  t = await createTestApp({ SMTP_URL: fake.url })
  fake.useDb(t.db)
  owner = await signedIn(t.app, 'owner')
  manager = await signedIn(t.app, 'manager')
  bench = await signedIn(t.app, 'bench')
  // A planned and published workshop, so plans, the board and forecasts carry times.
  const run = await manager.post('/api/plans/runs', { timeLimitSeconds: 1 })
  expect(run.status, JSON.stringify(run.body)).toBe(202)
  const done = await waitForRun(t.db, run.body.id)
  expect(done?.status, JSON.stringify(done)).toBe('done')
  ids.runId = run.body.id
  ids.plan = done!.planId!
  expect((await manager.post(`/api/plans/${ids.plan}/publish`)).status).toBe(200)
  ids.settingBench = ((await owner.get('/api/benches')).body as { id: number; name: string }[]).find((b) => b.name === 'Setting bench A')!.id
  ids.kindKey = ((await owner.get('/api/insights/comparison?groupBy=kind')).body.rows ?? [])[0]?.key
  ids.routing = firstId((await owner.get('/api/routings')).body)
  ids.customer = firstId((await owner.get('/api/customers')).body)
  ids.order = firstId((await owner.get('/api/orders')).body)
  ids.jobBag = firstId((await owner.get('/api/job-bags')).body)
  // A message in the outbox: the digest of job bags at risk.
  expect((await manager.post('/api/mail/at-risk-digest')).status).toBeLessThan(300)
  ids.outbox = firstId((await owner.get('/api/outbox')).body)
  // Materials and money: a seeded alloy and refining lot, and a quote drafted here (the demo has none).
  ids.alloy = firstId((await owner.get('/api/alloys')).body)
  ids.refiningLot = firstId((await owner.get('/api/refining-lots')).body)
  const quote = await owner.post('/api/quotes', {
    customerId: ids.customer,
    title: 'Time format check',
    priceMinor: 125_000,
    promisedDate: dayjs(from).add(14, 'day').format('YYYY-MM-DD'),
  })
  expect(quote.status, JSON.stringify(quote.body)).toBe(201)
  ids.quote = quote.body.id
  // A one-time link (an invitation, read from the mailbox as the invited person would) and a tablet made a bench station.
  const invited = await owner.post('/api/invitations', { email: 'time.format@example.test', name: 'Time Format', role: 'bench' })
  expect(invited.status, JSON.stringify(invited.body)).toBe(201)
  const mail = await fake.waitFor((m) => m.to.includes('time.format@example.test'), 15_000)
  ids.token = /\/welcome\/([A-Za-z0-9_-]+)/.exec(mail.text)?.[1] ?? ''
  station = await signedIn(t.app, 'manager')
  const made = await station.post('/api/bench-station', { benchId: ids.settingBench })
  expect(made.status, JSON.stringify(made.body)).toBe(200)
  station.csrf = made.body.csrfToken
  for (const [k, v] of Object.entries(ids)) expect(v, `a demo ${k} to read`).toBeTruthy()
})
afterAll(async () => {
  await t?.close()
  await fake?.close()
})

/** The path with its parameters filled from the demo, and the query each read needs. */
function pathOf(path: string): string {
  const filled = path
    .replace(':runId', String(ids.runId))
    .replace(/^\/account-links\/:token/, `/account-links/${ids.token}`)
    .replace(/^\/routings\/:id/, `/routings/${ids.routing}`)
    .replace(/^\/customers\/:id/, `/customers/${ids.customer}`)
    .replace(/^\/orders\/:id/, `/orders/${ids.order}`)
    .replace(/^\/job-bags\/:id/, `/job-bags/${ids.jobBag}`)
    .replace(/^\/plans\/:id/, `/plans/${ids.plan}`)
    .replace(/^\/outbox\/:id/, `/outbox/${ids.outbox}`)
    .replace(/^\/alloys\/:id/, `/alloys/${ids.alloy}`)
    .replace(/^\/refining-lots\/:id/, `/refining-lots/${ids.refiningLot}`)
    .replace(/^\/quotes\/:id/, `/quotes/${ids.quote}`)
  const query: Record<string, string> = {
    '/board': `from=${from}&to=${to}`,
    '/load': `from=${from}&to=${to}`,
    '/insights/comparison': 'groupBy=kind',
    '/insights/records': `groupBy=kind&key=${ids.kindKey}`,
    '/bench/next': `benchId=${ids.settingBench}`,
  }
  return `/api${filled}${query[path] ? `?${query[path]}` : ''}`
}

// Binary answers (the ticket PDF, uploaded files) carry no JSON times; files need an upload first and are covered by their own tests.
const reads = allRoutes.filter((r) => r.method === 'get' && !r.path.endsWith('.pdf') && !r.path.endsWith('/pdf') && !r.path.startsWith('/files/'))

describe('one time format in every answer', () => {
  it.each(reads.map((r) => [r.path, r] as const))('when GET %s is read, then every moment in the answer is ISO 8601 with an offset', async (_p, r) => {
    const roles = r.roles === 'public' ? ['owner'] : r.roles
    // The bench floor's reads as the setter (linked to a person); the rest as the most senior role allowed.
    // A station's own reads from the tablet made a bench station.
    const agent = r.path.startsWith('/bench-station/')
      ? station
      : r.path.startsWith('/bench/')
        ? bench
        : roles.includes('owner')
          ? owner
          : roles.includes('manager')
            ? manager
            : bench
    const res = await agent.get(pathOf(r.path))
    expect(res.status, `${r.path} → ${res.status} ${JSON.stringify(res.body).slice(0, 300)}`).toBe(200)
    // JSON: every string in it; CSV: every cell (a spreadsheet reads a moment written another way as text or as local time).
    const cells = (text: string) =>
      text
        .split(/\r?\n/)
        .flatMap((line) => line.split(','))
        .map((c) => c.replace(/^"|"$/g, ''))
    expect(res.type).toMatch(/json|csv/)
    expect(offenders(res.type.includes('json') ? res.body : cells(res.text))).toEqual([])
  })

  it('when the records behind a row are downloaded as CSV, then their moments are ISO 8601 with an offset too', async () => {
    const res = await owner.get(`/api/insights/records?groupBy=kind&key=${ids.kindKey}&format=csv`)
    expect(res.status, res.text.slice(0, 300)).toBe(200)
    expect(res.type).toMatch(/csv/)
    const cells = res.text
      .split(/\r?\n/)
      .flatMap((line) => line.split(','))
      .map((c) => c.replace(/^"|"$/g, ''))
    // Not vacuous: the records carry their start and end moments.
    expect(cells.filter((c) => LOOKS_LIKE_MOMENT.test(c)).length).toBeGreaterThan(0)
    expect(offenders(cells)).toEqual([])
  })

  it('when the setter claims a step, then the answer carries ISO 8601 moments', async () => {
    const next = await bench.get(`/api/bench/next?benchId=${ids.settingBench}`)
    expect(next.status).toBe(200)
    const op = next.body.items[0]
    expect(op, 'the setter has a ready step at setting bench A in the planned demo').toBeTruthy()
    const claim = await bench.post(`/api/bench/operations/${op.id}/claim`, { requestId: crypto.randomUUID(), benchId: ids.settingBench })
    expect(claim.status, JSON.stringify(claim.body)).toBe(200)
    expect(offenders(claim.body)).toEqual([])
    const mine = await bench.get('/api/bench/mine')
    expect(mine.status).toBe(200)
    expect(JSON.stringify(mine.body)).toContain(String(op.id))
    expect(offenders(mine.body)).toEqual([])
  })

  it('when the checker itself meets PostgreSQL text or a naive time, then it flags them (the check can fail)', () => {
    // Hand-made answers: two bad moments, two good ones, one plain date.
    expect(
      offenders({
        a: '2026-12-17 09:39:00+00',
        b: [{ c: '2026-12-17T09:39:00' }],
        d: '2026-12-17T09:39:00.000Z',
        e: '2026-12-17T10:39:00+01:00',
        f: '2026-12-17',
      }),
    ).toEqual(['$.a = "2026-12-17 09:39:00+00"', '$.b[0].c = "2026-12-17T09:39:00"'])
  })
})
