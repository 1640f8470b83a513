/** Field errors and a top message from a failed API call, shaped by the server's zod 400s. */
export function apiErrorOf(err: unknown): { message: string, fields: Record<string, string>, status?: number } {
  const e = err as { data?: { message?: string, statusMessage?: string, data?: { fields?: Record<string, string> } }, statusCode?: number, message?: string }
  const fields = e?.data?.data?.fields ?? {}
  const message = e?.data?.message || e?.data?.statusMessage || e?.message || 'Something went wrong'
  return { message, fields, status: e?.statusCode }
}

/** Runs a form submission, keeping its pending state and errors for the template. */
export function useApiForm() {
  const pending = ref(false)
  const error = ref('')
  const fields = ref<Record<string, string>>({})
  // Typed from the callback, not as `() => Promise<T>`: inferring T back through Nitro's typed $fetch
  // routes from that contextual type goes past the type checker's stack depth.
  async function run<F extends () => unknown>(fn: F): Promise<Awaited<ReturnType<F>> | undefined> {
    pending.value = true
    error.value = ''
    fields.value = {}
    try {
      return await fn() as Awaited<ReturnType<F>>
    }
    catch (err) {
      const e = apiErrorOf(err)
      error.value = e.message
      fields.value = e.fields
      return undefined
    }
    finally {
      pending.value = false
    }
  }
  return { pending, error, fields, run }
}
