// Every API route, in one list: the app mounts it and the access test walks it.
import type { RouteSpec } from '../lib/route'
import { benchRoutes } from './bench-floor'
import { insightRoutes } from './insights'
import { jobBagRoutes } from './job-bags'
import { masterDataRoutes } from './masterdata'
import { orderRoutes } from './orders'
import { planRoutes } from './plans'
import { sessionRoutes } from './session'
import { accountRoutes } from './accounts'
import { promiseRoutes } from './promise'
import { mailRoutes } from './mail'
import { fileRoutes } from './files'
import { pauseReasonRoutes } from './pause-reasons'
import { metalRoutes } from './metal'
import { stoneRoutes } from './stones'
import { quoteRoutes } from './quotes'
import { paymentRoutes } from './payments'
import { costingRoutes } from './costing'

export const allRoutes: RouteSpec[] = [
  ...sessionRoutes,
  ...accountRoutes,
  ...masterDataRoutes,
  ...orderRoutes,
  ...planRoutes,
  ...jobBagRoutes,
  ...benchRoutes,
  ...insightRoutes,
  ...promiseRoutes,
  ...mailRoutes,
  ...fileRoutes,
  ...pauseReasonRoutes,
  ...stoneRoutes,
  ...metalRoutes,
  ...quoteRoutes,
  ...paymentRoutes,
  ...costingRoutes,
] as RouteSpec[]
