// Public entry of the scheduling engine: solve, validatePlan, checkProblem, promise, and the model types.
export * from './model.ts'
export { solve } from './solve.ts'
export { checkProblem } from './check.ts'
export { validatePlan, PLAN_RULES } from './validate.ts'
export { promise, type PromiseResult, type ProspectiveJob } from './promise.ts'
export { explainStarts, type TimedStep } from './explain.ts'
