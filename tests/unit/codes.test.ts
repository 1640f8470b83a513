import { webcrypto } from 'node:crypto'
import { describe, expect, it } from 'vitest'
import {
  CODE_ALPHABET, SIGNATURE_MISMATCH, SIG_LENGTH, labelUrl, looksLikeBareCode, newBagCode, readScan, signCode,
} from '../../server/utils/codes'

const SECRET = 'test-secret-for-label-codes-0123'
const OTHER_SECRET = 'another-secret-for-label-codes-9'

/** Independent oracle: WebCrypto's HMAC-SHA256, then BigInt.toString(31) mapped onto the alphabet. */
async function oracleSig(kind: string, code: string, secret: string): Promise<string> {
  const enc = new TextEncoder()
  const key = await webcrypto.subtle.importKey('raw', enc.encode(secret), { name: 'HMAC', hash: 'SHA-256' }, false, ['sign'])
  const mac = new Uint8Array(await webcrypto.subtle.sign('HMAC', key, enc.encode(`${kind}:${code}`)))
  const first8 = BigInt('0x' + Buffer.from(mac.slice(0, 8)).toString('hex'))
  const digits = (first8 % 31n ** 8n).toString(31).padStart(8, '0')
  return [...digits].map(d => CODE_ALPHABET[parseInt(d, 31)]).join('')
}

describe('newBagCode', () => {
  it('is B plus 5 characters from the unambiguous alphabet', () => {
    for (let i = 0; i < 200; i++) {
      const code = newBagCode()
      expect(code).toMatch(/^B[23456789ABCDEFGHJKMNPQRSTUVWXYZ]{5}$/)
      expect(code.slice(1)).not.toMatch(/[01OIL]/)
    }
  })

  it('draws from the whole alphabet and rarely repeats', () => {
    const codes = Array.from({ length: 2000 }, newBagCode)
    // 31^5 ≈ 28.6 M codes: 2000 draws collide with probability ≈ 7 %, never by more than a few (birthday bound).
    expect(new Set(codes).size).toBeGreaterThan(1995)
    expect(new Set(codes.join('').slice(0)).size).toBe(CODE_ALPHABET.length)
  })
})

describe('signCode', () => {
  it('matches an independent HMAC-SHA256 (WebCrypto) and base-31 encoding', async () => {
    expect(signCode('bag', 'B7K3QX', SECRET)).toBe(`B7K3QX-${await oracleSig('bag', 'B7K3QX', SECRET)}`)
    expect(signCode('bin', 'A-03', SECRET)).toBe(`A-03-${await oracleSig('bin', 'A-03', SECRET)}`)
  })

  it('signs the upper-cased code, and the kind is part of the signature', () => {
    expect(signCode('bin', ' a-03 ', SECRET)).toBe(signCode('bin', 'A-03', SECRET))
    const asBag = signCode('bag', 'BAAAAA', SECRET).slice(-SIG_LENGTH)
    const asBin = signCode('bin', 'BAAAAA', SECRET).slice(-SIG_LENGTH)
    expect(asBag).not.toBe(asBin)
  })

  it('rejects codes of the wrong shape and a short secret', () => {
    expect(() => signCode('bag', 'B0O1IL', SECRET)).toThrow(/not a bag code/)
    expect(() => signCode('bag', 'X7K3QX', SECRET)).toThrow(/not a bag code/)
    expect(() => signCode('bin', 'A--', SECRET)).toThrow(/not a bin code/)
    expect(() => signCode('bin', 'A/03', SECRET)).toThrow(/not a bin code/)
    expect(() => signCode('bin', 'A-03', 'short')).toThrow(/at least 16 characters/)
  })
})

describe('labelUrl', () => {
  it('puts bags under /b/ and bins under /n/', () => {
    expect(labelUrl('https://club.example/', 'bag', 'B7K3QX', SECRET)).toBe(`https://club.example/b/${signCode('bag', 'B7K3QX', SECRET)}`)
    expect(labelUrl('http://10.0.0.5:3000', 'bin', 'A-03', SECRET)).toBe(`http://10.0.0.5:3000/n/${signCode('bin', 'A-03', SECRET)}`)
    expect(labelUrl('', 'bin', 'A-03', SECRET)).toBe(`/n/${signCode('bin', 'A-03', SECRET)}`)
  })

  it('refuses a base that is not an http(s) URL', () => {
    expect(() => labelUrl('club.example', 'bag', 'B7K3QX', SECRET)).toThrow(/http/)
  })
})

