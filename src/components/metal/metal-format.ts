// Metal on screen: grams to 0.01 (to 0.001 in loss tables), percentages, money from integer minor units in the workshop's currency, the alloy a piece's metal
// code means, the tablet's remembered container weight, and CSV made in the browser.
import type { Alloy, LossRow, MetalMovement } from '@shared/schemas/metal'
import { PIECE_METAL_ALLOY } from '@shared/domain/metal'
import { currencyExponent } from '@shared/domain/currency'

const locale = () => (typeof navigator !== 'undefined' && navigator.language ? navigator.language : 'en-GB')

/** 12 → "12.00 g" (always two decimals: the bench scale's step). */
export const fmtG = (g: number | null | undefined): string =>
  g === null || g === undefined || !Number.isFinite(g) ? '—' : `${g.toLocaleString('en-GB', { minimumFractionDigits: 2, maximumFractionDigits: 2 })} g`
/** Milligrams as grams to 0.01 g. */
export const fmtMg = (mg: number | null | undefined): string => (mg === null || mg === undefined ? '—' : fmtG(mg / 1000))
/** Milligrams as grams to the milligram (stock and refining reconcile to 1 mg): 214553 → "214.553 g". */
export const fmtMg3 = (mg: number | null | undefined): string =>
  mg === null || mg === undefined ? '—' : `${(mg / 1000).toLocaleString('en-GB', { minimumFractionDigits: 3, maximumFractionDigits: 3 })} g`
/** Grams to the milligram: 125.874 → "125.874 g" (loss tables, so issued − returned = loss as printed). */
export const fmtG3 = (g: number | null | undefined): string =>
  g === null || g === undefined || !Number.isFinite(g) ? '—' : `${g.toLocaleString('en-GB', { minimumFractionDigits: 3, maximumFractionDigits: 3 })} g`
/**
 * What a weighing of a job bag was, in the bench’s words; the piece going to the customer (collected or handed back), and the
 * customer's metal lost or gained when their piece was handed back lighter or heavier than held (by the sign of its weight).
 */
export const movementWords = (m: Pick<MetalMovement, 'kind' | 'source' | 'form'> & { effectiveMg?: number }): string =>
  m.kind === 'issued'
    ? m.source === 'customer'
      ? 'out (customer’s own)'
      : 'out from stock'
    : m.kind === 'returned'
      ? `back as ${m.form}`
      : m.kind === 'delivered'
        ? 'went to the customer'
        : m.kind === 'customer-loss'
          ? (m.effectiveMg ?? 0) < 0
            ? 'gained by the customer’s metal as handed back'
            : 'lost from the customer’s metal as handed back'
          : m.kind
/** 2.08 → "2.1 %". */
export const fmtPct = (p: number | null | undefined): string =>
  p === null || p === undefined || !Number.isFinite(p) ? '—' : `${p.toLocaleString('en-GB', { minimumFractionDigits: 1, maximumFractionDigits: 1 })} %`

/** Decimals of a currency as ISO 4217 has them (GBP 2, JPY 0, BHD 3): the table amounts are stored by (shared/domain/currency.ts). */
export const currencyDigits = (currency: string): number => currencyExponent(currency)
/** An amount held in integer minor units, written by the browser's locale in the workshop's currency. */
export function fmtMoney(minor: number | null | undefined, currency: string): string {
  if (minor === null || minor === undefined || !Number.isFinite(minor)) return '—'
  try {
    return new Intl.NumberFormat(locale(), { style: 'currency', currency }).format(minor / 10 ** currencyDigits(currency))
  } catch {
    return `${minor} (minor units of ${currency})`
  }
}

/**
 * The alloy to preselect for a piece: the one its job bag was last weighed in (the piece's colour is known from then on), else an
 * active alloy of its metal code (e.g. gold-14k → a 585 gold) — for gold, the yellow one where the workshop keeps several colours
 * (the usual colour when none is named: common practice, no source) — or null.
 */
