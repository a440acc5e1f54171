/**
 * Diffusion or spillover: did the policy reach the treated unit's neighbours? The neighbours
 * (units bordering a treated unit, among the pool and the candidates) are treated as if they
 * had adopted at the same start, against the distant donors (the pool without the neighbours)
 * as comparison, with the same simple estimator as history.ts:
 *
 *   neighbours' effect = did2x2(mean of the neighbours, mean of the distant donors, 0, nPre, T)
 *
 * and each distant donor in turn plays the treated one against the other distant donors
 * (placebo units): the placebo range is [min, max] of those effects.
 *
 * Verdict: "weakens" when the neighbours' effect has the same sign as the treated unit's
 * effect and lies beyond the placebo range (the policy seems to have reached them, so a pool
 * containing them understates the effect, and they are themselves treated); "supports" when
 * it lies within the range; "cannot tell" without neighbours or with fewer than 5 distant
 * donors. A neighbours' effect of the opposite sign beyond the range is reported as displacement
 * and gives "weakens" too (activity moved across the border).
 */
import type { ThreatEvidence } from '../../../shared/engine/threats'
import { did2x2, meanSeries, num } from './basics'

export interface DiffusionInput {
  periods: number
  nPre: number
  /** The treated unit's effect against the pool (history.ts's actual effect). */
  treatedEffect: number
  neighbours: { unit: string, values: ArrayLike<number> }[]
  distant: { unit: string, values: ArrayLike<number> }[]
}

export function neighbourEffect(x: DiffusionInput): { effect: number | null, placebos: { unit: string, effect: number }[] } {
  const T = x.periods
  const comparison = meanSeries(x.distant.map(d => d.values), T)
  const effect = x.neighbours.length && x.distant.length ? did2x2(meanSeries(x.neighbours.map(n => n.values), T), comparison, 0, x.nPre, T) : null
  const placebos = x.distant.length < 2
    ? []
    : x.distant.map((d, k) => ({ unit: d.unit, effect: did2x2(d.values, meanSeries(x.distant.filter((_, j) => j !== k).map(o => o.values), T), 0, x.nPre, T) })).filter(p => Number.isFinite(p.effect))
  return { effect: effect !== null && Number.isFinite(effect) ? effect : null, placebos }
}

export function diffusionEvidence(x: DiffusionInput): ThreatEvidence {
  const { effect, placebos } = neighbourEffect(x)
  const enough = effect !== null && placebos.length >= 5
  const lo = placebos.length ? Math.min(...placebos.map(p => p.effect)) : NaN
  const hi = placebos.length ? Math.max(...placebos.map(p => p.effect)) : NaN
  const beyond = enough && (effect! < lo || effect! > hi)
  const sameSign = enough && Math.sign(effect!) === Math.sign(x.treatedEffect) && effect !== 0
  const verdict = !enough ? 'unclear' : beyond ? 'weakens' : 'supports'
  const names = x.neighbours.map(n => n.unit)
  return {
    threat: 'diffusion',
    verdict,
    figure: !x.neighbours.length
      ? 'No neighbour of the treated unit has data in this study.'
      : !enough
        ? `${names.length} neighbour${names.length === 1 ? '' : 's'}, but only ${placebos.length} distant donor${placebos.length === 1 ? '' : 's'} to compare with.`
        : `The ${names.length} neighbour${names.length === 1 ? '' : 's'} (${names.slice(0, 6).join(', ')}${names.length > 6 ? ', …' : ''}) changed by ${num(effect!)} at the start against distant donors; ${placebos.length} distant donors as placebos range from ${num(lo)} to ${num(hi)}.`,
    explanation: !enough
      ? 'Spillover cannot be checked without neighbours and enough distant donors; judge it from what is known about the policy.'
      : beyond
        ? sameSign
          ? 'The neighbours moved in the same direction as the treated unit, beyond what distant donors show: the policy may have reached them. Keep them out of the pool, and read the estimate as a lower bound if any remain.'
          : 'The neighbours moved against the treated unit, beyond what distant donors show: activity may have moved across the border (displacement), which inflates the estimate.'
        : 'The neighbours moved no more than distant donors do at the start: no sign of spillover.',
    rule: 'Weakens when the neighbours\' effect (as if treated, against distant donors) lies outside the range of the distant donors\' placebo effects (same direction: spillover; opposite: displacement); supports inside; cannot tell without neighbours or with fewer than 5 distant donors.',
    figures: { neighbours: names.length, neighbourEffect: effect, placebos: placebos.length, placeboLow: Number.isFinite(lo) ? lo : null, placeboHigh: Number.isFinite(hi) ? hi : null },
    strip: enough ? { label: 'distant donor as placebo', values: placebos.map(p => p.effect), marked: effect, markedLabel: 'neighbours as if treated' } : null,
    link: { step: 'pool', anchor: 'candidates', label: 'Neighbour flags on the Pool step' },
  }
}
