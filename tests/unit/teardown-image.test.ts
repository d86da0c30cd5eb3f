import { describe, expect, it } from 'vitest'
import { sniffImage } from '../../server/services/image-sniff'
import { tinyJpeg, tinyPng } from '../e2e/images'

describe('sniffImage: recognised by content, sized from the header', () => {
  it('reads a PNG IHDR (PNG specification: width and height as big-endian 32-bit after "IHDR")', () => {
    expect(sniffImage(tinyPng(3, 2))).toEqual({ type: 'image/png', width: 3, height: 2 })
    expect(sniffImage(tinyPng(640, 480))).toEqual({ type: 'image/png', width: 640, height: 480 })
  })

  it('reads a baseline JPEG SOF0 frame (ITU-T T.81: height then width after the precision byte)', () => {
    expect(sniffImage(tinyJpeg())).toEqual({ type: 'image/jpeg', width: 8, height: 8 })
  })

  it('reads a lossless WebP header (VP8L: 14-bit width-1 and height-1 after the 0x2f signature)', () => {
    // RIFF, size, WEBP, VP8L, chunk size, signature 0x2f, then (w-1) | (h-1) << 14 little-endian: 5 x 4
    const bits = (5 - 1) | ((4 - 1) << 14)
    const b = Buffer.concat([Buffer.from('RIFF'), Buffer.from([26, 0, 0, 0]), Buffer.from('WEBPVP8L'), Buffer.from([10, 0, 0, 0, 0x2f]), Buffer.from([bits & 0xff, (bits >> 8) & 0xff, (bits >> 16) & 0xff, (bits >> 24) & 0xff]), Buffer.alloc(6)])
    expect(sniffImage(b)).toEqual({ type: 'image/webp', width: 5, height: 4 })
  })

  it('refuses text, a truncated PNG signature and other formats, whatever the name says', () => {
    expect(sniffImage(Buffer.from('hello, this is text'))).toBeNull()
    expect(sniffImage(tinyPng().subarray(0, 6))).toBeNull()
    expect(sniffImage(Buffer.from('GIF89a\x01\x00\x01\x00'))).toBeNull()
    expect(sniffImage(Buffer.from('%PDF-1.7\n'))).toBeNull()
  })
})
