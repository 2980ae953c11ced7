// This browser tab's id: sent with every API request (x-client-id) and named by the server in the events that request caused.
const random = () => Math.random().toString(36).slice(2, 10)

/** Made once per tab (a module loads once per page); letters, digits and dashes only, as the server expects. */
export const CLIENT_ID = `t-${Date.now().toString(36)}-${random()}${random()}`
