/**
 * Named middleware for pages that need a role: definePageMeta({ middleware: 'role', roles: ['admin'] }).
 * Shows the refusal screen (error page with 403) to signed-in users without the role.
 */
import type { RoleName } from '~/utils/navigation'

declare module '#app' {
  interface PageMeta { roles?: RoleName[] }
}

export default defineNuxtRouteMiddleware((to) => {
  const roles = to.meta.roles
  if (!roles?.length) return
  const { data } = useAuth()
  const role = (data.value?.user as { role?: RoleName } | undefined)?.role
  if (!role || !roles.includes(role)) {
    return abortNavigation(createError({
      statusCode: 403,
      statusMessage: 'Not available to your role',
      message: `This screen is for the ${roles.join(' or ')} role. You are signed in as ${role ?? 'nobody'}.`,
      fatal: false,
    }))
  }
})
