// The workshop's e-mail texts: promise confirmation, a quote and its reminder, a balance to pay, ready for collection, and the managers' daily at-risk digest.
import { minorToMajor } from '../../shared/domain/currency'
import { vatLine, vatNumberLine, type VatTerms } from '../../shared/domain/vat'
import { dayjs } from '../lib/time'

export interface MailContent {
  subject: string
  text: string
  html: string
}

const esc = (s: string) => s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!)

/** "Thursday 12 March 2026" — a date the customer reads without doubt about day and month order. */
export const longDate = (isoDate: string) => dayjs(isoDate).format('dddd D MMMM YYYY')

/** Who the customer writes back to: the workshop's name, address and contact, as kept in its settings. */
export interface WorkshopContact {
  name: string
  address?: string
  phone?: string
  email?: string
  currency?: string
  /** When registered for VAT, prices carry their VAT line and the e-mail ends with the VAT number. */
  vat?: VatTerms
}

/** Whether the new piece's steps are in the live plan, with the workshop-local dates they span. */
export type BookingFacts = { booked: true; startDate: string; endDate: string } | { booked: false }

/** A price with its currency, e.g. "£640.00" (Intl, British English). */
export const money = (amount: number, currency = 'GBP') => new Intl.NumberFormat('en-GB', { style: 'currency', currency }).format(amount)

/** How every e-mail to a customer ends: the workshop's name, address, telephone, e-mail and, when registered, VAT number. */
export function signature(w: WorkshopContact): string[] {
  return [
    w.name,
    ...(w.address ? [w.address] : []),
    ...[w.phone && `Telephone ${w.phone}`, w.email && `E-mail ${w.email}`, w.vat && vatNumberLine(w.vat)].filter((x): x is string => !!x),
  ]
}

/** The VAT in a VAT-inclusive amount as the line under it, when the workshop is registered; none otherwise. */
export function vatLines(w: WorkshopContact, grossMinor: number, currency: string): string[] {
  const line = w.vat ? vatLine(grossMinor, w.vat, (minor) => money(minorToMajor(minor, currency), currency)) : null
  return line ? [line] : []
}

function wrap(w: WorkshopContact, paragraphs: string[], lines: string[] = []): { text: string; html: string } {
  const sig = signature(w)
  const text = [...paragraphs, ...(lines.length ? ['', ...lines.map((l) => `  - ${l}`)] : []), '', `— ${sig[0]}`, ...sig.slice(1)].join('\n')
  const html = `<div style="font-family:sans-serif;line-height:1.5">${paragraphs.map((p) => `<p>${esc(p)}</p>`).join('')}${lines.length ? `<ul>${lines.map((l) => `<li>${esc(l)}</li>`).join('')}</ul>` : ''}<p>— ${sig.map(esc).join('<br>')}</p></div>`
  return { text, html }
}

export function promiseConfirmation(o: {
  workshop: WorkshopContact
  customerName: string
  orderNumber: string
  title: string
  promisedDate: string
  priceQuotedMinor: number
  booking: BookingFacts
}): MailContent {
  const currency = o.workshop.currency ?? 'GBP'
  const when = `${longDate(o.promisedDate)} (${o.promisedDate})`
  const b = o.booking
  return {
    subject: `${o.workshop.name}: your order ${o.orderNumber} will be ready by ${longDate(o.promisedDate)}`,
    ...wrap(o.workshop, [
      `Dear ${o.customerName},`,
      `Thank you for your order "${o.title}" (${o.orderNumber}). We promise to have it ready by ${when}.`,
      b.booked
        ? b.startDate === b.endDate
          ? `It is booked into our workshop plan for ${longDate(b.startDate)}.`
          : `It is booked into our workshop plan: work starts on ${longDate(b.startDate)} and is planned to be finished on ${longDate(b.endDate)}.`
        : 'It is not in our workshop plan yet; we will confirm the dates when it is.',
      ...(o.priceQuotedMinor > 0
        ? [
            `Price as quoted: ${money(minorToMajor(o.priceQuotedMinor, currency), currency)}.`,
            ...vatLines(o.workshop, o.priceQuotedMinor, currency).map((l) => `${l[0]!.toUpperCase()}${l.slice(1)}.`),
          ]
        : []),
      'We will write again when it is ready to collect.',
    ]),
  }
}

