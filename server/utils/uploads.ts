// Photos on missing-part reports: type checked from the bytes, size and count limited, and
// metadata that can carry a location (Exif, XMP, text chunks) taken out before anything is stored.
// The byte work is plain TypeScript with explicit imports so unit tests can load it.
import { randomUUID } from 'node:crypto'
import { createError } from 'h3'

export type PhotoType = 'image/jpeg' | 'image/png' | 'image/webp'

export const PHOTO_MAX_BYTES = 8 * 1024 * 1024
export const PHOTO_MAX_COUNT = 3
const EXTENSIONS: Record<PhotoType, string> = { 'image/jpeg': 'jpg', 'image/png': 'png', 'image/webp': 'webp' }

/** A photo as it arrives in a multipart form. */
export interface IncomingPhoto { filename?: string, data: Buffer }
/** A checked photo, metadata stripped, ready to store. */
export interface CheckedPhoto { filename: string, contentType: PhotoType, ext: string, data: Buffer }

/** The image type from the file's first bytes (never from its name or the browser's claim). */
export function sniffPhotoType(buf: Uint8Array): PhotoType | null {
  if (buf.length >= 3 && buf[0] === 0xFF && buf[1] === 0xD8 && buf[2] === 0xFF) return 'image/jpeg'
  if (buf.length >= 8 && Buffer.from(buf.subarray(0, 8)).equals(PNG_SIGNATURE)) return 'image/png'
  if (buf.length >= 12 && ascii(buf, 0, 4) === 'RIFF' && ascii(buf, 8, 4) === 'WEBP') return 'image/webp'
  return null
}

/** Thrown for a file that starts like an image but whose structure cannot be followed. */
export class BrokenImageError extends Error {}

const PNG_SIGNATURE = Buffer.from([0x89, 0x50, 0x4E, 0x47, 0x0D, 0x0A, 0x1A, 0x0A])
const PNG_DROP = new Set(['eXIf', 'tEXt', 'iTXt', 'zTXt'])
const WEBP_DROP = new Set(['EXIF', 'XMP '])
// APP1 holds Exif and XMP; APP13 holds IPTC, which can name a place too.
const JPEG_DROP = new Set([0xE1, 0xED])

function ascii(buf: Uint8Array, at: number, n: number) {
  return Buffer.from(buf.subarray(at, at + n)).toString('latin1')
}

/**
 * A JPEG without its APP1 (Exif, XMP) and APP13 (IPTC) segments, found by walking the marker
 * segments (ITU-T T.81 Annex B); entropy-coded data is copied as it is; bytes after EOI are dropped.
 */
export function stripJpegMetadata(input: Uint8Array): Buffer {
  const buf = Buffer.from(input)
  if (buf[0] !== 0xFF || buf[1] !== 0xD8) throw new BrokenImageError('no JPEG start marker')
  const out: Buffer[] = [buf.subarray(0, 2)]
  let pos = 2
  let sawScan = false
  while (pos < buf.length) {
    if (buf[pos] !== 0xFF) throw new BrokenImageError(`expected a marker at byte ${pos}`)
    let m = pos + 1
    while (buf[m] === 0xFF) m++ // fill bytes
    if (m >= buf.length) throw new BrokenImageError('the file ends inside a marker')
    const marker = buf[m]!
    if (marker === 0xD9) {
      out.push(buf.subarray(pos, m + 1))
      return finishJpeg(out, sawScan)
    }
    if (marker === 0x01 || (marker >= 0xD0 && marker <= 0xD7)) {
      out.push(buf.subarray(pos, m + 1))
      pos = m + 1
      continue
    }
    if (m + 3 > buf.length) throw new BrokenImageError('the file ends inside a segment length')
    const length = buf.readUInt16BE(m + 1)
    const end = m + 1 + length
    if (length < 2 || end > buf.length) throw new BrokenImageError(`a segment at byte ${pos} runs past the end of the file`)
    if (!JPEG_DROP.has(marker)) out.push(buf.subarray(pos, end))
    pos = end
    if (marker === 0xDA) {
      sawScan = true
      const next = nextJpegMarker(buf, pos)
      out.push(buf.subarray(pos, next))
      pos = next
    }
  }
  return finishJpeg(out, sawScan)
}

function finishJpeg(out: Buffer[], sawScan: boolean) {
  if (!sawScan) throw new BrokenImageError('the JPEG has no image data')
  return Buffer.concat(out)
}

/** After a scan header: the offset of the next marker that is not a restart marker or a stuffed 0xFF00. */
function nextJpegMarker(buf: Buffer, from: number) {
  for (let i = from; i < buf.length - 1; i++) {
    if (buf[i] !== 0xFF) continue
    const b = buf[i + 1]!
    if (b === 0x00 || b === 0xFF || (b >= 0xD0 && b <= 0xD7)) continue
    return i
  }
  return buf.length
}

