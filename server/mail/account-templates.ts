// E-mails that carry a one-time link: an invitation to the workshop and a password reset. The outbox keeps a copy without the link.
import type { MailContent } from './messages'

const esc = (s: string) => s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!)

/** What the outbox keeps in place of the link: staff who read the outbox must not be able to use someone else's link. */
export const LINK_KEPT_OUT = '[one-time link: sent to the recipient only, not kept here]'

function content(subject: string, paragraphs: string[], link: string, after: string[]): MailContent {
  const text = [...paragraphs, '', link, '', ...after].join('\n')
  const html = `<div style="font-family:sans-serif;line-height:1.5">${paragraphs.map((p) => `<p>${esc(p)}</p>`).join('')}<p><a href="${esc(link)}">${esc(link)}</a></p>${after.map((p) => `<p>${esc(p)}</p>`).join('')}</div>`
  return { subject, text, html }
}

const lasts = (hours: number) =>
  hours % 24 === 0 ? `${hours / 24} day${hours === 24 ? '' : 's'}` : hours >= 1 ? `${hours} hour${hours === 1 ? '' : 's'}` : `${Math.round(hours * 60)} minutes`

/** The invitation and the copy the outbox keeps. */
export function invitationMail(o: { workshopName: string; name: string; invitedBy: string; roleLabel: string; link: string; hours: number }) {
  const make = (link: string) =>
    content(
      `${o.workshopName}: you are invited to Millgrain`,
      [
        `Dear ${o.name},`,
        `${o.invitedBy} has invited you to ${o.workshopName}'s planning in Millgrain, as ${o.roleLabel}.`,
        'Open this link to choose your password; you are signed in straight after:',
      ],
      link,
      [`The link works once and for ${lasts(o.hours)}. If you did not expect this message, you can ignore it.`],
    )
  return { sent: make(o.link), kept: make(LINK_KEPT_OUT) }
}

/** The password reset and the copy the outbox keeps. */
export function resetMail(o: { workshopName: string; name: string; link: string; minutes: number }) {
  const make = (link: string) =>
    content(
      `${o.workshopName}: choose a new Millgrain password`,
      [`Dear ${o.name},`, 'Someone asked for a new password for your Millgrain account. Open this link to choose one:'],
      link,
      [
        `The link works once and for ${lasts(o.minutes / 60)}. Setting the new password signs you out everywhere else.`,
        'If you did not ask for this, ignore this message; your password stays as it is.',
      ],
    )
  return { sent: make(o.link), kept: make(LINK_KEPT_OUT) }
}
