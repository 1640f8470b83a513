// Photo checks and metadata stripping, byte by byte.
// Sources: JPEG marker segments — ITU-T T.81 Annex B (SOI FFD8, EOI FFD9, SOS FFDA, RSTn FFD0–D7,
// 0xFF00 stuffing) and Exif 2.32 §4.5.4 (Exif lives in APP1 FFE1, XMP too per the XMP spec part 3);
// PNG chunks — ISO/IEC 15948 (W3C PNG) §5.3 (length, type, data, CRC-32) with CRC-32 from node:zlib as
// the oracle; WebP container — RFC 9649 §2.7 (RIFF size = file size − 8, chunks padded to even sizes,
// VP8X flags: ICC 0x20, alpha 0x10, Exif 0x08, XMP 0x04). The JPEG and WebP inputs below were made by
// Chromium's canvas encoder (4×3 pixels), so they are real encoder output.
import { crc32, deflateSync } from 'node:zlib'
import { describe, expect, it } from 'vitest'
import { checkPhotos, PHOTO_MAX_BYTES, sniffPhotoType, stripJpegMetadata, stripPngMetadata, stripWebpMetadata } from '../../server/utils/uploads'

const CHROMIUM_JPEG = '/9j/4AAQSkZJRgABAQAAAQABAAD/4gHYSUNDX1BST0ZJTEUAAQEAAAHIAAAAAAQwAABtbnRyUkdCIFhZWiAH4AABAAEAAAAAAABhY3NwAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAQAA9tYAAQAAAADTLQAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAlkZXNjAAAA8AAAACRyWFlaAAABFAAAABRnWFlaAAABKAAAABRiWFlaAAABPAAAABR3dHB0AAABUAAAABRyVFJDAAABZAAAAChnVFJDAAABZAAAAChiVFJDAAABZAAAAChjcHJ0AAABjAAAADxtbHVjAAAAAAAAAAEAAAAMZW5VUwAAAAgAAAAcAHMAUgBHAEJYWVogAAAAAAAAb6IAADj1AAADkFhZWiAAAAAAAABimQAAt4UAABjaWFlaIAAAAAAAACSgAAAPhAAAts9YWVogAAAAAAAA9tYAAQAAAADTLXBhcmEAAAAAAAQAAAACZmYAAPKnAAANWQAAE9AAAApbAAAAAAAAAABtbHVjAAAAAAAAAAEAAAAMZW5VUwAAACAAAAAcAEcAbwBvAGcAbABlACAASQBuAGMALgAgADIAMAAxADb/2wBDAAYEBQYFBAYGBQYHBwYIChAKCgkJChQODwwQFxQYGBcUFhYaHSUfGhsjHBYWICwgIyYnKSopGR8tMC0oMCUoKSj/2wBDAQcHBwoIChMKChMoGhYaKCgoKCgoKCgoKCgoKCgoKCgoKCgoKCgoKCgoKCgoKCgoKCgoKCgoKCgoKCgoKCgoKCj/wAARCAADAAQDASIAAhEBAxEB/8QAFQABAQAAAAAAAAAAAAAAAAAAAAX/xAAaEAEAAQUAAAAAAAAAAAAAAAAAAgQGNoKy/8QAFAEBAAAAAAAAAAAAAAAAAAAABv/EABoRAAAHAAAAAAAAAAAAAAAAAAABAwQ0crH/2gAMAwEAAhEDEQA/AIloY7Sb9yAEnkhSx6GDKMnUsH//2Q=='
const CHROMIUM_WEBP = 'UklGRjQCAABXRUJQVlA4WAoAAAAgAAAAAwAAAgAASUNDUMgBAAAAAAHIAAAAAAQwAABtbnRyUkdCIFhZWiAH4AABAAEAAAAAAABhY3NwAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAQAA9tYAAQAAAADTLQAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAAlkZXNjAAAA8AAAACRyWFlaAAABFAAAABRnWFlaAAABKAAAABRiWFlaAAABPAAAABR3dHB0AAABUAAAABRyVFJDAAABZAAAAChnVFJDAAABZAAAAChiVFJDAAABZAAAAChjcHJ0AAABjAAAADxtbHVjAAAAAAAAAAEAAAAMZW5VUwAAAAgAAAAcAHMAUgBHAEJYWVogAAAAAAAAb6IAADj1AAADkFhZWiAAAAAAAABimQAAt4UAABjaWFlaIAAAAAAAACSgAAAPhAAAts9YWVogAAAAAAAA9tYAAQAAAADTLXBhcmEAAAAAAAQAAAACZmYAAPKnAAANWQAAE9AAAApbAAAAAAAAAABtbHVjAAAAAAAAAAEAAAAMZW5VUwAAACAAAAAcAEcAbwBvAGcAbABlACAASQBuAGMALgAgADIAMAAxADZWUDggRgAAAFADAJ0BKgQAAwABQCYlqAJ0ugH4AUYCqAP0AywD9AAQP8wAAP7xv6RX97NP0H/jDWfN91Zno3fr1/8S6FzvX4WwIL8ZAAA='

