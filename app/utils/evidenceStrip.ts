/**
 * Layout of the small strip chart beside a threat's evidence: each comparison value as a dot
 * on one horizontal scale, the study's own value as a tall mark, in SVG coordinates. Pure.
 */
import type { EvidenceStrip } from '#shared/engine/threats'

export interface StripLayout {
  dots: { x: number, y: number }[]
  mark: number | null
  zero: number | null
  min: number
  max: number
}

/** width in SVG units; dots at the same x are stacked by a small vertical jitter (by rank, not random). */
export function stripLayout(strip: EvidenceStrip, width = 240, pad = 8, mid = 18): StripLayout {
  const all = [...strip.values, ...(strip.marked !== null ? [strip.marked] : [])].filter(Number.isFinite)
  let min = all.length ? Math.min(...all) : 0
  let max = all.length ? Math.max(...all) : 1
  if (min === max) {
    min -= 1
    max += 1
  }
  const x = (v: number) => pad + ((v - min) / (max - min)) * (width - 2 * pad)
  const dots = strip.values.filter(Number.isFinite).map((v, i) => ({ x: x(v), y: mid + ((i % 5) - 2) * 3 }))
  return { dots, mark: strip.marked !== null && Number.isFinite(strip.marked) ? x(strip.marked) : null, zero: min < 0 && max > 0 ? x(0) : null, min, max }
}

export const VERDICT_CLASS: Record<string, string> = {
  supports: 'bg-tide-light text-tide-dark',
  weakens: 'bg-flag-light text-flag',
  unclear: 'bg-paper-deep text-ink-soft',
}
