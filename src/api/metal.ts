// Metal API: alloys and prices, weighing out and back for a job bag, corrections, stock, loss figures, tolerances, refining lots.
import type {
  AdjustmentInput,
  Alloy,
  AlloyPrice,
  AlloyPriceInput,
  CorrectionInput,
  IssueInput,
  JobBagMetal,
  LossGrouping,
  LossTable,
  MetalMovement,
  PurchaseInput,
  RefiningItemInput,
  RefiningLot,
  RefiningLotInput,
  RefiningSendInput,
  RefiningSettleInput,
  ReturnInput,
  StockRow,
  Tolerance,
  ToleranceInput,
} from '@shared/schemas/metal'
import { api } from './client'

export interface Recorded {
  replayed: boolean
  movement: MetalMovement
}

export const listAlloys = () => api.get<Alloy[]>('/alloys')
export const listPrices = (alloyId: number) => api.get<AlloyPrice[]>(`/alloys/${alloyId}/prices`)
export const setPrice = (alloyId: number, body: AlloyPriceInput) => api.post<AlloyPrice>(`/alloys/${alloyId}/prices`, body)

export const getJobBagMetal = (jobBagId: number) => api.get<JobBagMetal>(`/job-bags/${jobBagId}/metal`)
export const issueMetal = (body: IssueInput) => api.post<Recorded>('/metal/issues', body)
export const returnMetal = (body: ReturnInput) => api.post<Recorded>('/metal/returns', body)
export const correctMovement = (movementId: number, body: CorrectionInput) =>
  api.post<Recorded & { correctionId: number }>(`/metal/movements/${movementId}/corrections`, body)
export const purchaseMetal = (body: PurchaseInput) => api.post<unknown>('/metal/purchases', body)
export const adjustStock = (body: AdjustmentInput) => api.post<unknown>('/metal/adjustments', body)

export const getStock = () => api.get<StockRow[]>('/metal/stock')
export const getLosses = (groupBy: LossGrouping, filter: { from?: string; to?: string } = {}) =>
  api.get<LossTable>('/metal/losses', { query: { groupBy, ...filter } })
export const listTolerances = () => api.get<Tolerance[]>('/metal/tolerances')
export const setTolerance = (kindId: number, body: ToleranceInput) => api.put<Tolerance>(`/metal/tolerances/${kindId}`, body)

export const listLots = () => api.get<RefiningLot[]>('/refining-lots')
export const createLot = (body: Partial<RefiningLotInput>) => api.post<RefiningLot>('/refining-lots', body)
export const addToLot = (lotId: number, body: RefiningItemInput) => api.post<{ replayed: boolean; lot: RefiningLot }>(`/refining-lots/${lotId}/items`, body)
export const sendLot = (lotId: number, body: RefiningSendInput) => api.post<RefiningLot>(`/refining-lots/${lotId}/send`, body)
export const settleLot = (lotId: number, body: RefiningSettleInput) => api.post<RefiningLot>(`/refining-lots/${lotId}/settle`, body)
