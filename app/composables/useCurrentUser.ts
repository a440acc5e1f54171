import type { RoleName } from '~/utils/navigation'

export interface CurrentUser { id: number, email: string, name: string, role: RoleName }

/** The signed-in user from the session (role as at sign-in; the server re-checks on every call). */
export function useCurrentUser() {
  const { data, status, signOut } = useAuth()
  const user = computed<CurrentUser | null>(() => {
    const u = data.value?.user as Partial<CurrentUser> | undefined
    return u?.email ? (u as CurrentUser) : null
  })
  const hasRole = (...roles: RoleName[]) => !!user.value && roles.includes(user.value.role)
  return { user, status, hasRole, signOut: () => signOut({ callbackUrl: '/login' }) }
}
