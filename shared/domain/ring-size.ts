// Ring sizes: ISO 8653 (inner circumference in mm), US/Canada numbers and UK/Australia letters, each to and from the others.
// ISO 8653: size = inner circumference in mm, inner diameter = size / π. US/Canada: inner diameter = 0.458 in + 0.032 in × size.

export const RING_SCALES = ['iso', 'us', 'uk'] as const
export type RingScale = (typeof RING_SCALES)[number]
export const RING_SCALE_LABELS: Record<RingScale, string> = { iso: 'ISO 8653 (mm round the inside)', us: 'US / Canada', uk: 'UK / Australia letter' }

const MM_PER_INCH = 25.4

export const isoToDiameterMm = (iso: number) => iso / Math.PI
export const diameterMmToIso = (d: number) => d * Math.PI

/** US/Canada size → inner diameter in mm: (0.458 + 0.032 × size) inches. */
export const usToDiameterMm = (us: number) => (0.458 + 0.032 * us) * MM_PER_INCH
export const diameterMmToUs = (d: number) => (d / MM_PER_INCH - 0.458) / 0.032
export const usToIso = (us: number) => diameterMmToIso(usToDiameterMm(us))
export const isoToUs = (iso: number) => diameterMmToUs(isoToDiameterMm(iso))

/**
 * The pinned UK/Australia letter chart: letter (with halves) → inner circumference in mm.
 * Chart: "Ring Size Chart", just-color.com (2021), UK & Aus. column against its inside circumference column — the same rows
 * as the older Wikipedia "Ring size" conversion chart, one half letter per quarter US size, with no I½ (I is followed by J).
 * A to P are that chart's values; P½ to Z½ are from memory, continuing the chart's step of one half letter per quarter US size.
 */
export const UK_LETTER_CHART: readonly (readonly [string, number])[] = [
  ['A', 37.8],
  ['A½', 38.5],
  ['B', 39.1],
  ['B½', 39.7],
  ['C', 40.4],
  ['C½', 41.0],
  ['D', 41.7],
  ['D½', 42.3],
  ['E', 42.9],
  ['E½', 43.6],
  ['F', 44.2],
  ['F½', 44.8],
  ['G', 45.5],
  ['G½', 46.1],
  ['H', 46.8],
  ['H½', 47.4],
  ['I', 48.0],
  ['J', 48.7],
  ['J½', 49.3],
  ['K', 50.0],
  ['K½', 50.6],
  ['L', 51.2],
  ['L½', 51.9],
  ['M', 52.5],
  ['M½', 53.1],
  ['N', 53.8],
  ['N½', 54.4],
  ['O', 55.1],
  ['O½', 55.7],
  ['P', 56.3],
  // from memory, continuing the chart's step
  ['P½', 57.0],
  ['Q', 57.6],
  ['Q½', 58.3],
  ['R', 58.9],
  ['R½', 59.5],
  ['S', 60.2],
  ['S½', 60.8],
  ['T', 61.4],
  ['T½', 62.1],
  ['U', 62.7],
  ['U½', 63.4],
  ['V', 64.0],
  ['V½', 64.6],
  ['W', 65.3],
  ['W½', 65.9],
  ['X', 66.6],
  ['X½', 67.2],
  ['Y', 67.8],
  ['Y½', 68.5],
  ['Z', 69.1],
  ['Z½', 69.7],
]
export const UK_CHART_NAME = 'just-color.com “Ring Size Chart” (UK & Aus. column)'

/** "n 1/2", "N.5", "n½", " N " → "N½" / "N"; null when it is not a letter size of the chart. */
export function normaliseUkLetter(text: string): string | null {
  const m = /^\s*([A-Za-z])\s*(½|1\/2|\.5|-?half)?\s*$/.exec(text)
  if (!m) return null
  const label = m[1]!.toUpperCase() + (m[2] ? '½' : '')
  return UK_LETTER_CHART.some(([l]) => l === label) ? label : null
}

export const ukToIso = (letter: string): number | null => {
  const l = normaliseUkLetter(letter)
  return l ? UK_LETTER_CHART.find(([x]) => x === l)![1] : null
}

/** The chart's letter nearest to a circumference; null outside the chart (more than a half step beyond A or Z½). */
export function isoToUk(iso: number): string | null {
  const first = UK_LETTER_CHART[0]![1],
    last = UK_LETTER_CHART.at(-1)![1]
  if (!(iso >= first - 0.35 && iso <= last + 0.35)) return null
  let best = UK_LETTER_CHART[0]!
  for (const e of UK_LETTER_CHART) if (Math.abs(e[1] - iso) < Math.abs(best[1] - iso)) best = e
  return best[0]
}

/** Position of a letter on the chart in half letters (A = 0, A½ = 1, …): how far apart two letters are. */
export const ukIndex = (letter: string): number => UK_LETTER_CHART.findIndex(([l]) => l === normaliseUkLetter(letter))

export interface RingSizeInput {
  scale: RingScale
  value: string
}
export interface RingSizeAll {
  iso: number
  diameterMm: number
  us: number
  uk: string | null
}

/** The circumference a size stands for, or null when the value is not a size in its scale (US 0–16, ISO 36–80 mm, a chart letter). */
export function ringSizeToIso(r: RingSizeInput): number | null {
  const v = r.value.trim().replace(',', '.')
  if (r.scale === 'uk') return ukToIso(v)
  const n = Number(
    r.scale === 'us'
      ? v
          .replace(/½$/, '.5')
          .replace(/\s*1\/2$/, '.5')
          .replace(/\s*1\/4$/, '.25')
          .replace(/\s*3\/4$/, '.75')
      : v,
  )
  if (!Number.isFinite(n) || v === '') return null
  if (r.scale === 'us') return n >= 0 && n <= 16 ? usToIso(n) : null
  return n >= 36 && n <= 80 ? n : null
}

/** Every scale for one size: ISO circumference and diameter to 0.1 mm, US to the quarter, the chart's nearest letter. */
export function ringSizeAll(r: RingSizeInput): RingSizeAll | null {
  const iso = ringSizeToIso(r)
  if (iso === null) return null
  return { iso: Math.round(iso * 10) / 10, diameterMm: Math.round(isoToDiameterMm(iso) * 10) / 10, us: Math.round(isoToUs(iso) * 4) / 4, uk: isoToUk(iso) }
}

/** "ISO 54.4 (17.3 mm) · US 7 · UK N½", the given scale first. */
export function ringSizeWords(r: RingSizeInput): string {
  const a = ringSizeAll(r)
  if (!a) return r.value
  const parts: Record<RingScale, string> = { iso: `ISO ${a.iso} (Ø ${a.diameterMm} mm)`, us: `US ${usWords(a.us)}`, uk: a.uk ? `UK ${a.uk}` : 'UK —' }
  return [r.scale, ...RING_SCALES.filter((s) => s !== r.scale)].map((s) => parts[s]).join(' · ')
}

const usWords = (us: number) => {
  const w = Math.floor(us),
    f = us - w
  return f === 0 ? `${w}` : `${w}${f === 0.25 ? '¼' : f === 0.5 ? '½' : '¾'}`
}
