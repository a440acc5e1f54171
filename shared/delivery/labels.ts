/** Readable names for what delivery pages and the workbook show. */
import { DESIGN_LABELS } from '../schemas/studies'

/** The design's name as people read it (the key itself for a design without a label). */
export function designLabel(design: string): string {
  return (DESIGN_LABELS as Record<string, string>)[design] ?? design
}

/** The kinds of two-by-two comparison in the decomposition of a two-way estimate (Goodman-Bacon 2021). */
export const DECOMPOSITION_LABELS: Record<'treated_vs_never' | 'earlier_vs_later' | 'later_vs_earlier', string> = {
  treated_vs_never: 'Adopters against never-treated units',
  earlier_vs_later: 'Earlier adopters against later ones, before those start',
  later_vs_earlier: 'Later adopters against already-treated earlier ones',
}
