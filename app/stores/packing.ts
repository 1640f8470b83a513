import { defineStore } from 'pinia'

export interface PackLine {
  itemId: number
  designators: string
  stageName: string | null
  partId: number
  partName: string
  valueText: string | null
  kind: string
  qtyNeeded: number
  qtyPacked: number
  standInPartId: number | null
  standInName: string | null
  standInWarning: string | null
  noStandIns: boolean
  notes: string | null
  pinoutNote: string | null
  countSingly: boolean
  bins: string[]
}
export interface PackPouch { stageId: number | null, name: string, number: number, needed: number, packed: number, items: PackLine[] }
export interface PackBag {
  bag: {
    id: number, code: string, state: string, buildDayId: number, buildDayName: string, builderName: string, seat: number | null
    kitName: string, revisionLabel: string, options: string[], claim: { userId: number, name: string } | null, sealedByName: string | null
  }
  pouches: PackPouch[]
  totals: { needed: number, packed: number, lines: number, linesDone: number }
  lastPack: { id: number, qty: number | null, binCode: string | null, partName: string | null } | null
}
export interface PackPrompt {
  kind: 'count' | 'stand-in'
  text: string
  item: PackLine
  binCode: string
  partName: string
  standIn: { warning: string | null } | null
  qty: number
  remaining: number
}
export type Cue = 'ok' | 'bad' | 'ask' | 'sealed'
type Tone = 'ok' | 'bad' | 'warn' | 'info'

const BAG_KEY = 'kw-pack-bag'

