// The text of a PDF that Chromium printed, read without a PDF library: Chromium writes each run
// of glyphs as 2-byte glyph ids (<...> Tj / [...] TJ) in Flate-compressed content streams, and
// each font's ToUnicode CMap maps the ids back to characters (PDF 1.7, ISO 32000-1, 9.10.3).
// Enough for "does the printout say X"; not a general PDF reader.
import { inflateSync } from 'node:zlib'

interface PdfObject { num: number; dict: string; stream: Buffer | null }

function objects(pdf: Buffer): PdfObject[] {
  const text = pdf.toString('latin1')
  const out: PdfObject[] = []
  const re = /(\d+) 0 obj\s*/g
  let m: RegExpExecArray | null
  while ((m = re.exec(text))) {
    const start = m.index + m[0].length
    const end = text.indexOf('endobj', start)
    if (end < 0) break
    const body = text.slice(start, end)
    const s = body.indexOf('stream')
    let stream: Buffer | null = null
    let dict = body
    if (s >= 0 && body.slice(0, s).trimEnd().endsWith('>>')) {
      dict = body.slice(0, s)
      let from = start + s + 'stream'.length
      if (text[from] === '\r') from++
      if (text[from] === '\n') from++
      const to = text.lastIndexOf('endstream', end)
      const raw = pdf.subarray(from, to)
      stream = /\/FlateDecode/.test(dict) ? inflateSync(raw, { finishFlush: 2 /* Z_SYNC_FLUSH: trailing EOL bytes */ }) : raw
    }
    out.push({ num: Number(m[1]), dict, stream })
    re.lastIndex = end
  }
  return out
}

/** glyph id → text, from a ToUnicode CMap's bfchar and bfrange sections */
function cmap(src: string): Map<number, string> {
  const map = new Map<number, string>()
  const utf16 = (hex: string) => String.fromCharCode(...(hex.match(/.{4}/g) ?? []).map((h) => parseInt(h, 16)))
  for (const block of src.matchAll(/beginbfchar([\s\S]*?)endbfchar/g)) {
    for (const [, code, uni] of block[1]!.matchAll(/<([0-9a-fA-F]+)>\s*<([0-9a-fA-F]+)>/g)) map.set(parseInt(code!, 16), utf16(uni!))
  }
  for (const block of src.matchAll(/beginbfrange([\s\S]*?)endbfrange/g)) {
    for (const [, lo, hi, uni] of block[1]!.matchAll(/<([0-9a-fA-F]+)>\s*<([0-9a-fA-F]+)>\s*<([0-9a-fA-F]+)>/g)) {
      const base = parseInt(uni!, 16)
      for (let c = parseInt(lo!, 16); c <= parseInt(hi!, 16); c++) map.set(c, String.fromCharCode(base + c - parseInt(lo!, 16)))
    }
  }
  return map
}

export function pdfText(pdf: Buffer): string {
  const objs = objects(pdf)
  const byNum = new Map(objs.map((o) => [o.num, o]))
  // font object → its glyph map
  const fontMaps = new Map<number, Map<number, string>>()
  for (const o of objs) {
    const ref = /\/ToUnicode (\d+) 0 R/.exec(o.dict)
    const cm = ref ? byNum.get(Number(ref[1])) : undefined
    if (cm?.stream) fontMaps.set(o.num, cmap(cm.stream.toString('latin1')))
  }
  // resource name (/F3) → font object, from every /Font dictionary
  const names = new Map<string, number>()
  for (const o of objs) {
    for (const fontDict of o.dict.matchAll(/\/Font\s*<<([\s\S]*?)>>/g)) {
      for (const [, name, num] of fontDict[1]!.matchAll(/\/(\w+) (\d+) 0 R/g)) names.set(name!, Number(num))
    }
  }
  const lines: string[] = []
  for (const o of objs) {
    if (!o.stream || !/\bBT\b/.test(o.stream.toString('latin1'))) continue
    const content = o.stream.toString('latin1')
    let font: Map<number, string> | undefined
    let line = ''
    const flush = () => {
      if (line.trim()) lines.push(line)
      line = ''
    }
    // Chromium places glyph by glyph (Td) and draws spaces as glyphs: a text object (BT … ET) is one line
    for (const tok of content.matchAll(/\/(\w+)\s+[\d.]+\s+Tf|<([0-9a-fA-F]*)>|\bET\b/g)) {
      if (tok[1]) font = fontMaps.get(names.get(tok[1]) ?? -1)
      else if (tok[2] !== undefined) {
        for (const g of tok[2].match(/.{4}/g) ?? []) line += font?.get(parseInt(g, 16)) ?? ''
      } else flush()
    }
    flush()
  }
  return lines.join('\n')
}
