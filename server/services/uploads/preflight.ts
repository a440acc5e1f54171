/**
 * Checks made on an uploaded file before it is parsed, each refusing at the first limit
 * (limits.ts) with a message a person understands:
 * - what the file is by its content (a workbook, text, an old .xls, a PDF, a renamed file);
 * - a workbook's zip directory: the number of parts, each part's unpacked size, the total,
 *   and the packing ratio (a "zip bomb" is refused from the directory alone), then each part
 *   is unpacked with a ceiling at its declared size, so a directory that lies is caught too;
 * - the text encoding of a CSV (UTF-8 with or without BOM, UTF-16 with BOM, otherwise
 *   Windows-1252 with a warning; NUL bytes are refused);
 * - one pass over the CSV text counting rows, columns and cell length.
 * Pure (node:zlib only; relative imports so tsx and the upload thread run it too).
 */
import { inflateRawSync } from 'node:zlib'
import {
  clip, countText, MAX_CELL_CHARS, MAX_COLUMNS, MAX_ROWS, MAX_XLSX_PART_BYTES, MAX_XLSX_PARTS,
  MAX_XLSX_RATIO, MAX_XLSX_UNPACKED_BYTES, RATIO_FLOOR_BYTES,
} from './limits'
import { UploadError } from './uploadError'

const mb = (n: number) => `${(n / 1024 / 1024).toFixed(1)} MB`

function refuse(message: string, problem: string, statusCode = 400): never {
  throw new UploadError(message, [{ row: null, column: null, problem }], statusCode)
}

const ZIP = [0x50, 0x4B, 0x03, 0x04]
const ZIP_EMPTY = [0x50, 0x4B, 0x05, 0x06]
const OLE = [0xD0, 0xCF, 0x11, 0xE0, 0xA1, 0xB1, 0x1A, 0xE1]
const startsWith = (file: Uint8Array, magic: number[]) => magic.every((b, i) => file[i] === b)

export type FileKind = 'xlsx' | 'csv'

/** What the file holds, judged by its first bytes; the name only sharpens the message. */
export function sniff(file: Uint8Array, fileName: string): FileKind {
  const shown = clip(fileName)
  if (file.length === 0) refuse(`The file "${shown}" is empty (0 bytes).`, 'The file is empty (0 bytes).')
  if (startsWith(file, ZIP) || startsWith(file, ZIP_EMPTY)) return 'xlsx'
  if (startsWith(file, OLE)) {
    refuse(`"${shown}" is an old-style Excel (.xls) or other Office file; save it as .xlsx or CSV and upload that.`, 'An old-style .xls file: save it as .xlsx or CSV.')
  }
  if (startsWith(file, [0x25, 0x50, 0x44, 0x46])) refuse(`"${shown}" is a PDF; upload the table as CSV or XLSX.`, 'A PDF, not a table.')
  if (/\.xls[xm]$/i.test(fileName)) {
    refuse(`"${shown}" is named as a workbook but is not one (it holds plain text); if it is CSV, rename it to .csv, or save it from the spreadsheet as .xlsx again.`, 'Named .xlsx but not a workbook.')
  }
  return 'csv'
}

export interface ZipEntry { name: string, method: number, packed: number, unpacked: number, localOffset: number }

function findEndOfDirectory(file: Buffer): number {
  const stop = Math.max(0, file.length - 22 - 65_535)
  for (let i = file.length - 22; i >= stop; i--) {
    if (file.readUInt32LE(i) === 0x06054B50) return i
  }
  return -1
}

/**
 * Reads the workbook's zip directory (never unpacking anything) and refuses a workbook whose
 * parts would unpack past the limits. Returns the parts, for verifyZipParts().
 */
