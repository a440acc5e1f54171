/**
 * Multipart uploads with a size limit (runtimeConfig.uploadLimitBytes): the body is read
 * in chunks and refused with 413 as soon as it passes the limit, before it is all in memory.
 *   const { file, fileName, fields } = await readUpload(event)
 */
import type { H3Event } from 'h3'

const MULTIPART_OVERHEAD = 64 * 1024

export function uploadLimitBytes(): number {
  return Number(useRuntimeConfig().uploadLimitBytes)
}

export function formatBytes(n: number): string {
  if (n < 1024) return `${n} bytes`
  if (n < 1024 * 1024) return `${(n / 1024).toFixed(1)} KB`
  return `${(n / 1024 / 1024).toFixed(1)} MB`
}

function tooLarge(size: number | null, limit: number): never {
  throw createError({
    statusCode: 413,
    statusMessage: 'Payload Too Large',
    message: `${size == null ? 'The file is' : `The file is ${formatBytes(size)};`} over the upload limit of ${formatBytes(limit)}. Split it (by years or by measures) and upload the parts one after another.`,
    data: { errors: [{ row: null, column: null, problem: `Over the upload limit of ${formatBytes(limit)}.` }], limitBytes: limit },
  })
}

export interface Upload { file: Buffer, fileName: string, fields: Record<string, string> }

export async function readUpload(event: H3Event, { requireFile = true } = {}): Promise<Upload> {
  const limit = uploadLimitBytes()
  const type = getRequestHeader(event, 'content-type') ?? ''
  if (!type.startsWith('multipart/form-data')) badRequest('Send the file as multipart/form-data with a "file" field.')
  const declared = Number(getRequestHeader(event, 'content-length') ?? Number.NaN)
  if (Number.isFinite(declared) && declared > limit + MULTIPART_OVERHEAD) tooLarge(null, limit)

  const chunks: Buffer[] = []
  let size = 0
  for await (const chunk of event.node.req) {
    size += chunk.length
    if (size > limit + MULTIPART_OVERHEAD) {
      event.node.req.resume()
      tooLarge(null, limit)
    }
    chunks.push(chunk as Buffer)
  }
  let form: FormData
  try {
    form = await new Response(Buffer.concat(chunks), { headers: { 'content-type': type } }).formData()
  }
  catch {
    badRequest('The upload could not be read as multipart/form-data.')
  }
  const fields: Record<string, string> = {}
  let file: File | null = null
  for (const [name, value] of form.entries()) {
    if (typeof value === 'string') fields[name] = value
    else if (name === 'file') file = value
  }
  if (!file) {
    if (requireFile) {
      throw createError({ statusCode: 400, message: 'Choose a file to upload (the "file" field is missing).', data: { issues: [{ path: 'file', message: 'No file.' }], errors: [{ row: null, column: null, problem: 'No file.' }] } })
    }
    return { file: Buffer.alloc(0), fileName: '', fields }
  }
  if (file.size > limit) tooLarge(file.size, limit)
  return { file: Buffer.from(await file.arrayBuffer()), fileName: file.name || 'upload', fields }
}
