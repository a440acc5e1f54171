/** Number formatting for the study workspace: significant digits, a dash for missing. Auto-imported. */
export function fmtNum(v: number | null | undefined, digits = 3): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return '–'
  if (v !== 0 && (Math.abs(v) >= 1e6 || Math.abs(v) < 1e-4)) return v.toExponential(2)
  return Number(v.toPrecision(digits)).toLocaleString('en', { maximumSignificantDigits: digits })
}

export function fmtPv(p: number | null | undefined): string {
  if (p === null || p === undefined || !Number.isFinite(p)) return '–'
  return p < 0.001 ? '< 0.001' : p.toFixed(3)
}

export function fmtPct(v: number | null | undefined): string {
  return v === null || v === undefined ? '–' : `${Math.round(v * 100)}%`
}

/** "p = 0.042" or "p < 0.001". */
export function fmtPText(p: number | null | undefined): string {
  const s = fmtPv(p)
  return s.startsWith('<') ? `p ${s}` : `p = ${s}`
}
