// Every API route, in one list: the app mounts it and the access test walks it.
import type { RouteSpec } from '../lib/route'
import { benchRoutes } from './bench'
import { insightRoutes } from './insights'
import { jobBagRoutes } from './job-bags'
import { masterDataRoutes } from './masterdata'
import { orderRoutes } from './orders'
import { planRoutes } from './plans'
import { sessionRoutes } from './session'
import { promiseRoutes } from './promise'
import { mailRoutes } from './mail'
import { fileRoutes } from './files'
import { pauseReasonRoutes } from './pause-reasons'
import { metalRoutes } from './metal'
import { stoneRoutes } from './stones'
import { quoteRoutes } from './quotes'
import { paymentRoutes } from './payments'

export const allRoutes: RouteSpec[] = [...sessionRoutes, ...masterDataRoutes, ...orderRoutes, ...planRoutes, ...jobBagRoutes, ...benchRoutes, ...insightRoutes, ...promiseRoutes, ...mailRoutes, ...fileRoutes, ...pauseReasonRoutes, ...stoneRoutes, ...metalRoutes, ...quoteRoutes, ...paymentRoutes] as RouteSpec[]
