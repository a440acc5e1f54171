/**
 * The navigation: only screens that work are listed. Each item says which roles see it;
 * the server checks every route on its own, this list only decides what is shown.
 */
export type RoleName = 'admin' | 'analyst' | 'reviewer'

export interface NavItem { label: string, to: string, roles: readonly RoleName[] }
export interface NavSection { title: string, items: NavItem[] }

const everyone = ['admin', 'analyst', 'reviewer'] as const

export const NAVIGATION: NavSection[] = [
  { title: 'Work', items: [{ label: 'Overview', to: '/', roles: everyone }, { label: 'Studies', to: '/studies', roles: everyone }] },
  {
    title: 'Data',
    items: [
      { label: 'Jurisdictions', to: '/data/jurisdictions', roles: everyone },
      { label: 'Sources & uploads', to: '/data/sources', roles: everyone },
      { label: 'Measures', to: '/data/measures', roles: everyone },
      { label: 'Policy events', to: '/data/policy-events', roles: everyone },
      { label: 'Panel browser', to: '/data/panel', roles: everyone },
    ],
  },
  {
    title: 'Administration',
    items: [
      { label: 'People & access', to: '/admin/users', roles: ['admin'] },
      { label: 'Mail outbox', to: '/admin/outbox', roles: ['admin'] },
      { label: 'Audit log', to: '/admin/audit', roles: ['admin'] },
    ],
  },
]

export function navigationFor(role: RoleName | undefined): NavSection[] {
  if (!role) return []
  return NAVIGATION
    .map(section => ({ ...section, items: section.items.filter(item => item.roles.includes(role)) }))
    .filter(section => section.items.length > 0)
}

export const ROLE_LABELS: Record<RoleName, string> = {
  admin: 'Administrator',
  analyst: 'Analyst',
  reviewer: 'Reviewer',
}