const jpeg = Buffer.from(CHROMIUM_JPEG, 'base64')
const webp = Buffer.from(CHROMIUM_WEBP, 'base64')

function seg(marker: number, payload: Buffer) {
  const head = Buffer.alloc(4)
  head.writeUInt16BE(0xFF00 | marker, 0)
  head.writeUInt16BE(payload.length + 2, 2)
  return Buffer.concat([head, payload])
}
const exifPayload = Buffer.concat([Buffer.from('Exif\0\0II*\0', 'latin1'), Buffer.from('GPSLatitude 51.5 N GPSLongitude 0.1 W', 'latin1')])
const xmpPayload = Buffer.from('http://ns.adobe.com/xap/1.0/\0<x:xmpmeta><exif:GPSLatitude>51,30N</exif:GPSLatitude></x:xmpmeta>', 'latin1')
const iptcPayload = Buffer.from('Photoshop 3.0\x008BIM\x04\x04 City: Harrowmere', 'latin1')

function pngChunk(type: string, data: Buffer) {
  const len = Buffer.alloc(4)
  len.writeUInt32BE(data.length)
  const body = Buffer.concat([Buffer.from(type, 'latin1'), data])
  const crc = Buffer.alloc(4)
  crc.writeUInt32BE(crc32(body) >>> 0)
  return Buffer.concat([len, body, crc])
}
const PNG_SIG = Buffer.from([0x89, 0x50, 0x4E, 0x47, 0x0D, 0x0A, 0x1A, 0x0A])
function ihdr(w: number, h: number) {
  const d = Buffer.alloc(13)
  d.writeUInt32BE(w, 0)
  d.writeUInt32BE(h, 4)
  d[8] = 8 // bit depth
  d[9] = 2 // truecolour
  return pngChunk('IHDR', d)
}
const idat = pngChunk('IDAT', deflateSync(Buffer.from([0, 200, 100, 40, 0, 31, 59, 77]).subarray(0, 4)))
const iend = pngChunk('IEND', Buffer.alloc(0))
const cleanPng = Buffer.concat([PNG_SIG, ihdr(1, 1), idat, iend])

function riffChunk(fourcc: string, data: Buffer) {
  const head = Buffer.alloc(8)
  head.write(fourcc, 0, 'latin1')
  head.writeUInt32LE(data.length, 4)
  return Buffer.concat([head, data, data.length & 1 ? Buffer.alloc(1) : Buffer.alloc(0)])
}
function riff(chunks: Buffer[]) {
  const body = Buffer.concat(chunks)
  const head = Buffer.alloc(12)
  head.write('RIFF', 0, 'latin1')
  head.writeUInt32LE(body.length + 4, 4)
  head.write('WEBP', 8, 'latin1')
  return Buffer.concat([head, body])
}
function webpChunks(buf: Buffer) {
  const out: Buffer[] = []
  for (let pos = 12; pos + 8 <= buf.length;) {
    const size = buf.readUInt32LE(pos + 4)
    out.push(buf.subarray(pos, pos + 8 + size + (size & 1)))
    pos += 8 + size + (size & 1)
  }
  return out
}

describe('sniffPhotoType (type from the bytes, not the name)', () => {
  it('knows JPEG, PNG and WebP by their signatures', () => {
    expect(sniffPhotoType(jpeg)).toBe('image/jpeg')
    expect(sniffPhotoType(cleanPng)).toBe('image/png')
    expect(sniffPhotoType(webp)).toBe('image/webp')
  })
  it('refuses text, GIF and a RIFF that is not WebP', () => {
    expect(sniffPhotoType(Buffer.from('hello, this is not a photo'))).toBeNull()
    expect(sniffPhotoType(Buffer.from('GIF89a\x01\x00\x01\x00', 'latin1'))).toBeNull()
    expect(sniffPhotoType(Buffer.from('RIFF\x04\x00\x00\x00WAVE', 'latin1'))).toBeNull()
    expect(sniffPhotoType(Buffer.alloc(0))).toBeNull()
  })
})