/** A PNG without eXIf, tEXt, iTXt and zTXt chunks (PNG spec, ISO/IEC 15948 §5); bytes after IEND dropped. */
export function stripPngMetadata(input: Uint8Array): Buffer {
  const buf = Buffer.from(input)
  if (!buf.subarray(0, 8).equals(PNG_SIGNATURE)) throw new BrokenImageError('no PNG signature')
  const out: Buffer[] = [buf.subarray(0, 8)]
  let pos = 8
  let first = true
  while (pos + 12 <= buf.length) {
    const length = buf.readUInt32BE(pos)
    const type = ascii(buf, pos + 4, 4)
    const end = pos + 12 + length
    if (end > buf.length) throw new BrokenImageError(`the ${type} chunk runs past the end of the file`)
    if (first && type !== 'IHDR') throw new BrokenImageError('a PNG must start with its IHDR chunk')
    first = false
    if (!PNG_DROP.has(type)) out.push(buf.subarray(pos, end))
    pos = end
    if (type === 'IEND') return Buffer.concat(out)
  }
  throw new BrokenImageError('the PNG has no IEND chunk: the file is cut short')
}

/**
 * A WebP without EXIF and XMP chunks (RFC 9649 container): the VP8X flags for them are cleared
 * and the RIFF size is written again for the shorter file.
 */
export function stripWebpMetadata(input: Uint8Array): Buffer {
  const buf = Buffer.from(input)
  if (ascii(buf, 0, 4) !== 'RIFF' || ascii(buf, 8, 4) !== 'WEBP') throw new BrokenImageError('no RIFF/WEBP header')
  const end = Math.min(buf.length, buf.readUInt32LE(4) + 8)
  const out: Buffer[] = []
  let pos = 12
  let image = false
  while (pos + 8 <= end) {
    const fourcc = ascii(buf, pos, 4)
    const size = buf.readUInt32LE(pos + 4)
    const next = pos + 8 + size + (size & 1)
    if (pos + 8 + size > end) throw new BrokenImageError(`the ${fourcc} chunk runs past the end of the file`)
    if (fourcc === 'VP8 ' || fourcc === 'VP8L' || fourcc === 'ANMF') image = true
    if (fourcc === 'VP8X' && size >= 1) {
      const chunk = Buffer.from(buf.subarray(pos, Math.min(next, end)))
      chunk[8] = chunk[8]! & ~(0x08 | 0x04) // Exif and XMP flags
      out.push(chunk)
    }
    else if (!WEBP_DROP.has(fourcc)) out.push(buf.subarray(pos, Math.min(next, end)))
    pos = next
  }
  if (!image) throw new BrokenImageError('the WebP has no image data')
  const body = Buffer.concat(out)
  const header = Buffer.alloc(12)
  header.write('RIFF', 0, 'latin1')
  header.writeUInt32LE(body.length + 4, 4)
  header.write('WEBP', 8, 'latin1')
  return Buffer.concat([header, body])
}

/** Strips the location-bearing metadata of a photo of a known type. */
export function stripPhotoMetadata(buf: Uint8Array, type: PhotoType): Buffer {
  if (type === 'image/jpeg') return stripJpegMetadata(buf)
  if (type === 'image/png') return stripPngMetadata(buf)
  return stripWebpMetadata(buf)
}

function sizeText(bytes: number) {
  return `${(bytes / (1024 * 1024)).toFixed(1)} MB`
}

/**
 * Checks every photo before any is stored: at most three, each at most 8 MB, each a JPEG, PNG or
 * WebP by its bytes and readable. Throws 400/413/422 with a message naming the file.
 */
export function checkPhotos(files: IncomingPhoto[]): CheckedPhoto[] {
  if (files.length > PHOTO_MAX_COUNT) {
    throw createError({ statusCode: 400, statusMessage: 'Too many photos', message: `Add at most ${PHOTO_MAX_COUNT} photos (you chose ${files.length})` })
  }
  return files.map((f, i) => {
    const name = (f.filename || `photo ${i + 1}`).slice(0, 120)
    if (f.data.length === 0) throw createError({ statusCode: 422, statusMessage: 'Not an image', message: `${name} is empty` })
    if (f.data.length > PHOTO_MAX_BYTES) {
      throw createError({ statusCode: 413, statusMessage: 'Photo too large', message: `${name} is ${sizeText(f.data.length)}; each photo may be at most 8 MB` })
    }
    const type = sniffPhotoType(f.data)
    if (!type) throw createError({ statusCode: 422, statusMessage: 'Not an image', message: `${name} is not a JPEG, PNG or WebP image` })
    try {
      const data = stripPhotoMetadata(f.data, type)
      return { filename: name, contentType: type, ext: EXTENSIONS[type], data }
    }
    catch (err) {
      if (!(err instanceof BrokenImageError)) throw err
      throw createError({ statusCode: 422, statusMessage: 'Not an image', message: `${name} looks like a ${EXTENSIONS[type].toUpperCase()} but cannot be read (${err.message})` })
    }
  })
}

/** A fresh storage key for a report's photo. */
export function photoKey(reportId: number, ext: string) {
  return `reports:${reportId}:${randomUUID()}.${ext}`
}

/** Stores a photo through Nitro storage ('uploads' mount: local disk by default, replaceable by an object store). */
export async function storePhoto(key: string, data: Buffer) {
  await useStorage('uploads').setItemRaw(key, data)
}

export async function readPhoto(key: string): Promise<Buffer | null> {
  const raw = await useStorage('uploads').getItemRaw(key)
  if (raw == null) return null
  return Buffer.isBuffer(raw) ? raw : Buffer.from(raw as ArrayBuffer)
}

export async function removePhoto(key: string) {
  await useStorage('uploads').removeItem(key)
}