describe('readScan', () => {
  const bagToken = signCode('bag', 'B7K3QX', SECRET)
  const binToken = signCode('bin', 'A-03', SECRET)

  it('round-trips bags and bins through the URL, the path and the bare token', () => {
    for (let i = 0; i < 50; i++) {
      const code = newBagCode()
      expect(readScan(labelUrl('https://kw.example', 'bag', code, SECRET), SECRET)).toEqual({ kind: 'bag', code })
    }
    for (const code of ['A-03', 'Z9', 'SHELF2-B', '7']) {
      expect(readScan(labelUrl('https://kw.example', 'bin', code, SECRET), SECRET)).toEqual({ kind: 'bin', code })
      expect(readScan(signCode('bin', code, SECRET), SECRET)).toEqual({ kind: 'bin', code })
    }
    expect(readScan(`/b/${bagToken}`, SECRET)).toEqual({ kind: 'bag', code: 'B7K3QX' })
    expect(readScan(`n/${binToken}`, SECRET)).toEqual({ kind: 'bin', code: 'A-03' })
    expect(readScan(bagToken, SECRET)).toEqual({ kind: 'bag', code: 'B7K3QX' })
  })

  it('accepts any host, a base path, a query, a trailing slash, case changes and scanner whitespace', () => {
    const ok = { kind: 'bag', code: 'B7K3QX' }
    expect(readScan(`http://192.168.1.20:3000/b/${bagToken}`, SECRET)).toEqual(ok)
    expect(readScan(`https://club.example/kitwright/b/${bagToken}/?src=cam#x`, SECRET)).toEqual(ok)
    expect(readScan(`HTTPS://KW.EXAMPLE/B/${bagToken}`, SECRET)).toEqual(ok)
    expect(readScan(`  ${bagToken.toLowerCase()}\r\n`, SECRET)).toEqual(ok)
    expect(readScan(`${bagToken.replace('-', ' ')}\n`, SECRET)).toEqual(ok)
    expect(readScan(`${bagToken.replace('-', '.')}`, SECRET)).toEqual(ok)
    expect(readScan(`https://kw.example/n/${binToken.toLowerCase()}`, SECRET)).toEqual({ kind: 'bin', code: 'A-03' })
  })

  it('rejects a forged signature', () => {
    const sig = bagToken.slice(-SIG_LENGTH)
    const forged = sig[0] === 'A' ? `B${sig.slice(1)}` : `A${sig.slice(1)}`
    expect(readScan(`B7K3QX-${forged}`, SECRET)).toEqual({ error: SIGNATURE_MISMATCH })
    expect(readScan(`https://kw.example/b/B7K3QX-22222222`, SECRET)).toEqual({ error: SIGNATURE_MISMATCH })
  })

  it('rejects a signature made with another secret', () => {
    expect(readScan(labelUrl('https://kw.example', 'bag', 'B7K3QX', OTHER_SECRET), SECRET)).toEqual({ error: SIGNATURE_MISMATCH })
    expect(readScan(signCode('bin', 'A-03', OTHER_SECRET), SECRET)).toEqual({ error: SIGNATURE_MISMATCH })
  })

  it('rejects a mistyped character in the code or the signature', () => {
    expect(readScan(bagToken.replace('B7K3QX', 'B7K3QY'), SECRET)).toEqual({ error: SIGNATURE_MISMATCH })
    expect(readScan(binToken.replace('A-03', 'A-08'), SECRET)).toEqual({ error: SIGNATURE_MISMATCH })
    const sig = bagToken.slice(-SIG_LENGTH)
    expect(readScan(`B7K3QX-${sig.slice(0, 7)}0`, SECRET)).toEqual({ error: SIGNATURE_MISMATCH })
  })

  it('does not accept a bag token as a bin or the reverse', () => {
    expect(readScan(`/n/${bagToken}`, SECRET)).toEqual({ error: SIGNATURE_MISMATCH })
    const binLikeBag = signCode('bin', 'BAAAAA', SECRET)
    expect(readScan(`/b/${binLikeBag}`, SECRET)).toEqual({ error: SIGNATURE_MISMATCH })
    expect(readScan(binLikeBag, SECRET)).toEqual({ kind: 'bin', code: 'BAAAAA' })
  })

  it('rejects empty, over-long and foreign input', () => {
    expect(readScan('', SECRET)).toEqual({ error: 'nothing was scanned' })
    expect(readScan(' \r\n', SECRET)).toEqual({ error: 'nothing was scanned' })
    expect(readScan('x'.repeat(201), SECRET)).toHaveProperty('error', expect.stringMatching(/too long/))
    expect(readScan(`https://kw.example/b/${bagToken}${'/'.repeat(0)}?${'q'.repeat(180)}`, SECRET)).toHaveProperty('error')
    // An EAN-13 product barcode (GS1 General Specifications: 13 digits) is not a label code.
    expect(readScan('4006381333931', SECRET)).toEqual({ error: 'this is not a Kitwright label code' })
    expect(readScan('B7K3QX', SECRET)).toEqual({ error: 'this is not a Kitwright label code' })
    expect(readScan('https://kw.example/x/B7K3QX-22222222', SECRET)).toEqual({ error: 'this is not a Kitwright label code' })
    expect(readScan('https://kw.example/b/B7K3QX-22222222/extra', SECRET)).toEqual({ error: 'this is not a Kitwright label code' })
    expect(readScan('/b/%E0%A4%A', SECRET)).toEqual({ error: 'this is not a Kitwright label code' })
    expect(readScan('/b/BOOOOO-22222222', SECRET)).toEqual({ error: 'this is not a Kitwright label code' })
  })

  it('refuses to run without a proper secret', () => {
    expect(() => readScan(bagToken, '')).toThrow(/secret/)
  })
})

describe('looksLikeBareCode', () => {
  it('spots a code typed without its signature', () => {
    expect(looksLikeBareCode('b7k3qx')).toBe(true)
    expect(looksLikeBareCode(' A-03 ')).toBe(true)
    expect(looksLikeBareCode(signCode('bag', 'B7K3QX', SECRET))).toBe(false)
    expect(looksLikeBareCode('https://kw.example/b/B7K3QX')).toBe(false)
    expect(looksLikeBareCode('')).toBe(false)
  })
})
