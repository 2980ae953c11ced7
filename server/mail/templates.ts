// The workshop's e-mail texts: promise confirmation, ready for collection, and the managers' daily at-risk digest.
import { dayjs } from '../lib/time'

export interface MailContent { subject: string; text: string; html: string }

const esc = (s: string) => s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!)

/** "Thursday 12 March 2026" — a date the customer reads without doubt about day and month order. */
export const longDate = (isoDate: string) => dayjs(isoDate).format('dddd D MMMM YYYY')

function wrap(workshopName: string, paragraphs: string[], lines: string[] = []): { text: string; html: string } {
  const text = [...paragraphs, ...(lines.length ? ['', ...lines.map((l) => `  - ${l}`)] : []), '', `— ${workshopName}`].join('\n')
  const html = `<div style="font-family:sans-serif;line-height:1.5">${paragraphs.map((p) => `<p>${esc(p)}</p>`).join('')}${lines.length ? `<ul>${lines.map((l) => `<li>${esc(l)}</li>`).join('')}</ul>` : ''}<p>— ${esc(workshopName)}</p></div>`
  return { text, html }
}

export function promiseConfirmation(o: { workshopName: string; customerName: string; orderNumber: string; title: string; promisedDate: string; priceQuoted: number }): MailContent {
  const when = `${longDate(o.promisedDate)} (${o.promisedDate})`
  return {
    subject: `${o.workshopName}: your order ${o.orderNumber} will be ready by ${longDate(o.promisedDate)}`,
    ...wrap(o.workshopName, [
      `Dear ${o.customerName},`,
      `Thank you for your order "${o.title}" (${o.orderNumber}).`,
      `We have planned it into our workshop and promise it ready by ${when}.`,
      ...(o.priceQuoted > 0 ? [`Price as quoted: ${o.priceQuoted.toFixed(2)}.`] : []),
      'We will write again when it is ready to collect.',
    ]),
  }
}

export function readyForCollection(o: { workshopName: string; customerName: string; orderNumber: string; title: string }): MailContent {
  return {
    subject: `${o.workshopName}: order ${o.orderNumber} is ready to collect`,
    ...wrap(o.workshopName, [`Dear ${o.customerName},`, `Your order "${o.title}" (${o.orderNumber}) is finished and ready for collection.`, 'Please bring your order number with you.']),
  }
}

export interface DigestLine { number: string; piece: string; orderNumber: string; due: string; expected: string | null; state: string; reason: string | null; isNew: boolean }

export function atRiskDigest(o: { workshopName: string; day: string; jobs: DigestLine[] }): MailContent {
  const line = (j: DigestLine) => `${j.number} ${j.piece} (order ${j.orderNumber}) — ${j.state === 'late' ? 'LATE' : 'at risk'}: due ${j.due}, expected ${j.expected ?? 'not planned'}${j.reason ? `; ${j.reason}` : ''}`
  const fresh = o.jobs.filter((j) => j.isNew), still = o.jobs.filter((j) => !j.isNew)
  const lines = [...fresh.map((j) => `NEW ${line(j)}`), ...still.map(line)]
  return {
    subject: `${o.workshopName}: ${fresh.length} job bag${fresh.length === 1 ? '' : 's'} newly at risk, ${o.jobs.length} in all (${o.day})`,
    ...wrap(o.workshopName, [`Job bags at risk of missing their date on ${longDate(o.day)}, from the live plan:`], lines),
  }
}
