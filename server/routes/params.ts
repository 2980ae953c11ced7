// Path parameter schemas shared by the routes.
import { z } from 'zod'
import { id } from '../../shared/schemas/common'

export const idParam = z.object({ id })
export const childParam = z.object({ id, childId: id })
