// A short solve of a small generated workshop that only warms the engine up: every stage of the search runs at least once, so
// V8 has compiled what a real run needs before it starts (the planning worker does this when the server starts).
import { solve } from './solve.ts'
import { generateWorkshop } from './generate.ts'

/** The warm-up's budget: enough for every stage of the search to run. */
export const WARM_UP_MS = 400

export function warmUpEngine(ms = WARM_UP_MS): void {
  solve(generateWorkshop({ seed: 1, jobs: 40 }), { seed: 1, timeLimitMs: ms }, { clock: () => performance.now() })
}
