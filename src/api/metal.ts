// Metal API: alloys and prices, weighing out and back for a job bag, corrections, stock, loss figures, tolerances, refining lots.
import { z } from 'zod'
import {
  alloy,
  alloyPrice,
  jobBagMetal,
  lossTable,
  lotItemAdded,
  recordedCorrection,
  recordedMovement,
  refiningLot,
  stockRow,
  tolerance,
  type AdjustmentInput,
  type AlloyPriceInput,
  type CorrectionInput,
  type IssueInput,
  type LossGrouping,
  type PurchaseInput,
  type RefiningItemInput,
  type RefiningLotInput,
  type RefiningSendInput,
  type RefiningSettleInput,
  type ReturnInput,
  type ToleranceInput,
} from '@shared/schemas/metal'
import { api } from './client'

export const listAlloys = () => api.get('/alloys', { schema: z.array(alloy) })
export const listPrices = (alloyId: number) => api.get(`/alloys/${alloyId}/prices`, { schema: z.array(alloyPrice) })
export const setPrice = (alloyId: number, body: AlloyPriceInput) => api.post(`/alloys/${alloyId}/prices`, body, { schema: alloyPrice })

export const getJobBagMetal = (jobBagId: number) => api.get(`/job-bags/${jobBagId}/metal`, { schema: jobBagMetal })
export const issueMetal = (body: IssueInput) => api.post('/metal/issues', body, { schema: recordedMovement })
export const returnMetal = (body: ReturnInput) => api.post('/metal/returns', body, { schema: recordedMovement })
export const correctMovement = (movementId: number, body: CorrectionInput) =>
  api.post(`/metal/movements/${movementId}/corrections`, body, { schema: recordedCorrection })
export const purchaseMetal = (body: PurchaseInput) => api.post('/metal/purchases', body, { schema: recordedMovement })
export const adjustStock = (body: AdjustmentInput) => api.post('/metal/adjustments', body, { schema: recordedMovement })

export const getStock = () => api.get('/metal/stock', { schema: z.array(stockRow) })
export const getLosses = (groupBy: LossGrouping, filter: { from?: string; to?: string } = {}) =>
  api.get('/metal/losses', { query: { groupBy, ...filter }, schema: lossTable })
export const listTolerances = () => api.get('/metal/tolerances', { schema: z.array(tolerance) })
export const setTolerance = (kindId: number, body: ToleranceInput) => api.put(`/metal/tolerances/${kindId}`, body, { schema: tolerance })

export const listLots = () => api.get('/refining-lots', { schema: z.array(refiningLot) })
export const createLot = (body: Partial<RefiningLotInput>) => api.post('/refining-lots', body, { schema: refiningLot })
export const addToLot = (lotId: number, body: RefiningItemInput) => api.post(`/refining-lots/${lotId}/items`, body, { schema: lotItemAdded })
export const sendLot = (lotId: number, body: RefiningSendInput) => api.post(`/refining-lots/${lotId}/send`, body, { schema: refiningLot })
export const settleLot = (lotId: number, body: RefiningSettleInput) => api.post(`/refining-lots/${lotId}/settle`, body, { schema: refiningLot })
