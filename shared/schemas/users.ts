import { z } from 'zod'
import { idParams } from './ids'

export const roleSchema = z.enum(['admin', 'analyst', 'reviewer'])
export type RoleName = z.infer<typeof roleSchema>

const email = z.string().trim().toLowerCase().pipe(z.email({ message: 'Enter a valid e-mail address.' }))
const name = z.string().trim().min(1, 'Enter a name.').max(120)
export const passwordSchema = z.string().min(10, 'Use at least 10 characters.').max(200)

export const userCreateSchema = z.strictObject({ email, name, role: roleSchema, password: passwordSchema })
export const userPatchSchema = z.strictObject({
  name: name.optional(),
  role: roleSchema.optional(),
  active: z.boolean().optional(),
}).refine(v => Object.keys(v).length > 0, { message: 'Nothing to change.' })

export const invitationCreateSchema = z.strictObject({ email, name, role: roleSchema })
export const invitationAcceptSchema = z.strictObject({ password: passwordSchema })

export const idParamSchema = idParams('id')
export const tokenParamSchema = z.object({ token: z.string().regex(/^[\w-]{20,100}$/, 'This invitation link is not valid.') })
