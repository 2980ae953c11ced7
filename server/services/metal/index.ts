// Metal: alloys and their dated prices, the ledger of issues and returns per job bag (with corrections), loss against the tolerance of
// each kind of work, stock per alloy, refining lots, and the owner's loss figures. Every write is one transaction with its audit row;
// events go out after commit; a write carrying a clientId that was seen before answers the first row instead of writing a second.
// This file only gathers the public functions of the modules beside it; callers import `services/metal`.
export { createAlloy, listAlloys, listPrices, setPrice, updateAlloy } from './prices'
export { adjustStock, correctMovement, issueMetal, jobBagMetal, listMovements, purchaseMetal, returnMetal } from './ledger'
export { listTolerances, lossFigures, lossReport, setTolerance } from './losses'
export { deliverOrderMetal, handBackCustomersPieces, heldCustomersPieces, stock, type HandBackRow, type PieceHandedBack } from './stock'
export { addToLot, createLot, getLot, listLots, sendLot, settleLot } from './refining'
