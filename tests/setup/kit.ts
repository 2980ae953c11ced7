// The benchmark kit for the tests (MILLGRAIN_BENCH_DIR, default ../shared/bench, and its ../tools): where it lives, and what a missing file means.
import { existsSync } from 'node:fs'
import { dirname, join, resolve } from 'node:path'
import { fileURLToPath } from 'node:url'

const root = resolve(dirname(fileURLToPath(import.meta.url)), '../..')
export const benchDir = resolve(root, process.env.MILLGRAIN_BENCH_DIR ?? '../shared/bench')
export const toolsDir = resolve(benchDir, '../tools')

/**
 * Whether every named kit file (relative to the bench folder; `../tools/…` for the checkers) is there.
 * - all there: true;
 * - in CI (CI set), or the bench folder exists but a file is missing: throws, so the test file fails instead of skipping;
 * - no kit folder on a developer's machine: prints why and returns false, for `describe.skipIf(!…)`.
 */
export function requireKit(what: string, files: string[]): boolean {
  const missing = files.map((f) => resolve(benchDir, f)).filter((f) => !existsSync(f))
  if (missing.length === 0) return true
  const list = missing.join(', ')
  if (process.env.CI) throw new Error(`${what}: benchmark kit file(s) missing in CI: ${list} (set MILLGRAIN_BENCH_DIR)`)
  if (existsSync(benchDir)) throw new Error(`${what}: the benchmark kit is at ${benchDir} but lacks ${list}`)
  console.warn(`SKIPPED ${what}: no benchmark kit at ${benchDir} (set MILLGRAIN_BENCH_DIR)`)
  return false
}

/** A kit file's absolute path (relative to the bench folder). */
export const kitPath = (file: string) => join(benchDir, file)