/** The packing station's workflow: the current bag, a prompt awaiting the packer, and the queue of scans not yet sent. */
export const usePackingStore = defineStore('packing', () => {
  const buildDayId = ref<number | null>(null)
  const current = ref<PackBag | null>(null)
  const prompt = ref<PackPrompt | null>(null)
  const message = ref<{ tone: Tone, text: string, detail?: string } | null>(null)
  const lit = ref<number | null>(null)
  const queue = ref<string[]>([])
  const busy = ref(false)
  const cue = ref<{ kind: Cue, n: number }>({ kind: 'ok', n: 0 })
  const log = ref<{ n: number, text: string, tone: Tone }[]>([])

  function say(tone: Tone, text: string, sound: Cue | null, detail?: string) {
    message.value = { tone, text, detail }
    log.value = [{ n: cue.value.n + 1, text, tone }, ...log.value].slice(0, 8)
    if (sound) cue.value = { kind: sound, n: cue.value.n + 1 }
  }

  function setBag(view: PackBag | null) {
    current.value = view
    if (import.meta.client) {
      if (view && view.bag.state !== 'sealed') sessionStorage.setItem(BAG_KEY, view.bag.code)
      else sessionStorage.removeItem(BAG_KEY)
    }
  }

  /** Queues a scan (or an empty Enter, which confirms the prompt) and works through the queue in order. */
  async function enqueue(text: string) {
    queue.value.push(text)
    if (busy.value) return
    busy.value = true
    try {
      while (queue.value.length) await handle(queue.value.shift()!)
    }
    finally {
      busy.value = false
    }
  }

  async function handle(raw: string) {
    const text = raw.trim()
    const p = prompt.value
    if (p && (text === '' || /^\d{1,4}$/.test(text))) return confirm(text === '' ? p.qty : Number(text))
    if (text === '') return
    prompt.value = null
    await send({ text })
  }

  async function send(body: { text: string, itemId?: number, qty?: number, confirmStandIn?: boolean }) {
    if (!buildDayId.value) return say('bad', 'Choose the build day you are packing first', 'bad')
    try {
      const res = await $fetch<any>('/api/pack/scan', { method: 'POST', body: { ...body, buildDayId: buildDayId.value, bagId: current.value?.bag.id } })
      receive(res, body.text)
    }
    catch (err) {
      const e = apiErrorOf(err)
      const reason = (err as { data?: { data?: { reason?: string } } }).data?.data?.reason
      say('bad', e.message, 'bad', reason === 'claimed' || reason === 'sealed' ? 'Scan another bag.' : undefined)
      if (reason === 'sealed' && current.value) await reload()
    }
  }

  function receive(res: any, text: string) {
    if (res.outcome === 'bag') {
      setBag(res.bag)
      lit.value = null
      const v = res.bag as PackBag
      return say('ok', `Bag ${v.bag.code} for ${v.bag.builderName}`, 'ok', `${v.bag.kitName} rev ${v.bag.revisionLabel}. Scan a bin.`)
    }
    if (res.outcome === 'count' || res.outcome === 'stand-in') {
      prompt.value = { kind: res.outcome, text, item: res.item, binCode: res.binCode, partName: res.partName, standIn: res.standIn, qty: res.qty, remaining: res.remaining }
      lit.value = res.item.itemId
      return res.outcome === 'count'
        ? say('info', `Put ${res.qty} × ${res.partName} from ${res.binCode} in`, 'ask', `${res.item.designators}: confirm the count`)
        : say('warn', `${res.partName} stands in for ${res.item.partName}`, 'ask', res.standIn?.warning ?? undefined)
    }
    if (res.bag) setBag(res.bag)
    else applyPack(res)
    lit.value = res.packed.itemId
    if (res.sealed) return say('ok', `Bag ${res.bag.bag.code} is complete and sealed`, 'sealed', 'Close it and scan the next bag.')
    if (res.sealError) return say('bad', `Packed, but the bag could not be sealed: ${res.sealError}`, 'bad')
    say('ok', `${res.packed.qty} × ${res.packed.partName} packed`, 'ok', `${res.packed.designators} from ${res.packed.binCode}${res.packed.standIn ? ' (stand-in)' : ''}`)
  }

  /** Patches the current bag with one pack's change (the server sends the whole bag only when it seals). */
  function applyPack(res: { item: Partial<PackLine> & { itemId: number, qtyPacked: number }, totals: PackBag['totals'], lastPack: PackBag['lastPack'] }) {
    const view = current.value
    if (!view) return
    for (const p of view.pouches) {
      const line = p.items.find(i => i.itemId === res.item.itemId)
      if (!line) continue
      p.packed += res.item.qtyPacked - line.qtyPacked
      Object.assign(line, res.item)
    }
    view.totals = res.totals
    view.lastPack = res.lastPack
  }

  async function confirm(qty: number) {
    const p = prompt.value
    if (!p) return
    prompt.value = null
    await send({ text: p.text, itemId: p.item.itemId, qty, confirmStandIn: p.kind === 'stand-in' || !!p.standIn })
  }

  function cancel() {
    prompt.value = null
    lit.value = null
    message.value = { tone: 'info', text: 'Nothing packed. Scan a bin.' }
  }

  async function act(fn: () => Promise<PackBag>, done: string) {
    try {
      setBag(await fn())
      prompt.value = null
      say('info', done, 'ok')
    }
    catch (err) {
      say('bad', apiErrorOf(err).message, 'bad')
    }
  }

  const undo = () => current.value && act(() => $fetch<PackBag>('/api/pack/undo', { method: 'POST', body: { bagId: current.value!.bag.id } }), 'Last scan taken back: take those parts out again')
  const seal = () => current.value && act(() => $fetch<PackBag>(`/api/bags/${current.value!.bag.code}/seal`, { method: 'POST' }), 'Bag sealed')

  async function release() {
    if (!current.value) return
    await act(() => $fetch<PackBag>(`/api/bags/${current.value!.bag.code}/release`, { method: 'POST' }), 'Bag released: another packer may take it')
    setBag(null)
  }

  async function reload(code = current.value?.bag.code) {
    if (!code) return
    try {
      setBag(await $fetch<PackBag>(`/api/bags/${code}`))
    }
    catch {
      setBag(null)
    }
  }

  /** After a page reload: the bag this tab was packing, if this packer still holds it. */
  async function restore(userId: number) {
    const code = import.meta.client ? sessionStorage.getItem(BAG_KEY) : null
    if (!code || current.value) return
    await reload(code)
    const restored = current.value as PackBag | null
    if (restored && restored.bag.claim?.userId !== userId) setBag(null)
  }

  return { buildDayId, current, prompt, message, lit, queue, busy, cue, log, enqueue, confirm, cancel, undo, seal, release, reload, restore }
})
