/**
 * Formula injection guard for exported text (workbook cells, CSV fields): text that starts
 * with = + - @ (or a tab or carriage return) gets a leading apostrophe, so a spreadsheet that
 * reads it as input never evaluates it. Everything else passes unchanged.
 */
const RISKY = /^[=+\-@\t\r]/

export function guardFormula(text: string): string {
  return RISKY.test(text) ? `'${text}` : text
}
