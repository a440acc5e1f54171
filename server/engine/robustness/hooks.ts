/**
 * What every robustness check shares: the caller's progress callback and cancellation check,
 * called between units (one re-estimate each), and the error thrown when the caller cancels.
 * Both callbacks may be async (a job writes progress to its row and polls a cancel flag);
 * the checks await them, so a long set yields between units.
 */
export interface RobustnessHooks {
  /** fraction 0..1 of the check done, and what it is doing in words. */
  progress?: (fraction: number, message: string) => void | Promise<void>
  /** True once the caller wants the check stopped; checked before each unit. */
  isCancelled?: () => boolean | Promise<boolean>
}

/** Thrown by a check when `isCancelled()` says so; nothing partial is returned. */
export class RobustnessCancelled extends Error {
  constructor() {
    super('The robustness check was cancelled.')
    this.name = 'RobustnessCancelled'
  }
}

export const isRobustnessCancelled = (e: unknown): e is RobustnessCancelled => e instanceof Error && e.name === 'RobustnessCancelled'

/** Reports progress, then throws RobustnessCancelled when the caller has cancelled. */
export async function step(hooks: RobustnessHooks, fraction: number, message: string): Promise<void> {
  await hooks.progress?.(Math.max(0, Math.min(1, fraction)), message)
  if (await hooks.isCancelled?.()) throw new RobustnessCancelled()
}

/** An engine refusal's message, or the error itself when it is not an engine refusal. */
export function refusal(e: unknown, isEngineError: (e: unknown) => boolean): string {
  if (!isEngineError(e)) throw e
  return (e as Error).message
}