describe('stripJpegMetadata', () => {
  it('the encoder output has no APP1 and passes through unchanged', () => {
    expect(stripJpegMetadata(jpeg).equals(jpeg)).toBe(true)
  })
  it('removes Exif and XMP APP1 and IPTC APP13 segments, giving back the encoder bytes exactly', () => {
    const withMeta = Buffer.concat([jpeg.subarray(0, 2), seg(0xE1, exifPayload), seg(0xE1, xmpPayload), jpeg.subarray(2, 20), seg(0xED, iptcPayload), jpeg.subarray(20)])
    expect(withMeta.includes('GPSLatitude')).toBe(true)
    const out = stripJpegMetadata(withMeta)
    expect(out.equals(jpeg)).toBe(true)
    expect(out.includes('GPSLatitude')).toBe(false)
    expect(out.includes('Harrowmere')).toBe(false)
  })
  it('drops bytes after EOI (appended data can carry anything)', () => {
    const out = stripJpegMetadata(Buffer.concat([jpeg, Buffer.from('GPS trailer')]))
    expect(out.equals(jpeg)).toBe(true)
  })
  it('copies entropy-coded data with stuffed 0xFF00 and restart markers, and finds an APP1 after a scan', () => {
    const scanHeader = seg(0xDA, Buffer.from([1, 1, 0, 0, 63, 0]))
    const data = Buffer.from([0x12, 0xFF, 0x00, 0x34, 0xFF, 0xD0, 0x56, 0xFF, 0xFF, 0xD1, 0x78])
    const input = Buffer.concat([Buffer.from([0xFF, 0xD8]), scanHeader, data, seg(0xE1, exifPayload), scanHeader, data, Buffer.from([0xFF, 0xD9])])
    const expected = Buffer.concat([Buffer.from([0xFF, 0xD8]), scanHeader, data, scanHeader, data, Buffer.from([0xFF, 0xD9])])
    expect(stripJpegMetadata(input).equals(expected)).toBe(true)
  })
  it('refuses a segment that runs past the end and a file without image data', () => {
    expect(() => stripJpegMetadata(jpeg.subarray(0, 30))).toThrow(/past the end/)
    expect(() => stripJpegMetadata(Buffer.concat([jpeg.subarray(0, 20), Buffer.from([0xFF, 0xD9])]))).toThrow(/no image data/)
  })
})

describe('stripPngMetadata', () => {
  it('drops eXIf, tEXt, iTXt and zTXt chunks and keeps the rest byte for byte', () => {
    const withMeta = Buffer.concat([PNG_SIG, ihdr(1, 1), pngChunk('tEXt', Buffer.from('Comment\0GPS 51.5N')), idat,
      pngChunk('eXIf', Buffer.from('MM\0*GPS')), pngChunk('iTXt', Buffer.from('XML:com.adobe.xmp\0\0\0\0\0<GPSLatitude/>')),
      pngChunk('zTXt', Buffer.concat([Buffer.from('Raw\0\0'), deflateSync('GPS')])), iend])
    const out = stripPngMetadata(withMeta)
    expect(out.equals(cleanPng)).toBe(true)
  })
  it('keeps every remaining CRC valid (zlib crc32 as the oracle)', () => {
    const out = stripPngMetadata(Buffer.concat([cleanPng.subarray(0, 33), pngChunk('tEXt', Buffer.from('a\0b')), cleanPng.subarray(33)]))
    for (let pos = 8; pos < out.length;) {
      const len = out.readUInt32BE(pos)
      expect(out.readUInt32BE(pos + 8 + len)).toBe(crc32(out.subarray(pos + 4, pos + 8 + len)) >>> 0)
      pos += 12 + len
    }
  })
  it('drops bytes after IEND; refuses a cut-short file and one not starting with IHDR', () => {
    expect(stripPngMetadata(Buffer.concat([cleanPng, Buffer.from('tail')])).equals(cleanPng)).toBe(true)
    expect(() => stripPngMetadata(cleanPng.subarray(0, cleanPng.length - 12))).toThrow(/IEND/)
    expect(() => stripPngMetadata(Buffer.concat([PNG_SIG, idat, ihdr(1, 1), iend]))).toThrow(/IHDR/)
  })
})

