/**
 * The robustness checks of a run, one file per check: placebo in time (placeboTime.ts),
 * placebo in space (placeboSpace.ts), leave one donor out (leaveOneOut.ts) and alternative
 * pools (pools.ts). Each is pure, takes the run's rows and spec, reports progress between
 * units and stops with RobustnessCancelled when the caller cancels.
 */
export { placeboInTime, pointSpec, type PlaceboTimeOptions } from './placeboTime'
export { placeboInSpace } from './placeboSpace'
export { leaveOneOut, comparisonPool } from './leaveOneOut'
export { alternativePools, poolSpec } from './pools'
export { RobustnessCancelled, isRobustnessCancelled, type RobustnessHooks } from './hooks'
