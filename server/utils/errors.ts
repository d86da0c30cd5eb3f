import type { H3Event } from 'h3'
import { z, type ZodType } from 'zod'

/** A zod failure as one readable sentence naming the field(s), plus the list for forms. */
export function zodMessage(error: z.ZodError): { message: string; issues: { path: string; message: string }[] } {
  const issues = error.issues.map((i) => ({ path: i.path.map(String).join('.') || '(body)', message: i.message }))
  const message = issues.slice(0, 3).map((i) => `${i.path}: ${i.message}`).join('; ')
  return { message: `Invalid input: ${message}`, issues }
}

export function badRequest(message: string, data?: Record<string, unknown>): never {
  throw createError({ statusCode: 400, statusMessage: 'Bad Request', message, data })
}
export function notFound(what = 'Record'): never {
  throw createError({ statusCode: 404, statusMessage: 'Not Found', message: `${what} not found` })
}
export function conflict(message: string, data?: Record<string, unknown>): never {
  throw createError({ statusCode: 409, statusMessage: 'Conflict', message, data })
}
export function forbidden(message = 'Your role may not do this'): never {
  throw createError({ statusCode: 403, statusMessage: 'Forbidden', message })
}

export function parseWith<S extends ZodType>(schema: S, value: unknown): z.infer<S> {
  const result = schema.safeParse(value)
  if (!result.success) {
    const { message, issues } = zodMessage(result.error)
    badRequest(message, { issues })
  }
  return result.data
}

export async function readValidBody<S extends ZodType>(event: H3Event, schema: S): Promise<z.infer<S>> {
  let raw: unknown
  try {
    raw = await readBody(event)
  } catch {
    badRequest('Invalid input: the request body is not valid JSON')
  }
  return parseWith(schema, raw ?? {})
}

export function readValidQuery<S extends ZodType>(event: H3Event, schema: S): z.infer<S> {
  return parseWith(schema, getQuery(event))
}

export function readValidParams<S extends ZodType>(event: H3Event, schema: S): z.infer<S> {
  return parseWith(schema, getRouterParams(event, { decode: true }))
}

export const IdParams = z.object({ id: z.coerce.number().int().positive() })
