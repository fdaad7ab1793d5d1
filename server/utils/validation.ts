import type { z } from 'zod'
import { describeZodError } from '#shared/utils/validation'

/**
 * Thrown by `parseWith`; h3's readValidatedBody / getValidatedQuery / getValidatedRouterParams
 * wrap it into a 400 whose `data` carries the failing fields.
 */
export class ValidationFailure extends Error {
  fields: Record<string, string>
  constructor(error: z.ZodError) {
    const described = describeZodError(error)
    super(described.message)
    this.fields = described.fields
  }
}

/** A validate function for h3's readValidatedBody and friends, with field-named messages. */
export function parseWith<S extends z.ZodType>(schema: S) {
  return (input: unknown): z.output<S> => {
    const result = schema.safeParse(input)
    if (result.success) return result.data
    throw new ValidationFailure(result.error)
  }
}

/** Validates input outside h3's readers (e.g. multipart fields) with the same 400 answer. */
export function validateOr400<S extends z.ZodType>(schema: S, input: unknown): z.output<S> {
  const result = schema.safeParse(input)
  if (result.success) return result.data
  const described = describeZodError(result.error)
  throw createError({ statusCode: 400, statusMessage: 'Validation Error', message: described.message, data: { fields: described.fields } })
}
