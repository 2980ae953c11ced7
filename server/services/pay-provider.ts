// The payment provider's SDK client: a real account when its keys are set, else the local fake on loopback, else none.
import Stripe from 'stripe'
import type { Config } from '../config'
import { FAKE_SECRET_KEY, FAKE_WEBHOOK_SECRET } from '../dev/pay-fake'

export interface PayProvider {
  stripe: Stripe
  webhookSecret: string
  fake: boolean
}

export function createPayProvider(config: Pick<Config, 'STRIPE_SECRET_KEY' | 'STRIPE_WEBHOOK_SECRET' | 'PAY_FAKE_URL'>): PayProvider | null {
  if (config.STRIPE_SECRET_KEY && config.STRIPE_WEBHOOK_SECRET) {
    return {
      stripe: new Stripe(config.STRIPE_SECRET_KEY, { maxNetworkRetries: 2, telemetry: false }),
      webhookSecret: config.STRIPE_WEBHOOK_SECRET,
      fake: false,
    }
  }
  if (!config.PAY_FAKE_URL) return null
  const u = new URL(config.PAY_FAKE_URL)
  const stripe = new Stripe(FAKE_SECRET_KEY, {
    host: u.hostname,
    port: Number(u.port || (u.protocol === 'https:' ? 443 : 80)),
    protocol: u.protocol === 'https:' ? 'https' : 'http',
    maxNetworkRetries: 0,
    telemetry: false,
  })
  return { stripe, webhookSecret: FAKE_WEBHOOK_SECRET, fake: true }
}
