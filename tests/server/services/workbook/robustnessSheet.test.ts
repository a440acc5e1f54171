/**
 * The workbook's Robustness sheet: rows built from real engine results on the invented panel
 * of tests/engine/robustness/panel.ts (answers known by construction), read back with exceljs.
 */
import ExcelJS from 'exceljs'
import { PassThrough } from 'node:stream'
import { describe, expect, it } from 'vitest'
import { leaveOneOut, placeboInTime, alternativePools } from '../../../../server/engine/robustness'
import { robustnessRows, robustnessSheet, type WorkbookRobustness } from '../../../../server/services/workbook/robustnessSheet'
import { rows, spec } from '../../../engine/robustness/panel'

async function checks(): Promise<WorkbookRobustness[]> {
  const at = new Date('2026-12-01T10:00:00Z')
  return [
    { id: 3, kind: 'placebo_time', fingerprint: 'a'.repeat(64), createdAt: at, result: await placeboInTime(rows, spec) },
    { id: 4, kind: 'leave_one_out', fingerprint: 'b'.repeat(64), createdAt: at, result: await leaveOneOut({ rows }, spec) },
    { id: 5, kind: 'pools', fingerprint: 'c'.repeat(64), createdAt: at, result: await alternativePools({ rows }, spec, [{ name: 'x', label: '=cmd|calc', units: ['B', 'D'] }]) },
  ]
}

describe('robustness sheet', () => {
  it('opens each check with its finding and lists every item with its estimate', async () => {
    const out = robustnessRows(await checks())
    const find = (check: string, row: string) => out.find(r => r[0] === check && r[1] === row)
    expect(find('Placebo in time', 'Finding')![5]).toMatch(/^2 fake start dates in the pre-period \(at least 3 periods from either end\): 0 of them \(0%\)/)
    // matched windows of 3 either side (the panel's construction): fake 2004 gives 1, the actual 10/3
    expect(find('Placebo in time', 'Fake start 2004')![2]).toBeCloseTo(1, 10)
    expect(find('Placebo in time', 'Actual start 2008')![2]).toBeCloseTo(10 / 3, 10)
    expect(find('Leave one donor out', 'Without C')![2]).toBeCloseTo(32 / 7, 10)
    expect(find('Leave one donor out', 'Without C')![5]).toMatch(/move it most/)
    expect(find('Alternative pools', '=cmd|calc (2 jurisdictions)')![2]).toBeCloseTo(32 / 7, 10)
    expect(out.filter(r => r[0] === 'Caution').length).toBe(3)
    expect(robustnessRows([])[0]![1]).toMatch(/No robustness check/)
  })

  it('writes text never as a formula', async () => {
    const stream = new PassThrough()
    const chunks: Buffer[] = []
    stream.on('data', (c: Buffer) => chunks.push(c))
    const ended = new Promise(r => stream.on('end', r))
    const wb = new ExcelJS.stream.xlsx.WorkbookWriter({ stream, useStyles: true, useSharedStrings: false })
    robustnessSheet(wb, await checks()).commit()
    await wb.commit()
    await ended
    const back = new ExcelJS.Workbook()
    await back.xlsx.load(Buffer.concat(chunks))
    const ws = back.getWorksheet('Robustness')!
    expect(ws.getRow(1).values).toEqual([undefined, 'Check', 'Row', 'Estimate', 'Interval low', 'Interval high', 'Note'])
    let pool: ExcelJS.Row | undefined
    ws.eachRow(r => { if (String(r.getCell(2).value).includes('cmd|calc')) pool = r })
    expect(pool!.getCell(2).value).toBe('\'=cmd|calc (2 jurisdictions)')
    expect(pool!.getCell(2).type).toBe(ExcelJS.ValueType.String)
  })
})
