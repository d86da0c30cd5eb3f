// Recognises an uploaded image by its first bytes (never by its name or the declared type)
// and reads its pixel size from the header, without decoding the image.
export type ImageType = 'image/png' | 'image/jpeg' | 'image/webp'

export interface SniffedImage {
  type: ImageType
  width: number | null
  height: number | null
}

const PNG_SIGNATURE = [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]

function startsWith(b: Uint8Array, sig: number[], at = 0) {
  if (b.length < at + sig.length) return false
  for (let i = 0; i < sig.length; i++) if (b[at + i] !== sig[i]) return false
  return true
}
const ascii = (b: Uint8Array, at: number, len: number) => String.fromCharCode(...b.subarray(at, at + len))
const u16be = (b: Uint8Array, at: number) => (b[at]! << 8) | b[at + 1]!
const u32be = (b: Uint8Array, at: number) => ((b[at]! << 24) >>> 0) + (b[at + 1]! << 16) + (b[at + 2]! << 8) + b[at + 3]!
const u16le = (b: Uint8Array, at: number) => b[at]! | (b[at + 1]! << 8)
const u24le = (b: Uint8Array, at: number) => b[at]! | (b[at + 1]! << 8) | (b[at + 2]! << 16)

/** null when the bytes are not a PNG, JPEG or WebP image. */
export function sniffImage(b: Uint8Array): SniffedImage | null {
  if (startsWith(b, PNG_SIGNATURE)) {
    // The first chunk of a PNG is IHDR: width and height as 32-bit big-endian.
    if (b.length >= 24 && ascii(b, 12, 4) === 'IHDR') return { type: 'image/png', width: u32be(b, 16), height: u32be(b, 20) }
    return null
  }
  if (startsWith(b, [0xff, 0xd8, 0xff])) return { type: 'image/jpeg', ...jpegSize(b) }
  if (b.length >= 16 && ascii(b, 0, 4) === 'RIFF' && ascii(b, 8, 4) === 'WEBP') return { type: 'image/webp', ...webpSize(b) }
  return null
}

function jpegSize(b: Uint8Array): { width: number | null; height: number | null } {
  // Walk the marker segments to the first start-of-frame (SOF0..SOF15 except DHT C4, JPG C8, DAC CC).
  let i = 2
  while (i + 9 < b.length) {
    if (b[i] !== 0xff) return { width: null, height: null }
    const marker = b[i + 1]!
    if (marker === 0xff) {
      i += 1
      continue
    }
    if (marker === 0xd9 || marker === 0xda) break
    const len = u16be(b, i + 2)
    if (marker >= 0xc0 && marker <= 0xcf && marker !== 0xc4 && marker !== 0xc8 && marker !== 0xcc) {
      return { height: u16be(b, i + 5), width: u16be(b, i + 7) }
    }
    i += 2 + len
  }
  return { width: null, height: null }
}

function webpSize(b: Uint8Array): { width: number | null; height: number | null } {
  const chunk = ascii(b, 12, 4)
  if (chunk === 'VP8X' && b.length >= 30) return { width: u24le(b, 24) + 1, height: u24le(b, 27) + 1 }
  if (chunk === 'VP8 ' && b.length >= 30) return { width: u16le(b, 26) & 0x3fff, height: u16le(b, 28) & 0x3fff }
  if (chunk === 'VP8L' && b.length >= 25) {
    const bits = b[21]! | (b[22]! << 8) | (b[23]! << 16) | (b[24]! << 24)
    return { width: (bits & 0x3fff) + 1, height: ((bits >> 14) & 0x3fff) + 1 }
  }
  return { width: null, height: null }
}
