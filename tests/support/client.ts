// A small HTTP client with a cookie jar, for API tests against the running server.
export const DEMO_PASSWORD = 'buildday-demo'
export const DEMO = {
  organiser: 'olwen.hartley@club.invalid',
  organiser2: 'des.okonkwo@club.invalid',
  packer: 'pip.achterberg@club.invalid',
  packer2: 'ruth.ellingworth@club.invalid',
  builder: 'bea.marchetti@club.invalid',
  builder2: 'tomasz.wrenfield@club.invalid',
} as const

export interface Res<T = any> { status: number, body: T, headers: Headers }

export class Client {
  cookie = ''
  constructor(public base: string) {}

  async req<T = any>(method: string, path: string, body?: unknown, headers: Record<string, string> = {}): Promise<Res<T>> {
    const isForm = typeof FormData !== 'undefined' && body instanceof FormData
    const res = await fetch(this.base + path, {
      method,
      headers: {
        ...(body !== undefined && !isForm ? { 'content-type': 'application/json' } : {}),
        ...(this.cookie ? { cookie: this.cookie } : {}),
        accept: 'application/json',
        ...headers,
      },
      body: body === undefined ? undefined : isForm ? body as FormData : JSON.stringify(body),
      redirect: 'manual',
    })
    const set = res.headers.getSetCookie?.() ?? []
    for (const c of set) {
      const [pair] = c.split(';')
      const [name] = pair!.split('=')
      const rest = this.cookie.split('; ').filter(x => x && !x.startsWith(`${name}=`))
      this.cookie = [...rest, pair].join('; ')
    }
    const text = await res.text()
    let parsed: unknown = text
    try {
      parsed = text ? JSON.parse(text) : null
    }
    catch {}
    return { status: res.status, body: parsed as T, headers: res.headers }
  }

  get<T = any>(path: string) { return this.req<T>('GET', path) }
  post<T = any>(path: string, body?: unknown, headers?: Record<string, string>) { return this.req<T>('POST', path, body ?? {}, headers) }
  put<T = any>(path: string, body?: unknown) { return this.req<T>('PUT', path, body ?? {}) }
  patch<T = any>(path: string, body?: unknown) { return this.req<T>('PATCH', path, body ?? {}) }
  del<T = any>(path: string) { return this.req<T>('DELETE', path) }

  async login(email: string, password = DEMO_PASSWORD) {
    const res = await this.post('/api/auth/login', { email, password })
    if (res.status !== 200) throw new Error(`sign-in as ${email} failed: ${res.status} ${JSON.stringify(res.body)}`)
    return this
  }
}

export async function signedIn(base: string, who: keyof typeof DEMO | string) {
  const email = who in DEMO ? DEMO[who as keyof typeof DEMO] : who
  return new Client(base).login(email)
}

/** Reads the newest message to an address from the fake inbox, waiting for it to arrive. */
export async function latestMail(mailUrl: string, to: string, opts: { after?: number, timeoutMs?: number } = {}) {
  const until = Date.now() + (opts.timeoutMs ?? 10_000)
  while (Date.now() < until) {
    const res = await fetch(`${mailUrl}/api/messages/latest?to=${encodeURIComponent(to)}`)
    if (res.ok) {
      const msg = await res.json() as { subject: string, text: string, html?: string, date: string, to: string[] }
      if (!opts.after || new Date(msg.date).getTime() >= opts.after) return msg
    }
    await new Promise(r => setTimeout(r, 100))
  }
  throw new Error(`no mail to ${to} arrived`)
}
