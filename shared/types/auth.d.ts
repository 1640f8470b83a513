export type Role = 'organiser' | 'packer' | 'builder'

declare module '#auth-utils' {
  interface User {
    id: number
    email: string
    name: string
    roles: Role[]
  }
}

export {}
