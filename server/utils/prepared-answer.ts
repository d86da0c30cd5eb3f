import type { H3Event } from 'h3'

/** Sends an answer kept ready as JSON text and gzip: gzip where the client accepts it. */
export function sendPreparedJson(event: H3Event, answer: { text: string; gzip: Buffer }) {
  setResponseHeader(event, 'content-type', 'application/json; charset=utf-8')
  setResponseHeader(event, 'vary', 'accept-encoding')
  if (/\bgzip\b/.test(getRequestHeader(event, 'accept-encoding') ?? '')) {
    setResponseHeader(event, 'content-encoding', 'gzip')
    return answer.gzip
  }
  return answer.text
}
