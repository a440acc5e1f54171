/** SHA-256 of a file, as hex: the checksum kept with every release. */
import { createHash } from 'node:crypto'

export function checksumOf(file: Buffer): string {
  return createHash('sha256').update(file).digest('hex')
}
