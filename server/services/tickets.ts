// The printable job ticket: a PDF (A6 or A5) with the bag's number, piece, customer reference, due date, the stones to set (counted as the setting estimate counts them), routing checklist, cautions and a QR link.
import { eq, inArray } from 'drizzle-orm'
import PDFDocument from 'pdfkit'
import QRCode from 'qrcode'
import { HAZARD_FOOTER, cautionsFor } from '../../shared/domain/status'
import { stonesToSet, type StonesToSet } from '../../shared/domain/stones'
import { metalName, type PieceParams } from '../../shared/schemas/order'
import type { Db } from '../db/client'
import { benches, jobBagStones, workshops } from '../db/schema/index'
import { notFound } from '../errors/app-error'
import { getJobBag } from './job-bags'
import { customerStoneWords, stoneListWords } from './stones'
import { ringSizeWords, type RingSizeInput } from '../../shared/domain/ring-size'

/** The link a ticket's QR code opens: the job bag's page in the app. */
export const jobBagLink = (origin: string, jobBagId: number) => `${origin.replace(/\/+$/, '')}/job-bags/${jobBagId}`

/** The QR code image printed on the ticket (PNG). */
export function ticketQrPng(link: string): Promise<Buffer> {
  return QRCode.toBuffer(link, { type: 'png', errorCorrectionLevel: 'M', margin: 2, width: 300 })
}

/** Where the QR code points: the owner's public address, else the suggested network address, else the address the request came in on. */
export const ticketOrigin = (publicUrl: string, suggested: string | null, requestOrigin: string) => publicUrl || suggested || requestOrigin

/** A moment as the workshop reads it: 2025-07-15 14:07 BST (Europe/London) — local date and 24-hour time, the zone's abbreviation and its name. */
export function workshopTime(at: Date, timeZone: string): string {
  const parts = new Intl.DateTimeFormat('en-GB', {
    timeZone,
    year: 'numeric',
    month: '2-digit',
    day: '2-digit',
    hour: '2-digit',
    minute: '2-digit',
    hourCycle: 'h23',
    timeZoneName: 'short',
  }).formatToParts(at)
  const part = (type: Intl.DateTimeFormatPartTypes) => parts.find((x) => x.type === type)?.value ?? ''
  return `${part('year')}-${part('month')}-${part('day')} ${part('hour')}:${part('minute')} ${part('timeZoneName')} (${timeZone})`
}

/** Joined with no-break spaces, so a number stays on the line of its word when the ticket's narrow column wraps. */
const keep = (...words: (string | number)[]) => words.join('\u00a0')

