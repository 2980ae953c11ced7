// Money screens follow payments, refunds, payment links and quotes through the live bridge's resource keys.
import { useLiveKeys } from '@/composables/use-live'

/**
 * Calls `reload` (debounced) when the bridge invalidates one of the keys: 'money' (any payment, link or quote),
 * 'order:<id>' / 'order:<id>:money', 'quote:<id>' / 'quote:<id>:money'; and after a reconnect. Payloads carry ids only;
 * the amounts come from the reload.
 */
export function useMoneyLive(keys: () => readonly string[], reload: () => void) {
  useLiveKeys(keys, reload, 150, 1000)
}
