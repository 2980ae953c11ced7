// `npm run benchmark:board-render`: the planning board in Chromium with ~1,200 bars in a four-week window — time to first bar,
// to all bars, and to re-render after a zoom change and a row toggle. Prints figures; asserts nothing.
import { join } from 'node:path'
import { spawnSync } from 'node:child_process'
import { dayjs } from '../server/lib/time'
import { launchChromium, signInWith } from '../tests/setup/e2e'
import { DEMO_PASSWORD } from '../server/db/seed'
import { addPlannedLoad, benchServer } from './benchmark-common'
import { root } from './env'

const clientDir = join(root, 'dist')
if (!process.env.SKIP_BUILD) spawnSync(join(root, 'node_modules/.bin/vite'), ['build', '--logLevel', 'warn'], { cwd: root, stdio: 'inherit' })
const bench = await benchServer('millgrain_bench_render', { clientDir })
const from = dayjs().tz('Europe/London').startOf('isoWeek')
await addPlannedLoad(bench.url, Number(process.env.BOARD_OPS ?? 1400), from)

const browser = await launchChromium()
const page = await (await browser.newContext({ viewport: { width: 1600, height: 1000 }, baseURL: bench.server.url })).newPage()
await signInWith(page, 'manager@wrenfield.test', DEMO_PASSWORD)
await page.waitForURL((u) => !u.pathname.startsWith('/sign-in'))
const bars = () => page.locator('.vis-item.vis-range').count()
async function settle(t0: number) {
  let last = -1,
    n = await bars(),
    first = n > 0 ? performance.now() - t0 : NaN
  while (n !== last) {
    await page.waitForTimeout(300)
    last = n
    n = await bars()
    if (Number.isNaN(first) && n > 0) first = performance.now() - t0
  }
  return { first, all: performance.now() - t0 - 300, bars: n }
}
// Four weeks: the zoom the load is spread over.
let t0 = performance.now()
await page.goto(`${bench.server.url}/plan`)
await page.locator('.vis-item.vis-range').first().waitFor({ timeout: 60_000 })
const open = await settle(t0)
t0 = performance.now()
await page.locator('[data-test=board-zoom]').getByText('Four weeks').click()
const zoom = await settle(t0)
t0 = performance.now()
await page.locator('[data-test=board-rows]').getByText('People').click()
const rows = await settle(t0)
console.log(`\nPlanning board in Chromium, ${rows.bars} bars drawn in the four-week view (~1,200 operations planned)`)
console.table([
  { step: 'open /plan (week view)', 'first bar ms': Math.round(open.first), 'settled ms': Math.round(open.all), bars: open.bars },
  { step: 'zoom to four weeks', 'first bar ms': Math.round(zoom.first), 'settled ms': Math.round(zoom.all), bars: zoom.bars },
  { step: 'rows by person', 'first bar ms': Math.round(rows.first), 'settled ms': Math.round(rows.all), bars: rows.bars },
])
await browser.close()
await bench.stop()