export function checkZipDirectory(file: Buffer): ZipEntry[] {
  const unreadable = () => refuse('The file starts like an XLSX workbook but its zip directory cannot be read (a damaged or cut-off file?). Save it again from the spreadsheet.', 'Not a readable XLSX workbook (damaged zip).')
  const eocd = findEndOfDirectory(file)
  if (eocd < 0) unreadable()
  let count = file.readUInt16LE(eocd + 10)
  let size = file.readUInt32LE(eocd + 12)
  let offset = file.readUInt32LE(eocd + 16)
  if (count === 0xFFFF || size === 0xFFFFFFFF || offset === 0xFFFFFFFF) {
    const locator = eocd - 20
    if (locator < 0 || file.readUInt32LE(locator) !== 0x07064B50) unreadable()
    const z64 = Number(file.readBigUInt64LE(locator + 8))
    if (z64 + 56 > file.length || file.readUInt32LE(z64) !== 0x06064B50) unreadable()
    count = Number(file.readBigUInt64LE(z64 + 32))
    size = Number(file.readBigUInt64LE(z64 + 40))
    offset = Number(file.readBigUInt64LE(z64 + 48))
  }
  if (count === 0) refuse('The workbook is empty: its zip archive holds no parts.', 'The workbook holds no sheets.')
  if (count > MAX_XLSX_PARTS) refuse(`The workbook has ${countText(count)} parts; at most ${countText(MAX_XLSX_PARTS)} are read. Save the data sheet on its own.`, `Over ${countText(MAX_XLSX_PARTS)} parts.`, 413)
  if (offset + size > file.length) unreadable()

  const entries: ZipEntry[] = []
  let total = 0
  let p = offset
  for (let k = 0; k < count; k++) {
    if (p + 46 > file.length || file.readUInt32LE(p) !== 0x02014B50) unreadable()
    const method = file.readUInt16LE(p + 10)
    let packed = file.readUInt32LE(p + 20)
    let unpacked = file.readUInt32LE(p + 24)
    const nameLength = file.readUInt16LE(p + 28)
    const extraLength = file.readUInt16LE(p + 30)
    const commentLength = file.readUInt16LE(p + 32)
    let localOffset = file.readUInt32LE(p + 42)
    const name = file.toString('utf8', p + 46, Math.min(file.length, p + 46 + nameLength))
    // ZIP64 sizes live in the extra field (id 1), in this order, for the fields set to 0xFFFFFFFF.
    let e = p + 46 + nameLength
    const extraEnd = e + extraLength
    while (e + 4 <= extraEnd && e + 4 <= file.length) {
      const id = file.readUInt16LE(e)
      const len = file.readUInt16LE(e + 2)
      if (id === 1) {
        let q = e + 4
        if (unpacked === 0xFFFFFFFF && q + 8 <= e + 4 + len) { unpacked = Number(file.readBigUInt64LE(q)); q += 8 }
        if (packed === 0xFFFFFFFF && q + 8 <= e + 4 + len) { packed = Number(file.readBigUInt64LE(q)); q += 8 }
        if (localOffset === 0xFFFFFFFF && q + 8 <= e + 4 + len) localOffset = Number(file.readBigUInt64LE(q))
      }
      e += 4 + len
    }
    p = extraEnd + commentLength
    total += unpacked
    const part = clip(name)
    if (unpacked > MAX_XLSX_PART_BYTES) {
      refuse(`The workbook's part "${part}" unpacks to ${mb(unpacked)}; one part may hold at most ${mb(MAX_XLSX_PART_BYTES)}. Split the sheet (by years or by measures) or upload it as CSV.`, `Part "${part}" unpacks to ${mb(unpacked)}.`, 413)
    }
    if (unpacked > RATIO_FLOOR_BYTES && unpacked > MAX_XLSX_RATIO * Math.max(packed, 1)) {
      refuse(`The workbook's part "${part}" unpacks ${Math.round(unpacked / Math.max(packed, 1))} times larger than it is stored (${mb(unpacked)}); spreadsheets pack far less than ${MAX_XLSX_RATIO} to 1, so it was not opened. Save the data again from the spreadsheet or upload it as CSV.`, `Part "${part}" packs more than ${MAX_XLSX_RATIO} to 1.`, 413)
    }
    if (total > MAX_XLSX_UNPACKED_BYTES) {
      refuse(`The workbook unpacks to more than ${mb(MAX_XLSX_UNPACKED_BYTES)}; split it (by years or by measures) or upload it as CSV.`, `Unpacks to over ${mb(MAX_XLSX_UNPACKED_BYTES)}.`, 413)
    }
    entries.push({ name, method, packed, unpacked, localOffset })
  }
  if (!entries.some(en => /^xl\/workbook\.xml$/i.test(en.name))) {
    refuse('The file is a zip archive but not an XLSX workbook (it has no xl/workbook.xml). Upload the workbook itself, or its sheet saved as CSV.', 'A zip archive, not an XLSX workbook.')
  }
  return entries
}

/**
 * Unpacks every deflated part with a ceiling at the size the directory declares: a part that
 * would unpack to more is refused before the workbook reader ever sees it.
 */
export function verifyZipParts(file: Buffer, entries: ZipEntry[]): void {
  for (const en of entries) {
    if (en.method !== 8 || en.localOffset + 30 > file.length) continue
    if (file.readUInt32LE(en.localOffset) !== 0x04034B50) continue
    const start = en.localOffset + 30 + file.readUInt16LE(en.localOffset + 26) + file.readUInt16LE(en.localOffset + 28)
    const data = file.subarray(start, Math.min(file.length, start + en.packed))
    try {
      inflateRawSync(data, { maxOutputLength: Math.max(1, en.unpacked) })
    }
    catch (e) {
      if ((e as NodeJS.ErrnoException).code === 'ERR_BUFFER_TOO_LARGE' || e instanceof RangeError) {
        refuse(`The workbook's part "${clip(en.name)}" unpacks to more than its directory says (${mb(en.unpacked)}); the file was not opened.`, `Part "${clip(en.name)}" unpacks past its declared size.`, 413)
      }
      refuse(`The workbook's part "${clip(en.name)}" is damaged and cannot be unpacked. Save the workbook again from the spreadsheet.`, 'A damaged XLSX part.')
    }
  }
}

export interface DecodedText { text: string, encoding: 'utf-8' | 'utf-16le' | 'utf-16be' | 'windows-1252', notes: string[] }