describe('stripWebpMetadata', () => {
  const [vp8x, ...rest] = webpChunks(webp)
  it('the encoder output is VP8X + ICCP + VP8 with only the ICC flag, and passes through unchanged', () => {
    expect(vp8x!.subarray(0, 4).toString('latin1')).toBe('VP8X')
    expect(vp8x![8]).toBe(0x20)
    expect(stripWebpMetadata(webp).equals(webp)).toBe(true)
  })
  it('drops EXIF and XMP chunks (odd sizes padded), clears their VP8X flags and rewrites the RIFF size', () => {
    const flagged = Buffer.from(vp8x!)
    flagged[8] = 0x20 | 0x08 | 0x04
    const exif = riffChunk('EXIF', Buffer.from('II*\0GPS 51.5N')) // odd length: padded
    const xmp = riffChunk('XMP ', Buffer.from('<x:xmpmeta><exif:GPSLatitude>51,30N</exif:GPSLatitude></x:xmpmeta>'))
    const withMeta = riff([flagged, ...rest, exif, xmp])
    expect(withMeta.readUInt32LE(4)).toBe(withMeta.length - 8)
    const out = stripWebpMetadata(withMeta)
    expect(out.equals(webp)).toBe(true)
    expect(out.readUInt32LE(4)).toBe(out.length - 8)
    expect(out.includes('GPS')).toBe(false)
  })
  it('refuses a chunk that runs past the end and a WebP without image data', () => {
    expect(() => stripWebpMetadata(riff([riffChunk('VP8X', Buffer.alloc(10)), Buffer.from('VP8 \xff\x00\x00\x00', 'latin1')]))).toThrow(/past the end/)
    expect(() => stripWebpMetadata(riff([riffChunk('VP8X', Buffer.alloc(10)), riffChunk('EXIF', Buffer.from('x'))]))).toThrow(/no image data/)
  })
})

describe('checkPhotos', () => {
  function status(fn: () => unknown) {
    try {
      fn()
    }
    catch (err) {
      const e = err as { statusCode: number, message: string }
      return { status: e.statusCode, message: e.message }
    }
    return { status: 200, message: '' }
  }
  // A PNG of an exact size: a private ancillary chunk (lower-case first letter) fills it up.
  function pngOfSize(total: number) {
    const fill = total - cleanPng.length - 12
    return Buffer.concat([cleanPng.subarray(0, 33), pngChunk('prVt', Buffer.alloc(fill)), cleanPng.subarray(33)])
  }

  it('accepts up to three photos, strips them and names their type from the bytes', () => {
    const out = checkPhotos([{ filename: 'a.txt', data: jpeg }, { filename: 'b.png', data: cleanPng }, { data: webp }])
    expect(out.map(p => p.contentType)).toEqual(['image/jpeg', 'image/png', 'image/webp'])
    expect(out.map(p => p.ext)).toEqual(['jpg', 'png', 'webp'])
    expect(out[2]!.filename).toBe('photo 3')
  })
  it('refuses a fourth photo', () => {
    expect(status(() => checkPhotos([jpeg, jpeg, jpeg, jpeg].map(data => ({ data }))))).toEqual({ status: 400, message: 'Add at most 3 photos (you chose 4)' })
  })
  it('takes exactly 8 MB (8 × 1024 × 1024 bytes) and refuses one byte more with 413', () => {
    expect(pngOfSize(PHOTO_MAX_BYTES).length).toBe(8 * 1024 * 1024)
    expect(status(() => checkPhotos([{ filename: 'big.png', data: pngOfSize(PHOTO_MAX_BYTES) }])).status).toBe(200)
    const r = status(() => checkPhotos([{ filename: 'huge.png', data: pngOfSize(PHOTO_MAX_BYTES + 1) }]))
    expect(r.status).toBe(413)
    expect(r.message).toBe('huge.png is 8.0 MB; each photo may be at most 8 MB')
  })
  it('refuses a text file named .jpg, an empty file and a broken PNG with 422 and the file name', () => {
    expect(status(() => checkPhotos([{ filename: 'notes.jpg', data: Buffer.from('just text') }]))).toEqual({ status: 422, message: 'notes.jpg is not a JPEG, PNG or WebP image' })
    expect(status(() => checkPhotos([{ filename: 'empty.png', data: Buffer.alloc(0) }]))).toEqual({ status: 422, message: 'empty.png is empty' })
    const broken = status(() => checkPhotos([{ filename: 'cut.png', data: cleanPng.subarray(0, 40) }]))
    expect(broken.status).toBe(422)
    expect(broken.message).toMatch(/^cut\.png looks like a PNG but cannot be read/)
  })
})
