import type { z } from 'zod'

export interface FieldErrors {
  /** One human sentence naming every failing field. */
  message: string
  /** Failing field path (dots, e.g. `steps.2.measurement.unit`) → reason. */
  fields: Record<string, string>
}

/** Turns a zod error into Benchlore's field-error shape, used by API errors and by forms. */
export function describeZodError(error: z.ZodError): FieldErrors {
  const fields: Record<string, string> = {}
  for (const issue of error.issues) {
    const path = issue.path.map(String).join('.') || '(body)'
    if (!fields[path]) fields[path] = issue.message
  }
  const parts = Object.entries(fields).slice(0, 6).map(([path, reason]) => `${path}: ${reason}`)
  const more = Object.keys(fields).length - parts.length
  return { message: parts.join('; ') + (more > 0 ? `; and ${more} more` : ''), fields }
}
