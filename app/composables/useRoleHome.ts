import type { Role } from '#shared/types/auth'

export const NAV: { to: string, label: string, roles: Role[] }[] = [
  { to: '/organiser', label: 'Overview', roles: ['organiser'] },
  { to: '/build-days', label: 'Build days', roles: ['organiser'] },
  { to: '/kits', label: 'Kits', roles: ['organiser'] },
  { to: '/parts', label: 'Parts', roles: ['organiser', 'packer'] },
  { to: '/stock', label: 'Stock', roles: ['organiser'] },
  { to: '/reconcile', label: 'Reconcile', roles: ['organiser'] },
  { to: '/pricing', label: 'Pricing', roles: ['organiser'] },
  { to: '/orders', label: 'Orders', roles: ['organiser'] },
  { to: '/pack', label: 'Packing', roles: ['packer', 'organiser'] },
  { to: '/spares', label: 'Spares desk', roles: ['organiser', 'packer'] },
  { to: '/collect', label: 'Collection', roles: ['organiser', 'packer'] },
  { to: '/rework', label: 'Rework', roles: ['organiser'] },
  { to: '/people', label: 'People', roles: ['organiser'] },
  { to: '/my', label: 'My kit', roles: ['builder'] },
  { to: '/shop', label: 'Buy a kit', roles: ['builder'] },
]

/** Where a person lands after signing in: the first of their roles in this order. */
export function roleHome(roles: readonly Role[] = []) {
  if (roles.includes('organiser')) return '/organiser'
  if (roles.includes('packer')) return '/pack'
  return '/my'
}
