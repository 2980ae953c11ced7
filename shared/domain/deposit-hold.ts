// "No metal before the deposit": which steps wait for an order's deposit when the workshop asks for it, and the words used for it.

/**
 * Operation kinds (by code) that commit the customer's metal: casting (sent to the caster) and forging. With the workshop's
 * `noMetalBeforeDeposit` on, an order whose deposit is not in cannot start the first of these steps in each job bag.
 */
export const METAL_HEAVY_KINDS = ['casting', 'forging'] as const

/** The reason shown on the board, in the order's forecast and in the bench's refusal. */
export const WAITING_FOR_DEPOSIT = 'waiting for the deposit'

/** The settings hint for the switch. */
export const NO_METAL_BEFORE_DEPOSIT_HINT =
  'Casting and forging do not start until the order’s deposit is paid: the planner leaves such job bags out until then, and the bench cannot take the step.'

export const isMetalHeavy = (kindCode: string) => (METAL_HEAVY_KINDS as readonly string[]).includes(kindCode)
