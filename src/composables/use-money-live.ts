// Follows money events (payments, refunds, payment links, quotes) for the life of the calling component.
import { onScopeDispose } from 'vue'
import { acquireLiveChannel, releaseLiveChannel } from '@/realtime/socket'
import { createDebounce } from '@/composables/use-live-board'

export const MONEY_EVENTS = ['payment:received', 'payment:refunded', 'paymentLink:created', 'quote:changed', 'order:updated'] as const

/**
 * Calls `reload` (debounced) when a money event concerns what the screen shows (`concerns` decides from the payload's ids),
 * and after a reconnect. Payloads carry ids only; the amounts come from the reload.
 */
export function useMoneyLive(concerns: (payload: Record<string, unknown>, event: string) => boolean, reload: () => void) {
  const channel = acquireLiveChannel()
  const debounced = createDebounce(reload, 150, 1000)
  const offs = [
    ...MONEY_EVENTS.map((e) => channel.on(e, (p, event) => { if (concerns(p, event)) debounced() })),
    channel.onResync(() => debounced()),
  ]
  onScopeDispose(() => {
    offs.forEach((off) => off())
    debounced.cancel()
    releaseLiveChannel(channel)
  })
  return channel
}
