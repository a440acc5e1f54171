/**
 * Heteroskedasticity- and autocorrelation-consistent covariance of Newey and West (1987,
 * Econometrica 55:703-708) for one time series with rows in time order:
 *
 *   S = sum_t u_t^2 x_t x_t' + sum_{j=1..L} w_j sum_t u_t u_{t-j} (x_t x_{t-j}' + x_{t-j} x_t')
 *   w_j = 1 - j/(L+1) (Bartlett kernel),   V = (X'X)^-1 S (X'X)^-1
 *
 * with no N/(N-K) factor; t tests use N-K degrees of freedom. Lag 0 gives White's (1980)
 * heteroskedasticity-consistent HC0 meat; HC1 multiplies HC0 by N/(N-K) (MacKinnon and
 * White 1985).
 *
 * Throws EngineError 'invalid_input' for a negative or non-integer lag.
 */
import { Matrix } from 'ml-matrix'
import { EngineError } from './errors'

export function neweyWestMeat(columns: Float64Array[], residuals: Float64Array, lag: number): Matrix {
  if (!Number.isInteger(lag) || lag < 0) throw new EngineError('invalid_input', `neweyWest: lag must be a whole number >= 0, got ${lag}`)
  const k = columns.length
  const n = residuals.length
  // scores h_t = x_t u_t, row-major n x k
  const h = new Float64Array(n * k)
  for (let j = 0; j < k; j++) {
    const col = columns[j]
    for (let t = 0; t < n; t++) h[t * k + j] = col[t] * residuals[t]
  }
  const meat = new Matrix(k, k)
  const maxLag = Math.min(lag, n - 1)
  for (let l = 0; l <= maxLag; l++) {
    const w = l === 0 ? 1 : 1 - l / (lag + 1)
    for (let a = 0; a < k; a++) {
      for (let b = 0; b < k; b++) {
        let s = 0
        for (let t = l; t < n; t++) s += h[t * k + a] * h[(t - l) * k + b]
        if (l === 0) meat.set(a, b, meat.get(a, b) + s)
        else {
          meat.set(a, b, meat.get(a, b) + w * s)
          meat.set(b, a, meat.get(b, a) + w * s)
        }
      }
    }
  }
  return meat
}
