/** Readable names for what delivery pages and the workbook show. */
import { DESIGN_LABELS } from '../schemas/studies'

/** The design's name as people read it (the key itself for a design without a label). */
export function designLabel(design: string): string {
  return (DESIGN_LABELS as Record<string, string>)[design] ?? design
}
