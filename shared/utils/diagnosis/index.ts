/**
 * The reasoning core of guided diagnosis: what each verdict means, live cause probabilities,
 * the next step that pays most, branching flows and what closed records teach. Pure functions,
 * no framework: the browser and the server import the same code.
 */
export * from './posterior'
export * from './next-step'
export * from './minutes'
export * from './stats'
export * from './learning'
export * from './flow'
export * from './flow-validation'
export * from './flow-graph'
export * from './branch-stats'
export * from '../../types/verdicts'
