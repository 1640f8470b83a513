export interface Toast { id: number, text: string, tone: 'ok' | 'bad' | 'info' }

let next = 1

/** Short-lived notices after an action ("Saved", "Refund sent"). */
export function useToast() {
  const toasts = useState<Toast[]>('toasts', () => [])
  function show(text: string, tone: Toast['tone'] = 'ok', ms = 4000) {
    const id = next++
    toasts.value = [...toasts.value, { id, text, tone }]
    if (import.meta.client) setTimeout(() => dismiss(id), ms)
  }
  function dismiss(id: number) {
    toasts.value = toasts.value.filter(t => t.id !== id)
  }
  return { toasts, show, dismiss }
}
