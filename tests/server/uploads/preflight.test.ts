/**
 * Checks made before parsing (preflight.ts), on files built here whose answer is known by
 * construction: what a file is by its bytes, the zip directory limits (parts, unpacked size,
 * packing ratio, a directory that understates), encodings, and the one-pass CSV limits.
 */
import { deflateRawSync } from 'node:zlib'
import { describe, expect, it } from 'vitest'
import { checkZipDirectory, decodeText, scanCsv, sniff, verifyZipParts } from '~~/server/services/uploads/preflight'
import { MAX_CELL_CHARS, MAX_COLUMNS, MAX_XLSX_PART_BYTES } from '~~/server/services/uploads/limits'
import { UploadError } from '~~/server/services/uploads/uploadError'
import { zip } from '../../fixtures/malformed/make'

function refusal(fn: () => unknown): UploadError {
  try {
    fn()
  }
  catch (e) {
    if (e instanceof UploadError) return e
    throw e
  }
  throw new Error('not refused')
}

const workbookXml = { name: 'xl/workbook.xml', data: Buffer.from('<workbook/>') }

describe('sniff', () => {
  it('judges by content and names renamed files', () => {
    expect(sniff(zip([workbookXml]), 'data.csv')).toBe('xlsx')
    expect(sniff(Buffer.from('a,b\n'), 'data.csv')).toBe('csv')
    expect(refusal(() => sniff(Buffer.from('a,b\n'), 'data.xlsx')).message).toMatch(/named as a workbook but is not one/)
    expect(refusal(() => sniff(Buffer.from([0xD0, 0xCF, 0x11, 0xE0, 0xA1, 0xB1, 0x1A, 0xE1, 0]), 'x.xls')).message).toMatch(/old-style Excel/)
    expect(refusal(() => sniff(Buffer.alloc(0), 'x.csv')).message).toMatch(/empty \(0 bytes\)/)
  })
})

describe('zip directory', () => {
  it('passes an ordinary workbook and lists its parts', () => {
    const entries = checkZipDirectory(zip([workbookXml, { name: 'xl/worksheets/sheet1.xml', data: Buffer.from('<sheetData/>') }]))
    expect(entries.map(e => e.name)).toEqual(['xl/workbook.xml', 'xl/worksheets/sheet1.xml'])
  })

  it('refuses a part packed more than 100 to 1 (a zip bomb) with 413, unpacking nothing', () => {
    const e = refusal(() => checkZipDirectory(zip([workbookXml, { name: 'xl/worksheets/sheet1.xml', data: Buffer.alloc(8 * 1024 * 1024, 'a') }])))
    expect(e.statusCode).toBe(413)
    expect(e.message).toMatch(/unpacks \d+ times larger than it is stored \(8\.0 MB\)/)
  })

  it('refuses a part declared over the part limit', () => {
    const e = refusal(() => checkZipDirectory(zip([workbookXml, { name: 'xl/worksheets/sheet1.xml', data: Buffer.from('x'), declaredSize: MAX_XLSX_PART_BYTES + 1 }])))
    expect(e.statusCode).toBe(413)
    expect(e.message).toMatch(/one part may hold at most 64\.0 MB/)
  })

  it('refuses a zip that is not a workbook and a cut-off zip', () => {
    expect(refusal(() => checkZipDirectory(zip([{ name: 'a.txt', data: Buffer.from('a') }]))).message).toMatch(/not an XLSX workbook/)
    const whole = zip([workbookXml])
    expect(refusal(() => checkZipDirectory(whole.subarray(0, whole.length - 10))).message).toMatch(/zip directory cannot be read/)
  })

  it('catches a directory that understates a part when unpacking with a ceiling', () => {
    const data = Buffer.alloc(2 * 1024 * 1024, 'b')
    const file = zip([workbookXml, { name: 'xl/worksheets/sheet1.xml', data, declaredSize: deflateRawSync(data).length * 2 }])
    const entries = checkZipDirectory(file)
    const e = refusal(() => verifyZipParts(file, entries))
    expect(e.statusCode).toBe(413)
    expect(e.message).toMatch(/unpacks to more than its directory says/)
  })
})

describe('encodings', () => {
  it('reads UTF-8 with or without BOM, UTF-16 with BOM, and Windows-1252 with a note', () => {
    expect(decodeText(Buffer.from('\uFEFFa,b')).text).toBe('a,b')
    expect(decodeText(Buffer.concat([Buffer.from([0xFF, 0xFE]), Buffer.from('é,b', 'utf16le')])).text).toBe('é,b')
    const latin = decodeText(Buffer.from('Montaña', 'latin1'))
    expect(latin).toMatchObject({ text: 'Montaña', encoding: 'windows-1252' })
    expect(latin.notes[0]).toMatch(/not UTF-8/)
    expect(refusal(() => decodeText(Buffer.from('a,\u0000b'))).message).toMatch(/NUL bytes \(the first at byte 3\)/)
  })
})

describe('one pass over CSV text', () => {
  it('stops at the column limit with 413', () => {
    const e = refusal(() => scanCsv(`${'a,'.repeat(MAX_COLUMNS)}a\n`))
    expect(e.statusCode).toBe(413)
    expect(e.message).toMatch(/Row 1 has more than 10,000 columns/)
  })

  it('stops at a cell over the length limit, naming its row, however the cell is quoted', () => {
    expect(refusal(() => scanCsv(`a,b\n1,2\n3,${'x'.repeat(MAX_CELL_CHARS + 1)}\n`)).message).toMatch(/A cell in row 3 is longer than 1,000 characters/)
    expect(refusal(() => scanCsv(`a,b\n1,"${'y\n'.repeat(MAX_CELL_CHARS)}"\n`)).message).toMatch(/row 2 is longer/)
  })

  it('takes a quote inside a field as text, as CSV readers do, so a stray inch mark opens nothing', () => {
    const rows = Array.from({ length: 400 }, (_, i) => `Town ${i},2020-01,${i}`).join('\n')
    expect(() => scanCsv(`name,month,v\nPipe 5" wide,2020-01,1\n${rows}\n`)).not.toThrow()
    expect(() => scanCsv(`a,b\n"x ""quoted"" word",1\n${rows}\n`)).not.toThrow()
    expect(refusal(() => scanCsv(`a,b\n"open,1\n${rows}\n`)).message).toMatch(/Is a quote left open\?/)
  })

  it('lets a long line of ordinary cells and quoted line breaks through', () => {
    expect(() => scanCsv(`${Array.from({ length: 500 }, (_, i) => `col${i}`).join(';')}\n"a\nb";2\n`)).not.toThrow()
  })
})