/** The text of a CSV: UTF-8 (a BOM is dropped), UTF-16 with a BOM, or Windows-1252 (noted). */
export function decodeText(file: Buffer): DecodedText {
  if (file[0] === 0xFF && file[1] === 0xFE) return { text: new TextDecoder('utf-16le').decode(file.subarray(2)), encoding: 'utf-16le', notes: [] }
  if (file[0] === 0xFE && file[1] === 0xFF) return { text: new TextDecoder('utf-16be').decode(file.subarray(2)), encoding: 'utf-16be', notes: [] }
  const nul = file.indexOf(0)
  if (nul >= 0) {
    refuse(`The file holds NUL bytes (the first at byte ${countText(nul + 1)}): it is a binary file or text in an encoding without a byte-order mark (UTF-16?). Save it as CSV in UTF-8.`, 'NUL bytes in the file.')
  }
  const body = file[0] === 0xEF && file[1] === 0xBB && file[2] === 0xBF ? file.subarray(3) : file
  try {
    return { text: new TextDecoder('utf-8', { fatal: true }).decode(body), encoding: 'utf-8', notes: [] }
  }
  catch {
    return {
      text: new TextDecoder('windows-1252').decode(body),
      encoding: 'windows-1252',
      notes: ['The file is not UTF-8; it was read as Windows-1252 (Latin-1). Check that accented names read correctly, or save the file as CSV in UTF-8.'],
    }
  }
}

const CANDIDATES = [',', ';', '\t', '|']

/** The delimiter the header most probably uses (outside quotes), for counting columns. */
function headerDelimiter(text: string): string {
  const counts = new Map(CANDIDATES.map(d => [d, 0]))
  let quoted = false
  for (let i = 0; i < text.length && i < 1_048_576; i++) {
    const ch = text[i]!
    if (ch === '"') quoted = !quoted
    else if (!quoted && (ch === '\n' || ch === '\r')) {
      if ([...counts.values()].some(n => n > 0)) break
    }
    else if (!quoted && counts.has(ch)) counts.set(ch, counts.get(ch)! + 1)
  }
  let best = ','
  for (const d of CANDIDATES) if (counts.get(d)! > counts.get(best)!) best = d
  return best
}

/**
 * One pass over CSV text, stopping at the first row, column or cell-length limit. A cell's
 * length is counted between any two candidate delimiters (so a long cell is never refused
 * for a delimiter the file does not use); columns are counted with the file's delimiter.
 */
export function scanCsv(text: string, delimiter?: string): void {
  const sep = delimiter && delimiter !== 'auto' ? delimiter : headerDelimiter(text)
  const sepCode = sep.charCodeAt(0)
  // Candidate delimiters by character code (all below 128): a table lookup per character.
  const isSep = new Uint8Array(128)
  for (const d of [...CANDIDATES, sep]) isSep[d.charCodeAt(0)] = 1
  let quoted = false
  let fieldStart = true
  let cell = 0
  let columns = 1
  let line = 1
  let records = 0
  let lineHasData = false
  for (let i = 0; i < text.length; i++) {
    const ch = text.charCodeAt(i)
    if (quoted) {
      // Inside quotes: "" is a quote, a lone " closes the field's quoted part; all else is text.
      if (ch === 34) {
        if (text.charCodeAt(i + 1) === 34) i++
        else {
          quoted = false
          continue
        }
      }
    }
    else if (ch === 34 && fieldStart) { // a quote opens a field only at its start, as CSV readers take it
      quoted = true
      fieldStart = false
      lineHasData = true
      continue
    }
    else if (ch === 10 || ch === 13) {
      if (ch === 13 && text.charCodeAt(i + 1) === 10) i++
      if (lineHasData) records++
      if (records > MAX_ROWS + 1) {
        refuse(`The file has more than ${countText(MAX_ROWS)} rows; split it (by years or by measures) and upload the parts one after another.`, `Over ${countText(MAX_ROWS)} rows.`, 413)
      }
      line++
      cell = 0
      columns = 1
      fieldStart = true
      lineHasData = false
      continue
    }
    else if (ch < 128 && isSep[ch] === 1) {
      if (ch === sepCode && ++columns > MAX_COLUMNS) {
        refuse(`Row ${countText(line)} has more than ${countText(MAX_COLUMNS)} columns; at most ${countText(MAX_COLUMNS)} are read. Is it a table, and is the delimiter right?`, `Row ${countText(line)}: over ${countText(MAX_COLUMNS)} columns.`, 413)
      }
      cell = 0
      fieldStart = true
      lineHasData = true
      continue
    }
    fieldStart = false
    lineHasData = true
    if (++cell > MAX_CELL_CHARS) {
      refuse(`A cell in row ${countText(line)} is longer than ${countText(MAX_CELL_CHARS)} characters (it starts "${clip(cellStart(text, i))}"); a cell holds a code, a period or a number.${quoted ? ' Is a quote left open?' : ''}`, `Row ${countText(line)}: a cell over ${countText(MAX_CELL_CHARS)} characters.`)
    }
  }
}

function cellStart(text: string, at: number): string {
  return text.slice(Math.max(0, at - MAX_CELL_CHARS + 1), at - MAX_CELL_CHARS + 41).replace(/\s+/g, ' ')
}
