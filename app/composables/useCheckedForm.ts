/**
 * A form checked with a shared zod schema before it is sent, with the server's message on failure.
 *   const { form, errors, message, failure, submit } = useCheckedForm(schema, blank, async body => { ...; return 'Saved.' })
 * `toBody` turns the form into what is checked and sent (default: the form itself).
 */
import type { z } from 'zod'

export function useCheckedForm<T extends object, B = T>(
  schema: z.ZodType,
  blank: () => T,
  send: (body: B) => Promise<string | void>,
  toBody: (form: T) => B = form => ({ ...form }) as unknown as B,
) {
  const form = reactive(blank()) as T
  const errors = ref<Record<string, string>>({})
  const message = ref('')
  const failure = ref('')
  async function submit() {
    message.value = ''
    failure.value = ''
    const body = toBody(form)
    errors.value = fieldErrors(schema, body)
    if (Object.keys(errors.value).length) return
    try {
      message.value = (await send(body)) ?? ''
    }
    catch (e) {
      failure.value = apiErrorMessage(e)
    }
  }
  const reset = (keep: Partial<T> = {}) => Object.assign(form, blank(), keep)
  return { form, errors, message, failure, submit, reset }
}
