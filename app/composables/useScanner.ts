/**
 * Keeps a scan field ready for a keyboard-wedge scanner: keystrokes typed while focus is elsewhere
 * (not in another field) are sent to it, and it takes focus back after clicks on empty space.
 * A wedge types fast and ends with Enter; a person types slowly: both land in the same field.
 */
export function useScanner(field: Ref<HTMLInputElement | null>, opts: { enabled?: Ref<boolean> } = {}) {
  const enabled = opts.enabled ?? ref(true)

  function editable(el: Element | null) {
    if (!el) return false
    const tag = el.tagName
    return tag === 'INPUT' || tag === 'TEXTAREA' || tag === 'SELECT' || (el as HTMLElement).isContentEditable
  }

  function focus() {
    if (!enabled.value || !field.value) return
    if (editable(document.activeElement) && document.activeElement !== field.value) return
    field.value.focus({ preventScroll: true })
  }

  function onKeydown(e: KeyboardEvent) {
    if (!enabled.value || !field.value || e.target === field.value) return
    if (e.ctrlKey || e.metaKey || e.altKey || editable(e.target as Element)) return
    // A printable key while a button or the page has focus: the scan field takes it (and what follows).
    if (e.key.length === 1) {
      e.preventDefault()
      field.value.focus({ preventScroll: true })
      field.value.value += e.key
      field.value.dispatchEvent(new Event('input'))
    }
  }

  function onPointerUp() {
    setTimeout(focus, 0)
  }

  onMounted(() => {
    window.addEventListener('keydown', onKeydown, true)
    window.addEventListener('pointerup', onPointerUp)
    focus()
  })
  onBeforeUnmount(() => {
    window.removeEventListener('keydown', onKeydown, true)
    window.removeEventListener('pointerup', onPointerUp)
  })
  return { focus }
}
