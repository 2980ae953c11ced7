// Operation kinds (sawing, setting, casting…) are workshop data, not code.
import { z } from 'zod'
import { HAZARDS } from '../domain/status'
import { code, name, version, wireInt } from './common'

export const operationKindInput = z.object({
  code,
  name,
  outside: z.boolean().default(false),
  hazards: z.array(z.enum(HAZARDS)).max(5).default([]),
  color: z
    .string()
    .regex(/^#[0-9a-fA-F]{6}$/, 'must be a colour like #a1b2c3')
    .default('#7a8ca3'),
})
export const operationKindUpdate = operationKindInput.partial().extend({ version })
export type OperationKindInput = z.infer<typeof operationKindInput>

// ---- Answers ----

export const operationKind = z.object({
  id: wireInt,
  workshopId: wireInt,
  code: z.string(),
  name: z.string(),
  outside: z.boolean(),
  hazards: z.array(z.enum(HAZARDS)),
  color: z.string(),
  version: wireInt,
})
export type OperationKind = z.infer<typeof operationKind>
