import sharp from 'sharp'
import { describe, expect, it } from 'vitest'
import { Attachment } from '../../server/db'
import { ApiClient, DEMO, signedIn } from '../helpers/api'
import { testDb } from '../helpers/db'
import { services } from '../helpers/stack'

// Bad files from the OWASP File Upload cheat sheet: wrong content behind an image name, a
// polyglot, empty and oversized files. The type is decided from the bytes, not the name.
function form(data: Buffer | Uint8Array, filename: string, type = 'image/jpeg') {
  const fd = new FormData()
  fd.append('file', new Blob([data], { type }), filename)
  return fd
}

async function photo(opts: { width?: number, exifGps?: boolean } = {}) {
  let img = sharp({ create: { width: opts.width ?? 900, height: 600, channels: 3, background: { r: 30, g: 110, b: 60 } } }).jpeg()
  if (opts.exifGps) {
    img = img.withExif({ IFD0: { Make: 'TestCam', Model: 'Bench' }, IFD3: { GPSLatitudeRef: 'N', GPSLatitude: '51/1 30/1 0/1', GPSLongitudeRef: 'W', GPSLongitude: '0/1 7/1 0/1' } })
  }
  return await img.toBuffer()
}

const count = async () => {
  testDb()
  return await Attachment.count()
}

describe('photo uploads', () => {
  it('stores a JPEG, re-encoded, with a thumbnail of at most 480 px, served only to signed-in users', async () => {
    const tech = await signedIn(DEMO.technician)
    const res = await tech.post('/api/uploads', form(await photo({ width: 1600 }), 'bench.jpg'))
    expect(res.status).toBe(201)
    expect(res.body).toMatchObject({ url: `/api/files/${res.body.id}`, width: 1600, height: 600 })
    const full = await fetch(`${tech.baseUrl}${res.body.url}`, { headers: { cookie: tech.cookie } })
    expect(full.headers.get('content-type')).toBe('image/jpeg')
    expect(full.headers.get('content-disposition')).toBe(`inline; filename="benchlore-${res.body.id}.jpg"`)
    const thumb = Buffer.from(await (await fetch(`${tech.baseUrl}${res.body.thumbnailUrl}`, { headers: { cookie: tech.cookie } })).arrayBuffer())
    const meta = await sharp(thumb).metadata()
    expect(Math.max(meta.width!, meta.height!)).toBeLessThanOrEqual(480)
    expect((await new ApiClient().get(res.body.url)).status).toBe(401)
  })

  it('strips EXIF, GPS included', async () => {
    const input = await photo({ exifGps: true })
    expect((await sharp(input).metadata()).exif, 'the test image carries EXIF').toBeTruthy()
    const tech = await signedIn(DEMO.technician)
    const res = await tech.post('/api/uploads', form(input, 'gps.jpg'))
    const stored = Buffer.from(await (await fetch(`${tech.baseUrl}${res.body.url}`, { headers: { cookie: tech.cookie } })).arrayBuffer())
    const meta = await sharp(stored).metadata()
    expect(meta.exif).toBeUndefined()
    expect(stored.includes(Buffer.from('GPS'))).toBe(false)
    expect(stored.includes(Buffer.from('TestCam'))).toBe(false)
  })

  it.each([
    ['a PHP script named .jpg', Buffer.from('<?php system($_GET["c"]); ?>'), 'shell.jpg', 415],
    ['an HTML page named .png', Buffer.from('<html><script>alert(1)</script></html>'), 'page.png', 415],
    ['a polyglot: JPEG magic bytes followed by script', Buffer.concat([Buffer.from([0xFF, 0xD8, 0xFF, 0xE0]), Buffer.from('<script>alert(1)</script><?php echo 1; ?>')]), 'poly.jpg', 422],
    ['a zero-byte file', Buffer.alloc(0), 'empty.jpg', 422],
    ['an SVG (scriptable) image', Buffer.from('<svg xmlns="http://www.w3.org/2000/svg" onload="alert(1)"/>'), 'x.svg', 415],
  ])('rejects %s', async (_, data, name, status) => {
    const before = await count()
    const res = await (await signedIn(DEMO.technician)).post('/api/uploads', form(data, name))
    expect(res.status).toBe(status)
    expect(res.body.message).toBeTruthy()
    expect(await count()).toBe(before)
  })

  it('rejects a file over 15 MB with 413', async () => {
    const before = await count()
    const big = Buffer.alloc(16 * 1024 * 1024, 0)
    big.set([0xFF, 0xD8, 0xFF, 0xE0])
    const res = await (await signedIn(DEMO.technician)).post('/api/uploads', form(big, 'huge.jpg'))
    expect(res.status).toBe(413)
    expect(await count()).toBe(before)
  })

  it('answers 503 and writes no row while the object store is down', async () => {
    const tech = await signedIn(DEMO.technician)
    const data = await photo()
    const before = await count()
    await services.stopObjectStore()
    try {
      const res = await tech.post('/api/uploads', form(data, 'down.jpg'))
      expect(res.status).toBe(503)
      expect(res.body.message).toMatch(/object store/)
      expect(await count()).toBe(before)
    }
    finally {
      await services.startObjectStore()
    }
    expect((await tech.post('/api/uploads', form(data, 'up.jpg'))).status).toBe(201)
  })
})
