import { ref } from 'vue'
import { apiErrorFields, apiErrorMessage } from '../utils/apiError'

/**
 * A form's round trip to the server: `busy` while the request runs, and on a refusal the
 * fields the server named (`errors`) and its message (`problem`, or `fallback` when it gave none).
 * `submit` resolves to `{ value }` with the answer, or to null after a refusal.
 *
 * @example
 *   const { busy, errors, problem, submit } = useSubmission('The flag was not sent.')
 *   const sent = await submit(() => $fetch('/api/step-flags', { method: 'POST', body }))
 *   if (sent) opened.value = false
 */
export function useSubmission(fallback: string) {
  const busy = ref(false)
  const errors = ref<Record<string, string>>({})
  const problem = ref('')

  async function submit<T>(request: () => Promise<T>): Promise<{ value: T } | null> {
    errors.value = {}
    problem.value = ''
    busy.value = true
    try {
      return { value: await request() }
    }
    catch (error) {
      errors.value = apiErrorFields(error)
      problem.value = apiErrorMessage(error, fallback)
      return null
    }
    finally {
      busy.value = false
    }
  }

  return { busy, errors, problem, submit }
}
