/** Archiving registry entries (measures, sources, jurisdictions): the request body and the lists' filter. */
import { z } from 'zod'

export const archiveSchema = z.strictObject({
  archived: z.boolean({ message: 'archived is true (archive it) or false (bring it back).' }),
})
export type ArchiveBody = z.input<typeof archiveSchema>

/** ?archived=include lists archived entries too (registry pages); without it pickers get only current ones. */
export const registryListQuerySchema = z.object({
  archived: z.enum(['include', 'only'], { message: 'archived is "include" or "only".' }).optional(),
})
export type RegistryListQuery = z.output<typeof registryListQuerySchema>