export function alloyForPieceMetal(alloys: readonly Alloy[], pieceMetal: string | null | undefined, lastWeighedAlloyId?: number | null): Alloy | null {
  const last = lastWeighedAlloyId != null ? alloys.find((a) => a.id === lastWeighedAlloyId && a.active) : undefined
  if (last) return last
  const want = pieceMetal ? PIECE_METAL_ALLOY[pieceMetal] : undefined
  if (!want) return null
  const fits = alloys.filter((a) => a.active && a.metal === want.metal && a.fineness === want.fineness)
  return (want.metal === 'gold' ? fits.find((a) => /yellow/i.test(a.name)) : undefined) ?? fits[0] ?? null
}

/**
 * Where a weighing out of a job bag's metal comes from unless the bench says otherwise: what the bag was first weighed out as — the
 * piece weighed out again for a later step is still that metal; a weighing corrected to 0 does not count — else, before any
 * weighing, the customer's own piece for a repair (it comes in from them), else stock.
 */
export function sourceForWeighOut(movements: readonly Pick<MetalMovement, 'kind' | 'source' | 'effectiveMg'>[], customerPiece: boolean): 'stock' | 'customer' {
  const first = movements.find((m) => m.kind === 'issued' && m.effectiveMg > 0 && m.source !== null)
  return first?.source ?? (customerPiece ? 'customer' : 'stock')
}

const TARE_KEY = 'millgrain.metal.containerG'
/** The container weight this tablet remembers (0 when none). */
export function loadTare(): number {
  try {
    const v = Number(globalThis.localStorage?.getItem(TARE_KEY))
    return Number.isFinite(v) && v > 0 ? v : 0
  } catch {
    return 0
  }
}
export function saveTare(g: number) {
  try {
    if (g > 0) globalThis.localStorage?.setItem(TARE_KEY, String(g))
    else globalThis.localStorage?.removeItem(TARE_KEY)
  } catch {
    /* private mode: not remembered */
  }
}

/** Scale reading minus the container, rounded to 0.01 g (floating point never leaves a 0.009999). */
export const netOf = (readingG: number, tareG: number): number => Math.round((readingG - tareG) * 100) / 100

const csvCell = (v: unknown) => {
  const s = v === null || v === undefined ? '' : String(v)
  return /[",\n\r]/.test(s) || /^[=+\-@]/.test(s) ? `"${(/^[=+\-@]/.test(s) ? `'${s}` : s).replace(/"/g, '""')}"` : s
}
/** A loss table as CSV: a name column first, then the figures, and the total last. */
export function lossCsv(first: string, rows: readonly LossRow[], total: LossRow | null): string {
  const head = [first, 'units', 'issued g', 'returned g', 'loss g', 'loss %', 'loss fine g', 'over tolerance']
  const line = (r: LossRow) =>
    [
      r.label,
      r.n,
      r.issuedG.toFixed(3),
      r.returnedG.toFixed(3),
      r.lossG.toFixed(3),
      r.lossPct === null || r.lossPct === undefined ? '' : r.lossPct.toFixed(1),
      r.lossFineG.toFixed(3),
      r.overTolerance,
    ]
      .map(csvCell)
      .join(',')
  return [head.join(','), ...rows.map(line), ...(total ? [line(total)] : [])].join('\r\n') + '\r\n'
}
/** Hands a text file to the browser's download. */
export function downloadText(name: string, text: string, type = 'text/csv;charset=utf-8') {
  const url = URL.createObjectURL(new Blob([text], { type }))
  const a = document.createElement('a')
  a.href = url
  a.download = name
  document.body.appendChild(a)
  a.click()
  a.remove()
  setTimeout(() => URL.revokeObjectURL(url), 1000)
}

/**
 * Grams as typed in a weight field kept as text: a plain decimal number (a comma taken as the point), undefined when empty, NaN
 * otherwise — never rounded, so the shared schema can refuse a fourth decimal under the field instead of a weight being changed.
 */
export function gramsFromText(text: string): number | undefined {
  const t = text.trim().replace(',', '.')
  if (t === '') return undefined
  return /^(\d+(\.\d*)?|\.\d+)$/.test(t) ? Number(t) : NaN
}
