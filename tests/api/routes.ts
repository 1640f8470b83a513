// The role matrix: every API route file has one entry here (role-matrix.test.ts fails otherwise).
// `file` is the path under server/api; `path` is a concrete URL to call; `roles` lists the roles that
// may call it ('public' = anyone, signed in or not). A role not listed must get 403; signed-out 401.
export type MatrixRole = 'public' | 'signed-in' | 'organiser' | 'packer' | 'builder'
export interface RouteEntry { file: string, method: string, path: string, roles: MatrixRole[], body?: unknown }

export const ROUTES: RouteEntry[] = [
  { file: 'health.get.ts', method: 'GET', path: '/api/health', roles: ['public'] },
  { file: '[...path].ts', method: 'GET', path: '/api/no-such-route', roles: ['public'] },
  { file: 'overview.get.ts', method: 'GET', path: '/api/overview', roles: ['organiser'] },
  { file: 'auth/login.post.ts', method: 'POST', path: '/api/auth/login', roles: ['public'] },
  { file: 'auth/logout.post.ts', method: 'POST', path: '/api/auth/logout', roles: ['public'] },
  { file: 'auth/register.post.ts', method: 'POST', path: '/api/auth/register', roles: ['public'] },
  { file: 'auth/reset-request.post.ts', method: 'POST', path: '/api/auth/reset-request', roles: ['public'] },
  { file: 'auth/reset.post.ts', method: 'POST', path: '/api/auth/reset', roles: ['public'] },
  { file: 'invitations/index.post.ts', method: 'POST', path: '/api/invitations', roles: ['organiser'] },
  { file: 'invitations/[token].get.ts', method: 'GET', path: '/api/invitations/not-a-real-token-but-long-enough', roles: ['public'] },
  { file: 'invitations/[token]/accept.post.ts', method: 'POST', path: '/api/invitations/not-a-real-token-but-long-enough/accept', roles: ['public'] },
  { file: 'users/index.get.ts', method: 'GET', path: '/api/users', roles: ['organiser'] },
  { file: 'users/[id]/roles.put.ts', method: 'PUT', path: '/api/users/999999/roles', roles: ['organiser'] },
]
