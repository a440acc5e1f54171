import type { RoleName } from './navigation'

declare module '#app' {
  interface PageMeta {
    /** Roles that may open this page; others see the refusal screen (the server refuses their calls anyway). */
    roles?: RoleName[]
  }
}

/** Whether a signed-in role may open a page that declares `roles` in its page meta. */
export function roleMayOpen(roles: readonly RoleName[] | undefined, role: RoleName | undefined): boolean {
  return !roles?.length || (!!role && roles.includes(role))
}
