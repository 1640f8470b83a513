import { EventEmitter } from 'node:events'
import { randomUUID } from 'node:crypto'

export interface MailAttachment {
  filename: string
  contentType: string
  size: number
}

/** A received message as the JSON API shows it. */
export interface MailMessage {
  id: string
  from: string
  fromName: string | null
  to: string[]
  cc: string[]
  /** RCPT TO addresses: who the message was delivered to, Bcc included. */
  envelopeTo: string[]
  subject: string
  text: string
  html: string | null
  /** When the fake received it (ISO 8601). */
  date: string
  attachments: MailAttachment[]
}

export interface StoredMessage {
  message: MailMessage
  contents: Buffer[]
}

/** Normalises an address for matching: trimmed, lower case (common practice for mailbox lookups). */
export function normaliseAddress(address: string): string {
  return address.trim().toLowerCase()
}

/** Messages in memory, oldest dropped past `max`. Lists are newest first. */
export class MailStore {
  private readonly items: StoredMessage[] = []
  private readonly events = new EventEmitter()

  constructor(private readonly max = 500) {
    this.events.setMaxListeners(0)
  }

  add(input: Omit<MailMessage, 'id' | 'date'>, contents: Buffer[]): MailMessage {
    const message: MailMessage = { id: randomUUID(), date: new Date().toISOString(), ...input }
    this.items.push({ message, contents })
    if (this.items.length > this.max) this.items.splice(0, this.items.length - this.max)
    this.events.emit('message', message)
    return message
  }

  list(to?: string | null): MailMessage[] {
    const match = to ? normaliseAddress(to) : null
    const out: MailMessage[] = []
    for (let i = this.items.length - 1; i >= 0; i--) {
      const m = this.items[i]!.message
      if (!match || addressesOf(m).has(match)) out.push(m)
    }
    return out
  }

  latest(to?: string | null): MailMessage | null {
    return this.list(to)[0] ?? null
  }

  get(id: string): StoredMessage | null {
    return this.items.find((s) => s.message.id === id) ?? null
  }

  /** Removes all messages, or only those addressed to `to`; returns how many went. */
  clear(to?: string | null): number {
    if (!to) {
      const n = this.items.length
      this.items.length = 0
      return n
    }
    const match = normaliseAddress(to)
    let removed = 0
    for (let i = this.items.length - 1; i >= 0; i--) {
      if (addressesOf(this.items[i]!.message).has(match)) {
        this.items.splice(i, 1)
        removed++
      }
    }
    return removed
  }

  /** Answers every pending wait with null (on shutdown). */
  releaseWaiters(): void {
    this.events.emit('release')
  }

  /** The latest message for `to`, waiting up to `ms` for one to arrive when there is none yet. */
  waitForLatest(to: string | null, ms: number): Promise<MailMessage | null> {
    const now = this.latest(to)
    if (now || ms <= 0) return Promise.resolve(now)
    const match = to ? normaliseAddress(to) : null
    return new Promise((resolve) => {
      const onMessage = (m: MailMessage) => {
        if (match && !addressesOf(m).has(match)) return
        done(m)
      }
      const onRelease = () => done(null)
      const timer = setTimeout(onRelease, ms)
      const done = (m: MailMessage | null) => {
        clearTimeout(timer)
        this.events.off('message', onMessage)
        this.events.off('release', onRelease)
        resolve(m)
      }
      this.events.on('message', onMessage)
      this.events.on('release', onRelease)
    })
  }
}

function addressesOf(m: MailMessage): Set<string> {
  return new Set([...m.to, ...m.cc, ...m.envelopeTo].map(normaliseAddress))
}