/** A quote e-mailed to the customer: the piece named in quotation marks (any name reads), the money, the dates and the deposit link. */
export function quoteOffer(o: {
  /** Who sends it: the e-mail ends with the workshop's name, address and contact, as the quote's PDF does. */
  workshop: WorkshopContact
  customerName: string
  quoteNumber: string
  title: string
  description: string
  currency: string
  priceMinor: number
  depositMinor: number
  promisedDate: string | null
  validUntil: string
  depositUrl: string | null
}): MailContent {
  const m = (minor: number) => money(minorToMajor(minor, o.currency), o.currency)
  const text = [
    `Dear ${o.customerName},`,
    '',
    `Thank you for your enquiry about "${o.title}". Here is our quote ${o.quoteNumber}:`,
    '',
    ...(o.description ? [o.description, ''] : []),
    `Price: ${m(o.priceMinor)}`,
    ...vatLines(o.workshop, o.priceMinor, o.currency),
    `Deposit to start the work: ${m(o.depositMinor)}`,
    `Balance at collection: ${m(o.priceMinor - o.depositMinor)}`,
    ...(o.promisedDate ? [`Ready by: ${longDate(o.promisedDate)}`] : []),
    `This quote stands until ${longDate(o.validUntil)}.`,
    '',
    ...(o.depositUrl ? [`Pay the deposit securely here: ${o.depositUrl}`, 'Paying the deposit accepts the quote.', ''] : []),
    ...signature(o.workshop).map((l, i) => (i === 0 ? `— ${l}` : l)),
  ].join('\n')
  const html = `<div style="font-family:sans-serif;line-height:1.5">${text
    .split('\n')
    .map((l) => (l.startsWith('Pay the deposit') && o.depositUrl ? `<p><a href="${esc(o.depositUrl)}">Pay the deposit</a></p>` : l ? `<p>${esc(l)}</p>` : ''))
    .join('')}</div>`
  return { subject: `${o.workshop.name}: quote ${o.quoteNumber} for "${o.title}"`, text, html }
}

/**
 * The reminder of a quote about to lapse: until when it stands, its price with the VAT in it under the terms the quote was issued
 * with (a quote issued when the workshop was not registered says none), signed as every customer e-mail is.
 */
export function quoteReminder(o: {
  workshop: WorkshopContact
  customerName: string
  quoteNumber: string
  title: string
  currency: string
  priceMinor: number
  validUntil: string
}): MailContent {
  const m = (minor: number) => money(minorToMajor(minor, o.currency), o.currency)
  const text = [
    `Dear ${o.customerName},`,
    '',
    `Our quote ${o.quoteNumber} for "${o.title}" stands until ${longDate(o.validUntil)}. Paying the deposit accepts it.`,
    '',
    `Price: ${m(o.priceMinor)}`,
    ...vatLines(o.workshop, o.priceMinor, o.currency),
    '',
    ...signature(o.workshop).map((l, i) => (i === 0 ? `— ${l}` : l)),
  ].join('\n')
  const html = `<div style="font-family:sans-serif;line-height:1.5">${text
    .split('\n')
    .map((l) => (l ? `<p>${esc(l)}</p>` : ''))
    .join('')}</div>`
  return { subject: `${o.workshop.name}: quote ${o.quoteNumber} ends soon`, text, html }
}

/**
 * The daily reminder of a balance owed on a piece ready to collect: the balance with the VAT in it as the payment that settles
 * the order will carry it (`balanceVatMinor`, under the terms the order was made under), signed as every customer e-mail is.
 */
export function balanceReminder(o: {
  workshop: WorkshopContact
  customerName: string
  orderNumber: string
  currency: string
  balanceMinor: number
  balanceVatMinor: number
}): MailContent {
  const m = (minor: number) => money(minorToMajor(minor, o.currency), o.currency)
  const vat = o.workshop.vat ? vatLine(o.balanceMinor, o.workshop.vat, m, o.balanceVatMinor) : null
  const text = [
    `Dear ${o.customerName},`,
    '',
    `Your order ${o.orderNumber} is ready for collection.`,
    '',
    `Balance to pay: ${m(o.balanceMinor)}`,
    ...(vat ? [vat] : []),
    '',
    ...signature(o.workshop).map((l, i) => (i === 0 ? `— ${l}` : l)),
  ].join('\n')
  const html = `<div style="font-family:sans-serif;line-height:1.5">${text
    .split('\n')
    .map((l) => (l ? `<p>${esc(l)}</p>` : ''))
    .join('')}</div>`
  return { subject: `${o.workshop.name}: order ${o.orderNumber} is ready — balance to pay`, text, html }
}

export function readyForCollection(o: { workshop: WorkshopContact; customerName: string; orderNumber: string; title: string }): MailContent {
  return {
    subject: `${o.workshop.name}: order ${o.orderNumber} is ready to collect`,
    ...wrap(o.workshop, [
      `Dear ${o.customerName},`,
      `Your order "${o.title}" (${o.orderNumber}) is finished and ready for collection.`,
      'Please bring your order number with you.',
    ]),
  }
}

export interface DigestLine {
  number: string
  piece: string
  orderNumber: string
  due: string
  expected: string | null
  state: string
  reason: string | null
  isNew: boolean
}

export function atRiskDigest(o: { workshopName: string; day: string; jobs: DigestLine[] }): MailContent {
  const line = (j: DigestLine) =>
    `${j.number} ${j.piece} (order ${j.orderNumber}) — ${j.state === 'late' ? 'LATE' : 'at risk'}: due ${j.due}, expected ${j.expected ?? 'not planned'}${j.reason ? `; ${j.reason}` : ''}`
  const fresh = o.jobs.filter((j) => j.isNew),
    still = o.jobs.filter((j) => !j.isNew)
  const lines = [...fresh.map((j) => `NEW ${line(j)}`), ...still.map(line)]
  return {
    subject: `${o.workshopName}: ${fresh.length} job bag${fresh.length === 1 ? '' : 's'} newly at risk, ${o.jobs.length} in all (${o.day})`,
    ...wrap({ name: o.workshopName }, [`Job bags at risk of missing their date on ${longDate(o.day)}, from the live plan:`], lines),
  }
}