/** The stones on the qty line: "36 stones (18 a piece)" over several pieces, "12 stones" / "1 stone" for one; '' when none. */
export function ticketStoneWords(st: Pick<StonesToSet, 'total' | 'perPiece' | 'pieces'>): string {
  if (!st.total) return ''
  const all = keep(st.total, st.total === 1 ? 'stone' : 'stones')
  return st.pieces > 1 ? `${all} ${keep(`(${st.perPiece}`, 'a', 'piece)')}` : all
}

/** When the stone list is counted and the piece figures say otherwise, which one the ticket counts: "Counted from this list; the order's figures say 12 × 1.3 mm a piece." */
export function ticketStoneSourceWords(st: Pick<StonesToSet, 'source' | 'pieceFigures'>): string {
  const f = st.pieceFigures
  if (st.source !== 'stone-list' || !f) return ''
  return `Counted from this list; the order's figures say ${f.perPiece}${f.sizeMm !== null ? ` × ${f.sizeMm} mm` : ''} a piece.`
}

const SIZES = { A6: [297.64, 419.53], A5: [419.53, 595.28] } as const

/**
 * How a routing's steps are printed (points on A6, × 1.3 on A5): the step's name in bold with its kind of work, level and bench
 * under it (or, `inline`, run on after the name; `noKind`, without the kind of work, which the step's name and its (!) already
 * tell), the planned time to the right in a column `estW` wide (else as wide as the widest), a tick box and a gap. The roomiest
 * that keeps the ticket on one page is used: a long routing gets smaller type, never under 6.5 pt.
 */
interface StepStyle {
  name: number
  detail: number
  est: number
  estW?: number
  box: number
  gap: number
  inline: boolean
  noKind?: boolean
}
const STEP_STYLES: readonly StepStyle[] = [
  { name: 8.5, detail: 6.5, est: 8, estW: 62, box: 8, gap: 3, inline: false },
  { name: 7.5, detail: 6.5, est: 7, box: 7, gap: 2, inline: false },
  { name: 7, detail: 6.5, est: 7, box: 7, gap: 1.5, inline: true },
  { name: 6.5, detail: 6.5, est: 6.5, box: 6.5, gap: 1, inline: true },
  { name: 6.5, detail: 6.5, est: 6.5, box: 6.5, gap: 1, inline: true, noKind: true },
]
const fmtDate = (d: string) =>
  new Date(`${d}T00:00:00Z`).toLocaleDateString('en-GB', { weekday: 'short', day: 'numeric', month: 'short', year: 'numeric', timeZone: 'UTC' })

export interface TicketOptions {
  size: 'A5' | 'A6'
  /** The address the print request came in on (last resort for the QR code). */
  requestOrigin: string
  /** This machine's network address, used when the workshop has no public address set. */
  suggestedOrigin?: string | null
  /** The clock (printed time); now when left out. */
  now?: Date
}

/** Renders the ticket; the customer appears by reference only (no name or contact data leaves on paper). Metals, kinds and benches by name, times in the workshop's zone. */
export async function jobTicketPdf(db: Db, workshopId: number, jobBagId: number, o: TicketOptions): Promise<{ pdf: Buffer; number: string; link: string }> {
  const [ws] = await db.select({ timeZone: workshops.timeZone, publicUrl: workshops.publicUrl }).from(workshops).where(eq(workshops.id, workshopId))
  if (!ws) throw notFound('Workshop')
  const bag = await getJobBag(db, workshopId, jobBagId)
  const benchIds = [...new Set(bag.operations.map((x) => x.plannedBenchId).filter((x): x is number => x !== null))]
  const benchName = new Map(
    (benchIds.length ? await db.select({ id: benches.id, name: benches.name }).from(benches).where(inArray(benches.id, benchIds)) : []).map((b) => [
      b.id,
      b.name,
    ]),
  )
  const link = jobBagLink(ticketOrigin(ws.publicUrl, o.suggestedOrigin ?? null, o.requestOrigin), bag.id)
  const qr = await ticketQrPng(link)
  const [w, h] = SIZES[o.size]
  const big = o.size === 'A5'
  const m = big ? 28 : 18
  const doc = new PDFDocument({
    size: [w, h],
    margins: { top: m, bottom: m, left: m, right: m },
    info: { Title: `Job ticket ${bag.number}`, Subject: bag.piece, Creator: 'Millgrain' },
  })
  const chunks: Buffer[] = []
  doc.on('data', (c: Buffer) => chunks.push(c))
  const done = new Promise<Buffer>((resolve, reject) => {
    doc.on('end', () => resolve(Buffer.concat(chunks)))
    doc.on('error', reject)
  })

  const fs = (n: number) => (big ? n * 1.3 : n)
  const qrSize = big ? 110 : 78
  const textW = w - 2 * m - qrSize - 8
  doc.image(qr, w - m - qrSize, m - 4, { width: qrSize })
  doc.font('Helvetica').fontSize(fs(7)).fillColor('#555').text('JOB TICKET', m, m, { width: textW, characterSpacing: 1 })
  doc.font('Helvetica-Bold').fontSize(fs(18)).fillColor('#000').text(bag.number, { width: textW })
  doc.font('Helvetica').fontSize(fs(9)).text(bag.piece, { width: textW })
  doc.moveDown(0.3)
  const facts: [string, string][] = [
    ['Order', `${bag.order.number}`],
    ['Customer ref.', bag.order.customerReference],
    ['Due', fmtDate(bag.order.promisedDate ?? bag.order.dueDate)],
  ]
  // Stones by the setting estimate's rule (as the bench cards): the bag's own stone list when it has one, else the piece figures; pieces from the figures.
  const p = bag.params as Partial<PieceParams>
  const lines = await db.select({ sizeMm: jobBagStones.sizeMm, count: jobBagStones.count }).from(jobBagStones).where(eq(jobBagStones.jobBagId, bag.id))
  const stones = stonesToSet(p, lines)
  const stoneWords = ticketStoneWords(stones)
  facts.push([
    'Metal / qty',
    `${p.metal ? metalName(p.metal) : '—'} · ${keep(stones.pieces, stones.pieces === 1 ? 'piece' : 'pieces')}${stoneWords ? ` · ${stoneWords}` : ''}`,
  ])
  const rs = bag.params as { ringSize?: RingSizeInput; resizeFrom?: RingSizeInput; resizeTo?: RingSizeInput }
  if (rs.ringSize) facts.push(['Ring size', ringSizeWords(rs.ringSize)])
  if (rs.resizeFrom || rs.resizeTo)
    facts.push(['Resize', `from ${rs.resizeFrom ? ringSizeWords(rs.resizeFrom) : '—'} to ${rs.resizeTo ? ringSizeWords(rs.resizeTo) : '—'}`])
  for (const [k, v] of facts) {
    const y = doc.y
    doc.font('Helvetica').fontSize(fs(7)).fillColor('#555').text(k, m, y, { width: 56 })
    doc
      .font('Helvetica-Bold')
      .fontSize(fs(8))
      .fillColor('#000')
      .text(v, m + fs(56), y, { width: textW - fs(56) })
  }
  // Below the facts (a wrapped one may reach past the QR code) and below the QR code's caption.
  const factsEnd = doc.y
  doc
    .font('Helvetica')
    .fontSize(fs(6))
    .fillColor('#555')
    .text('Scan to open this job bag', w - m - qrSize, m + qrSize - 6, { width: qrSize, align: 'center' })
  doc.y = Math.max(factsEnd + 2, doc.y, m + qrSize + 8)

  // The stone list for the setter: role, count, size, measured depth, carats.
  const stoneList = await stoneListWords(db, jobBagId)
  if (stoneList.length) {
    doc
      .font('Helvetica')
      .fontSize(fs(7))
      .fillColor('#000')
      .text(`Stones — ${stoneList.join('; ')}`, m, doc.y, { width: w - 2 * m })
    const source = ticketStoneSourceWords(stones)
    if (source)
      doc
        .font('Helvetica-Oblique')
        .fontSize(fs(7))
        .text(source, m, doc.y, { width: w - 2 * m })
    doc.moveDown(0.3)
  }
  // The customer's own stones, to be checked back with them at collection.
  const ownStones = await customerStoneWords(db, jobBagId)
  if (ownStones.length) {
    doc
      .font('Helvetica-Bold')
      .fontSize(fs(8))
      .fillColor('#000')
      .text(`Customer's stones (check back at collection): ${ownStones.join('; ')}`, m, doc.y, { width: w - 2 * m })
    doc.moveDown(0.3)
  }

  // Routing checklist.
  doc
    .moveTo(m, doc.y)
    .lineTo(w - m, doc.y)
    .lineWidth(0.7)
    .strokeColor('#000')
    .stroke()
  doc.moveDown(0.3)
  doc.font('Helvetica-Bold').fontSize(fs(8)).fillColor('#000').text('Routing', m, doc.y)
  doc.moveDown(0.2)
  const steps = bag.operations
    .map((op, i) => ({ op, i }))
    .filter(({ op }) => op.status !== 'skipped')
    .map(({ op, i }) => {
      const cautions = cautionsFor(op.hazards).filter((c) => c !== HAZARD_FOOTER)
      const bench = op.plannedBenchId !== null ? benchName.get(op.plannedBenchId) : undefined
      return {
        op,
        cautions,
        name: `${i + 1}. ${op.name}${cautions.length ? '  (!)' : ''}`,
        kind: op.kindName,
        more: [...(op.requiredLevel > 1 ? [`level ${op.requiredLevel}`] : []), ...(bench ? [`at ${bench}`] : [])],
        est: op.outside || op.leadDays > 0 ? `${op.leadDays} working day${op.leadDays === 1 ? '' : 's'}` : `${Math.round(op.estimateMinutes)} min`,
      }
    })
  const detailOf = (st: StepStyle, x: (typeof steps)[number]) => (st.noKind ? x.more : [x.kind, ...x.more]).join(' · ')
  const cautionLines = [...new Set(steps.flatMap((st) => st.cautions))]
  const full = w - 2 * m
  /** Height of a text in a font and size over a width, as it will be printed (pdfkit's own line breaking). */
  const heightOf = (text: string, font: string, size: number, width: number) => doc.font(font).fontSize(size).heightOfString(text, { width })
  const cautionsH = cautionLines.length
    ? fs(4) +
      heightOf('Safety cautions', 'Helvetica-Bold', fs(8), full) +
      cautionLines.reduce((sum, c) => sum + heightOf(`• ${c}`, 'Helvetica', fs(6.5), full), 0) +
      heightOf(HAZARD_FOOTER, 'Helvetica-Oblique', fs(6.5), full)
    : 0
  const printedH = 6 + heightOf(`Printed ${workshopTime(o.now ?? new Date(), ws.timeZone)} · ${link}`, 'Helvetica', fs(5.5), full)
  // The roomiest style whose steps, with the cautions and the printed line, fit what is left of the page; a routing too long even
  // for the tightest goes on over a second page, a step never split.
  const room = h - m - doc.y - cautionsH - printedH - 2
  const estW = (st: StepStyle) =>
    st.estW !== undefined ? fs(st.estW) : Math.max(0, ...steps.map((x) => doc.font('Helvetica').fontSize(fs(st.est)).widthOfString(x.est))) + fs(4)
  const nameW = (st: StepStyle) => full - fs(st.box) - 6 - estW(st)
  const stepH = (st: StepStyle, x: (typeof steps)[number]) => {
    const detail = detailOf(st, x)
    // Inline, measured all in the name's bold (wider than the detail's regular), so the estimate never falls short.
    const text = st.inline
      ? heightOf(detail ? `${x.name}  ${detail}` : x.name, 'Helvetica-Bold', fs(st.name), nameW(st))
      : heightOf(x.name, 'Helvetica-Bold', fs(st.name), nameW(st)) + Math.max(heightOf(detail, 'Helvetica', fs(st.detail), nameW(st)), fs(st.detail) * 1.2)
    return Math.max(text, fs(st.box) + 2) + st.gap
  }
  const style = STEP_STYLES.find((st) => steps.reduce((sum, x) => sum + stepH(st, x), 0) <= room) ?? STEP_STYLES.at(-1)!
  const box = fs(style.box)
  const nw = nameW(style)
  const ew = estW(style)
  for (const x of steps) {
    if (doc.y + stepH(style, x) > h - m) doc.addPage()
    const y = doc.y
    doc
      .rect(m, y + 1, box, box)
      .lineWidth(0.8)
      .strokeColor('#000')
      .stroke()
    if (x.op.status === 'done')
      doc
        .moveTo(m + 1.5, y + box / 2 + 1)
        .lineTo(m + box / 2.5, y + box - 0.5)
        .lineTo(m + box - 1, y + 2.5)
        .stroke()
    const tx = m + box + 6
    const detail = detailOf(style, x)
    if (style.inline) {
      doc.font('Helvetica-Bold').fontSize(fs(style.name)).fillColor('#000').text(x.name, tx, y, { width: nw, continued: !!detail })
      if (detail) doc.font('Helvetica').fontSize(fs(style.detail)).fillColor('#444').text(`  ${detail}`)
    } else {
      doc.font('Helvetica-Bold').fontSize(fs(style.name)).fillColor('#000').text(x.name, tx, y, { width: nw })
      const yAfter = doc.y
      doc.font('Helvetica').fontSize(fs(style.detail)).fillColor('#444').text(detail, tx, yAfter, { width: nw })
      doc.y = Math.max(doc.y, yAfter + fs(style.detail) * 1.2)
    }
    const yEnd = doc.y
    doc
      .font('Helvetica')
      .fontSize(fs(style.est))
      .fillColor('#000')
      .text(x.est, w - m - ew, y, { width: ew, align: 'right' })
    doc.y = Math.max(yEnd, y + box + 2) + style.gap
    doc.x = m
  }

  if (cautionLines.length) {
    if (doc.y + cautionsH > h - m) doc.addPage()
    else doc.y += fs(4)
    doc.font('Helvetica-Bold').fontSize(fs(8)).fillColor('#000').text('Safety cautions', m, doc.y, { width: full })
    for (const c of cautionLines) doc.font('Helvetica').fontSize(fs(6.5)).fillColor('#000').text(`• ${c}`, m, doc.y, { width: full })
    doc.font('Helvetica-Oblique').fontSize(fs(6.5)).text(HAZARD_FOOTER, m, doc.y, { width: full })
  }
  doc
    .font('Helvetica')
    .fontSize(fs(5.5))
    .fillColor('#777')
    .text(`Printed ${workshopTime(o.now ?? new Date(), ws.timeZone)} · ${link}`, m, doc.y + 6, { width: w - 2 * m })
  doc.end()
  return { pdf: await done, number: bag.number, link }
}
