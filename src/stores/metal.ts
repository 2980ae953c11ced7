// Metal: the workshop's alloys and tolerances (shared by the bench, the job bag and the owner's screen), stock, loss tables and refining lots.
import { defineStore } from 'pinia'
import { reactive, ref } from 'vue'
import type { Alloy, LossGrouping, LossTable, RefiningLot, StockRow, Tolerance } from '@shared/schemas/metal'
import * as metalApi from '@/api/metal'

export const useMetalStore = defineStore('metal', () => {
  const alloys = ref<Alloy[]>([])
  const tolerances = ref<Tolerance[]>([])
  const stock = ref<StockRow[]>([])
  const lots = ref<RefiningLot[]>([])
  /** Loss tables by grouping, for the current date range. */
  const losses = reactive<Partial<Record<LossGrouping, LossTable>>>({})
  const lossFilter = reactive<{ from?: string; to?: string }>({})
  let alloysLoaded = false

  async function loadAlloys(force = false) {
    if (alloysLoaded && !force) return alloys.value
    alloys.value = await metalApi.listAlloys()
    alloysLoaded = true
    return alloys.value
  }
  async function loadTolerances() {
    tolerances.value = await metalApi.listTolerances()
  }
  async function loadStock() {
    stock.value = await metalApi.getStock()
  }
  async function loadLots() {
    lots.value = await metalApi.listLots()
  }
  async function loadLosses(groupBy: LossGrouping) {
    losses[groupBy] = await metalApi.getLosses(groupBy, { ...lossFilter })
    return losses[groupBy]!
  }
  function clearLosses() {
    for (const k of Object.keys(losses) as LossGrouping[]) delete losses[k]
  }

  return { alloys, tolerances, stock, lots, losses, lossFilter, loadAlloys, loadTolerances, loadStock, loadLots, loadLosses, clearLosses }
})
