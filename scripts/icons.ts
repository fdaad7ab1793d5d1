// Draws the installed app's icons from Benchlore's mark (the trace in app/components/app/AppMark.vue)
// in the palette's accent and paper, and writes them to public/icons/. The output is committed;
// run `npx tsx scripts/icons.ts` after changing the mark or the palette.
import { mkdirSync, writeFileSync } from 'node:fs'
import { join } from 'node:path'
import sharp from 'sharp'
import { palette } from '../app/utils/palette'

const OUT = join(import.meta.dirname, '..', 'public', 'icons')
const TRACE = 'M6 20h5l3-9 4 14 3-8h5'

/**
 * The mark on a square of `size` px. `maskable`: the launcher may crop it to any shape, so the
 * background fills the square and the trace keeps inside the middle 80 % (the safe zone of the
 * Web App Manifest's maskable icons).
 */
function markSvg(size: number, opts: { maskable?: boolean } = {}): string {
  const inset = opts.maskable ? 0.2 : 0
  const scale = (1 - inset) * size / 32
  const offset = (size - 32 * scale) / 2
  const radius = opts.maskable ? 0 : size * 6 / 32
  return `<svg xmlns="http://www.w3.org/2000/svg" width="${size}" height="${size}" viewBox="0 0 ${size} ${size}">`
    + `<rect width="${size}" height="${size}" rx="${radius}" fill="${palette.accent.DEFAULT}"/>`
    + `<g transform="translate(${offset} ${offset}) scale(${scale})">`
    + `<path d="${TRACE}" fill="none" stroke="${palette.paper.DEFAULT}" stroke-width="2.6" stroke-linecap="round" stroke-linejoin="round"/>`
    + `</g></svg>`
}

const ICONS = [
  { file: 'icon-192.png', size: 192 },
  { file: 'icon-512.png', size: 512 },
  { file: 'maskable-512.png', size: 512, maskable: true },
  { file: 'apple-touch-180.png', size: 180, maskable: true },
]

mkdirSync(OUT, { recursive: true })
for (const icon of ICONS) {
  const png = await sharp(Buffer.from(markSvg(icon.size, { maskable: icon.maskable }))).png({ compressionLevel: 9 }).toBuffer()
  writeFileSync(join(OUT, icon.file), png)
  console.log(`${icon.file}: ${icon.size}×${icon.size}, ${png.length} bytes`)
}
