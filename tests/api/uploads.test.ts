import sharp from 'sharp'
import { describe, expect, it } from 'vitest'
import { Attachment } from '../../server/db'
import { ApiClient, DEMO, signedIn } from '../helpers/api'
import { makeContent } from '../helpers/content'
import { FACTORY_PASSWORD, makeUser, testDb } from '../helpers/db'
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

describe('large photos', () => {
  it('refuses a photo of more than 40 megapixels from its header, before decoding it', async () => {
    const before = await count()
    // 8000 × 6000 = 48 MP, a plain JPEG of a few hundred kilobytes.
    const big = await sharp({ create: { width: 8000, height: 6000, channels: 3, background: { r: 200, g: 200, b: 190 } } }).jpeg({ quality: 40 }).toBuffer()
    const res = await (await signedIn(DEMO.technician)).post('/api/uploads', form(big, 'fifty.jpg'))
    expect(res.status).toBe(413)
    expect(res.body.message).toMatch(/48\.0 megapixels .* up to 40 megapixels/)
    expect(res.body.data.fields).toEqual({ file: 'over 40 megapixels' })
    expect(await count()).toBe(before)
  })

  it('stores a large photo at most 4096 px on its long side', async () => {
    const tech = await signedIn(DEMO.technician)
    const wide = await sharp({ create: { width: 6000, height: 3000, channels: 3, background: { r: 60, g: 90, b: 120 } } }).jpeg({ quality: 60 }).toBuffer()
    const res = await tech.post('/api/uploads', form(wide, 'wide.jpg'))
    expect(res.status).toBe(201)
    expect([res.body.width, res.body.height]).toEqual([4096, 2048])
    const stored = Buffer.from(await (await fetch(`${tech.baseUrl}${res.body.url}`, { headers: { cookie: tech.cookie } })).arrayBuffer())
    const meta = await sharp(stored).metadata()
    expect([meta.width, meta.height]).toEqual([4096, 2048])
  })
})

describe('who may open a file', () => {
  const get = async (client: ApiClient, url: string) => (await fetch(`${client.baseUrl}${url}`, { headers: { cookie: client.cookie } })).status

  it('a draft\'s step image: its author and editors only, until the revision is submitted and published', async () => {
    const author = await signedIn(DEMO.author)
    const editor = await signedIn(DEMO.editor)
    const tech = await signedIn(DEMO.technician)
    const otherAuthor = await new ApiClient().login((await makeUser({ role: 'author' })).email, FACTORY_PASSWORD)
    const image = (await author.post('/api/uploads', form(await photo(), 'draft.jpg'))).body
    const content = makeContent()
    content.steps[0]!.imageIds = [image.id]
    const created = await author.post('/api/procedures', { content })
    expect(created.status).toBe(201)
    const revisionId = created.body.revision.id
    for (const url of [image.url, image.thumbnailUrl]) {
      expect(await get(tech, url), `technician, ${url}`).toBe(404)
      expect(await get(otherAuthor, url), `another author, ${url}`).toBe(404)
      expect(await get(author, url), `its author, ${url}`).toBe(200)
      expect(await get(editor, url), `an editor, ${url}`).toBe(200)
    }
    // Ids are sequential: the next and previous ids answer the same as a hidden one.
    expect(await get(tech, `/api/files/${image.id + 1000}`)).toBe(404)
    expect((await tech.patch(`/api/uploads/${image.id}`, { caption: 'mine now' })).status).toBe(404)

    expect((await author.post(`/api/revisions/${revisionId}/submit`)).status).toBe(200)
    expect(await get(otherAuthor, image.url), 'submitted: authors see it').toBe(200)
    expect(await get(tech, image.url), 'not yet published').toBe(404)
    expect((await editor.post(`/api/revisions/${revisionId}/approve`)).status).toBe(200)
    expect(await get(tech, image.url), 'published: everyone').toBe(200)
    expect(await get(tech, image.thumbnailUrl)).toBe(200)
  })

  it('a bench photo: its uploader until it is on a record, then the whole team (records are shared)', async () => {
    const ade = await new ApiClient().login((await makeUser()).email, FACTORY_PASSWORD)
    const mika = await new ApiClient().login((await makeUser()).email, FACTORY_PASSWORD)
    const image = (await ade.post('/api/uploads', form(await photo(), 'bench.jpg'))).body
    expect(await get(ade, image.url)).toBe(200)
    expect(await get(mika, image.url)).toBe(404)
    const record = (await ade.post('/api/records', { procedureSlug: 'vr240-stuck-at-full' })).body.record
    expect((await ade.patch(`/api/records/${record.id}`, { version: record.version, photoIds: [image.id] })).status).toBe(200)
    expect(await get(mika, image.url)).toBe(200)
    expect(await get(mika, image.thumbnailUrl)).toBe(200)
  })
})
