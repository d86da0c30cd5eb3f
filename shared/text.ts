// Every text field of every schema (shared/schemas, the domain's schemas, route queries) starts from `line()` or `multiline()`: control characters are
// refused with a 400 naming the field. NUL and the other C0 controls (U+0000-U+001F) except tab,
// DEL (U+007F) and the C1 controls (U+0080-U+009F) have no place in a name, a serial or a note;
// they truncate or corrupt text in logs, e-mails, PDFs and spreadsheets. A single-line field also
// refuses CR and LF; a multi-line one (notes, comments, the text of an uploaded file) keeps them.
import { z } from 'zod'

export const SINGLE_LINE_TEXT = /^[^\u0000-\u0008\u000A-\u001F\u007F-\u009F]*$/
export const MULTI_LINE_TEXT = /^[^\u0000-\u0008\u000B\u000C\u000E-\u001F\u007F-\u009F]*$/
export const SINGLE_LINE_MESSAGE = 'must be one line of text without control characters'
export const MULTI_LINE_MESSAGE = 'must be text without control characters'

type StringParams = Parameters<typeof z.string>[0]

/** A one-line text field: no control characters but tab, no line breaks. */
export function line(params?: StringParams) {
  return z.string(params).regex(SINGLE_LINE_TEXT, SINGLE_LINE_MESSAGE)
}

/** A multi-line text field: no control characters but tab, CR and LF. */
export function multiline(params?: StringParams) {
  return z.string(params).regex(MULTI_LINE_TEXT, MULTI_LINE_MESSAGE)
}
