import { createHash, randomBytes } from 'node:crypto'

/** A random single-use token and the hash that is stored instead of it. */
export function newToken() {
  const token = randomBytes(24).toString('base64url')
  return { token, hash: hashToken(token) }
}

export function hashToken(token: string) {
  return createHash('sha256').update(token).digest('hex')
}
