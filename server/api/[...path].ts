// Any /api path no route matches: a JSON 404, never the HTML page renderer.
export default defineEventHandler((event) => {
  throw createError({ statusCode: 404, message: `No API route ${event.method} ${getRequestURL(event).pathname}` })
})
