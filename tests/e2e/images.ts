// Tiny valid images built byte by byte, so that tests know exactly what they upload.
import { deflateSync } from 'node:zlib'

const CRC_TABLE = Array.from({ length: 256 }, (_, n) => {
  let c = n
  for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1
  return c >>> 0
})
function crc32(b: Buffer) {
  let c = 0xffffffff
  for (const x of b) c = CRC_TABLE[(c ^ x) & 0xff]! ^ (c >>> 8)
  return (c ^ 0xffffffff) >>> 0
}
function chunk(type: string, data: Buffer) {
  const len = Buffer.alloc(4)
  len.writeUInt32BE(data.length)
  const body = Buffer.concat([Buffer.from(type, 'ascii'), data])
  const crc = Buffer.alloc(4)
  crc.writeUInt32BE(crc32(body))
  return Buffer.concat([len, body, crc])
}
/** A 3 x 2 RGB PNG (PNG specification: signature, IHDR, IDAT of zlib-deflated filtered rows, IEND). */
export function tinyPng(width = 3, height = 2) {
  const ihdr = Buffer.alloc(13)
  ihdr.writeUInt32BE(width, 0)
  ihdr.writeUInt32BE(height, 4)
  ihdr.set([8, 2, 0, 0, 0], 8) // 8-bit, truecolour, deflate, adaptive filter, no interlace
  const rows = Buffer.alloc(height * (1 + width * 3))
  for (let y = 0; y < height; y++) for (let x = 0; x < width; x++) rows.set([200, 120, 40], y * (1 + width * 3) + 1 + x * 3)
  return Buffer.concat([Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]), chunk('IHDR', ihdr), chunk('IDAT', deflateSync(rows)), chunk('IEND', Buffer.alloc(0))])
}
/**
 * An 8 x 8 uniform mid-grey baseline JPEG (ITU-T T.81): one component, a quantisation table of
 * ones, a DC and an AC Huffman table of a single 1-bit code each; the one block is DC difference 0
 * (category 0, code "0") then end-of-block (code "0"), padded with 1-bits: scan byte 0x3F.
 */
export function tinyJpeg() {
  const seg = (marker: number, data: number[]) => [0xff, marker, (data.length + 2) >> 8, (data.length + 2) & 0xff, ...data]
  return Buffer.from([
    0xff, 0xd8,
    ...seg(0xdb, [0x00, ...Array(64).fill(1)]),
    ...seg(0xc0, [8, 0, 8, 0, 8, 1, 1, 0x11, 0]),
    ...seg(0xc4, [0x00, 1, ...Array(15).fill(0), 0x00]),
    ...seg(0xc4, [0x10, 1, ...Array(15).fill(0), 0x00]),
    ...seg(0xda, [1, 1, 0x00, 0, 63, 0]),
    0x3f,
    0xff, 0xd9,
  ])
}

