// Draws the demo workshop's bench photos. They are composed as SVG and rasterised here rather
// than shipped as files, so the demo carries no third-party images and every picture matches
// the step it illustrates. Layout and colours are seeded from the image name: the same name
// always draws the same picture, and no two pictures look alike.
import sharp from 'sharp'
import { DEMO_IMAGES } from './demo-content'
import { seededRandom } from '../../shared/utils/random'

export const DEMO_IMAGE_WIDTH = 1200
export const DEMO_IMAGE_HEIGHT = 800
const CAPTION_HEIGHT = 92
const FONT = 'DejaVu Sans, Liberation Sans, Arial, sans-serif'

type Focus = 'to220' | 'bridge' | 'fuse' | 'toroid' | 'ecap' | 'ecap_pair' | 'resistor_pair' | 'relay' | 'dfn'
interface Point { x: number, y: number }
interface Subject { focus: Focus, ref: string, tp1: string, tp2: string, marking?: string }

/** What each photo shows: the part in the middle of the frame and what the two probes touch. */
const SUBJECTS: Record<string, Subject> = {
  'vr240-q1-body-diode.jpg': { focus: 'to220', ref: 'Q1', tp1: 'S', tp2: 'D (tab)' },
  'vr240-bridge-pins.jpg': { focus: 'bridge', ref: 'BR1', tp1: '−', tp2: '~' },
  'pd400-fuse-f1.jpg': { focus: 'fuse', ref: 'F1', tp1: 'cap', tp2: 'cap', marking: 'F2A 250V' },
  'pd400-choke-l1.jpg': { focus: 'toroid', ref: 'L1', tp1: 'L1a', tp2: 'L1b' },
  'cc350-vcc-cap.jpg': { focus: 'ecap', ref: 'C4', tp1: '+', tp2: '−', marking: '22µF 50V' },
  'cc350-startup-string.jpg': { focus: 'resistor_pair', ref: 'R1 R2', tp1: 'C2+', tp2: 'U1-1', marking: '105' },
  'cv24-output-caps.jpg': { focus: 'ecap_pair', ref: 'C10 C11', tp1: '+', tp2: '−', marking: '1000µF 35V' },
  'px10-relay-terminals.jpg': { focus: 'relay', ref: 'K1', tp1: 'L-in', tp2: 'L-out', marking: '12VDC 16A' },
  'qc30-sr-fet.jpg': { focus: 'dfn', ref: 'Q2', tp1: 'S', tp2: 'D' },
}

/** Draws one of the DEMO_IMAGES as a 1200×800 JPEG. */
export async function renderDemoImage(name: string): Promise<Buffer> {
  const image = DEMO_IMAGES.find(i => i.name === name)
  const subject = SUBJECTS[name]
  if (!image || !subject) throw new Error(`no demo image named "${name}"`)
  const svg = composeBenchPhoto(image.name, image.caption, subject)
  return sharp(Buffer.from(svg)).jpeg({ quality: 84, mozjpeg: true }).toBuffer()
}

// ---------------------------------------------------------------------------------------------

function hashName(text: string): number {
  // FNV-1a: tiny, stable across runs and platforms.
  let h = 0x811C9DC5
  for (let i = 0; i < text.length; i++) {
    h ^= text.charCodeAt(i)
    h = Math.imul(h, 0x01000193)
  }
  return h >>> 0
}

interface Dice { next: () => number, range: (lo: number, hi: number) => number, int: (lo: number, hi: number) => number, pick: <T>(items: readonly T[]) => T }

function dice(seed: number): Dice {
  const next = seededRandom(seed)
  const range = (lo: number, hi: number) => lo + (hi - lo) * next()
  const int = (lo: number, hi: number) => Math.floor(range(lo, hi + 1))
  return { next, range, int, pick: items => items[Math.min(items.length - 1, Math.floor(next() * items.length))]! }
}

function escapeXml(text: string): string {
  return text.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;').replace(/'/g, '&apos;')
}

const n = (v: number) => (Math.round(v * 10) / 10).toString()

function label(x: number, y: number, text: string, size = 13, fill = '#f4f4ef', anchor: 'start' | 'middle' | 'end' = 'middle', weight = 'normal'): string {
  return `<text x="${n(x)}" y="${n(y)}" font-family="${FONT}" font-size="${size}" font-weight="${weight}" fill="${fill}" text-anchor="${anchor}">${escapeXml(text)}</text>`
}

// ---------------------------------------------------------------------------------------------
// Parts drawn around the subject, in board coordinates
// ---------------------------------------------------------------------------------------------

const PAD = '#cdb67c'
const SILK = '#f4f4ef'

function resistorTop(x: number, y: number, ref: string, r: Dice, vertical: boolean): string {
  const body = r.pick(['#d9c59a', '#7fa7c9', '#c9d2b8'])
  const w = vertical ? 14 : 46
  const h = vertical ? 46 : 14
  const bands = [0.22, 0.38, 0.54, 0.78].map((f, i) => {
    const colour = r.pick(['#5a3a1a', '#111', '#c0392b', '#e67e22', '#f1c40f', '#6c3483', '#b7950b'])
    return vertical
      ? `<rect x="${n(x - 7)}" y="${n(y - 23 + f * 46)}" width="14" height="${i === 3 ? 4 : 3}" fill="${colour}"/>`
      : `<rect x="${n(x - 23 + f * 46)}" y="${n(y - 7)}" width="${i === 3 ? 4 : 3}" height="14" fill="${colour}"/>`
  }).join('')
  const leads = vertical
    ? `<line x1="${n(x)}" y1="${n(y - 38)}" x2="${n(x)}" y2="${n(y + 38)}" stroke="#bfc4c8" stroke-width="3"/>`
    : `<line x1="${n(x - 38)}" y1="${n(y)}" x2="${n(x + 38)}" y2="${n(y)}" stroke="#bfc4c8" stroke-width="3"/>`
  return `${leads}<rect x="${n(x - w / 2)}" y="${n(y - h / 2)}" width="${w}" height="${h}" rx="6" fill="${body}"/>${bands}${label(vertical ? x + 20 : x, vertical ? y + 4 : y - 14, ref, 12, SILK, vertical ? 'start' : 'middle')}`
}

function capTop(x: number, y: number, ref: string, radius: number, sleeve: string, marking?: string): string {
  return [
    `<circle cx="${n(x)}" cy="${n(y)}" r="${n(radius + 5)}" fill="none" stroke="${SILK}" stroke-width="2"/>`,
    `<circle cx="${n(x)}" cy="${n(y)}" r="${n(radius)}" fill="${sleeve}"/>`,
    `<path d="M ${n(x + radius * 0.5)} ${n(y - radius * 0.87)} A ${n(radius)} ${n(radius)} 0 0 1 ${n(x + radius * 0.5)} ${n(y + radius * 0.87)}" stroke="#c9ced6" stroke-width="${n(radius * 0.28)}" fill="none"/>`,
    `<circle cx="${n(x)}" cy="${n(y)}" r="${n(radius * 0.72)}" fill="#aeb4ba"/>`,
    `<line x1="${n(x - radius * 0.5)}" y1="${n(y)}" x2="${n(x + radius * 0.5)}" y2="${n(y)}" stroke="#7e858c" stroke-width="2"/>`,
    `<line x1="${n(x)}" y1="${n(y - radius * 0.5)}" x2="${n(x)}" y2="${n(y + radius * 0.5)}" stroke="#7e858c" stroke-width="2"/>`,
    label(x - radius - 8, y - radius + 4, '+', 16, SILK),
    label(x, y + radius + 22, ref, 13),
    marking ? label(x, y + radius * 0.45, marking, Math.max(9, radius * 0.26), '#2b2f33') : '',
  ].join('')
}

function icTop(x: number, y: number, ref: string, pins: number): string {
  const w = 18 * (pins / 2) + 8
  const legs = Array.from({ length: pins / 2 }, (_, i) => {
    const px = x - w / 2 + 13 + i * 18
    return `<rect x="${n(px - 3)}" y="${n(y - 30)}" width="6" height="10" fill="#c3c7cc"/><rect x="${n(px - 3)}" y="${n(y + 20)}" width="6" height="10" fill="#c3c7cc"/>`
  }).join('')
  return `${legs}<rect x="${n(x - w / 2)}" y="${n(y - 21)}" width="${n(w)}" height="42" rx="3" fill="#1c1d1f"/><circle cx="${n(x - w / 2 + 9)}" cy="${n(y + 12)}" r="3" fill="#3a3c40"/>${label(x, y + 5, ref, 12, '#9a9ea3')}`
}

function smallCap(x: number, y: number, ref: string): string {
  return `<rect x="${n(x - 16)}" y="${n(y - 6)}" width="8" height="12" fill="${PAD}"/><rect x="${n(x + 8)}" y="${n(y - 6)}" width="8" height="12" fill="${PAD}"/><rect x="${n(x - 9)}" y="${n(y - 5)}" width="18" height="10" fill="#b08b57"/>${label(x, y - 11, ref, 11)}`
}

function diodeTop(x: number, y: number, ref: string): string {
  return `<line x1="${n(x - 36)}" y1="${n(y)}" x2="${n(x + 36)}" y2="${n(y)}" stroke="#bfc4c8" stroke-width="3"/><rect x="${n(x - 18)}" y="${n(y - 8)}" width="36" height="16" rx="3" fill="#222"/><rect x="${n(x + 10)}" y="${n(y - 8)}" width="4" height="16" fill="#d8d8d8"/>${label(x, y - 13, ref, 11)}`
}

// ---------------------------------------------------------------------------------------------
// The subject of the photo, centred on (0, 0); returns where the two test points are
// ---------------------------------------------------------------------------------------------

function drawSubject(s: Subject, r: Dice): { svg: string, tp1: Point, tp2: Point } {
  switch (s.focus) {
    case 'to220': {
      const legs = [-26, 0, 26].map((dx, i) => `<rect x="${dx - 3}" y="40" width="6" height="64" fill="#c9cdd1"/>${label(dx, 124, ['G', 'D', 'S'][i]!, 14)}`).join('')
      return {
        svg: `<rect x="-130" y="-120" width="260" height="150" rx="6" fill="#aab0b6" stroke="#8c9298" stroke-width="2"/>`
          + `<rect x="-44" y="-92" width="88" height="56" fill="#c6ccd2"/><circle cx="0" cy="-66" r="11" fill="#5d646b"/>`
          + `<rect x="-44" y="-38" width="88" height="80" rx="3" fill="#1b1c1e"/>${legs}`
          + label(0, 8, s.ref, 16, '#9da2a8'),
        tp1: { x: 26, y: 108 },
        tp2: { x: 0, y: -66 },
      }
    }
    case 'bridge': {
      const marks = ['~', '~', '+', '−']
      const legs = [-54, -18, 18, 54].map((dx, i) => `<rect x="${dx - 4}" y="34" width="8" height="56" fill="#c9cdd1"/>${label(dx, 22, marks[i]!, 20, '#e8e8e8', 'middle', 'bold')}`).join('')
      return {
        svg: `<rect x="-90" y="-34" width="180" height="68" rx="6" fill="#202124"/>${legs}${label(0, -8, s.ref, 15, '#9da2a8')}`,
        tp1: { x: 54, y: 96 },
        tp2: { x: -54, y: 96 },
      }
    }
    case 'fuse': {
      return {
        svg: `<rect x="-120" y="-30" width="44" height="60" rx="4" fill="#c7ccd1"/><rect x="76" y="-30" width="44" height="60" rx="4" fill="#c7ccd1"/>`
          + `<rect x="-100" y="-19" width="200" height="38" rx="10" fill="#dfe7ea" fill-opacity="0.75" stroke="#9fb2b8"/>`
          + `<rect x="-104" y="-20" width="30" height="40" rx="4" fill="#d2d6da"/><rect x="74" y="-20" width="30" height="40" rx="4" fill="#d2d6da"/>`
          + `<line x1="-74" y1="0" x2="74" y2="${n(r.range(-3, 3))}" stroke="#6d6f71" stroke-width="1.6"/>`
          + label(0, -38, `${s.ref}  ${s.marking ?? ''}`, 14),
        tp1: { x: -90, y: 0 },
        tp2: { x: 90, y: 0 },
      }
    }
    case 'toroid': {
      const turns = Array.from({ length: 44 }, (_, i) => {
        const a = (i / 44) * Math.PI * 2
        return `<line x1="${n(Math.cos(a) * 34)}" y1="${n(Math.sin(a) * 34)}" x2="${n(Math.cos(a) * 82)}" y2="${n(Math.sin(a) * 82)}" stroke="#8a4f1c" stroke-width="3"/>`
      }).join('')
      return {
        svg: `<circle cx="0" cy="0" r="80" fill="#b87333"/>${turns}<circle cx="0" cy="0" r="34" fill="#1d5c3a"/>`
          + `<rect x="-8" y="-96" width="16" height="192" rx="4" fill="#f2f2ee" fill-opacity="0.9"/>`
          + `<ellipse cx="62" cy="58" rx="22" ry="14" fill="#e9e6da" fill-opacity="0.8"/>`
          + `<rect x="-70" y="96" width="24" height="18" fill="${PAD}"/><rect x="46" y="96" width="24" height="18" fill="${PAD}"/>`
          + label(0, 134, s.ref, 15),
        tp1: { x: -58, y: 105 },
        tp2: { x: 58, y: 105 },
      }
    }
    case 'ecap': {
      return {
        svg: `<rect x="-92" y="-12" width="24" height="24" fill="${PAD}"/><rect x="68" y="-12" width="24" height="24" fill="${PAD}"/>`
          + `<line x1="-68" y1="0" x2="-40" y2="0" stroke="#b9c0c6" stroke-width="4"/><line x1="40" y1="0" x2="68" y2="0" stroke="#b9c0c6" stroke-width="4"/>`
          + capTop(0, 0, s.ref, 44, r.pick(['#1d3557', '#26355d', '#222b45']), s.marking)
          + icTop(0, -120, 'U1', 8),
        tp1: { x: -80, y: 0 },
        tp2: { x: 80, y: 0 },
      }
    }
    case 'ecap_pair': {
      const [a, b] = s.ref.split(' ')
      return {
        svg: capTop(-78, 0, a ?? 'C10', 56, '#2d2f6b', s.marking) + capTop(78, 0, b ?? 'C11', 56, '#2d2f6b', s.marking)
          + `<rect x="-150" y="-12" width="18" height="24" fill="${PAD}"/><rect x="132" y="-12" width="18" height="24" fill="${PAD}"/>`
          + diodeTop(0, -112, 'D7'),
        tp1: { x: -141, y: 0 },
        tp2: { x: 141, y: 0 },
      }
    }
    case 'resistor_pair': {
      const [a, b] = s.ref.split(' ')
      const smd = (x: number, ref: string) => `<rect x="${x - 30}" y="-12" width="14" height="24" fill="${PAD}"/><rect x="${x + 16}" y="-12" width="14" height="24" fill="${PAD}"/><rect x="${x - 18}" y="-11" width="36" height="22" fill="#151515"/>${label(x, 5, s.marking ?? '', 12, '#f0f0f0')}${label(x, -20, ref, 13)}`
      return {
        svg: `<path d="M -150 0 L -90 0 M -30 0 L 30 0 M 90 0 L 150 0" stroke="#3f9a62" stroke-width="9"/>`
          + smd(-60, a ?? 'R1') + smd(60, b ?? 'R2')
          + `<circle cx="-160" cy="0" r="14" fill="${PAD}"/><circle cx="160" cy="0" r="14" fill="${PAD}"/>`,
        tp1: { x: -160, y: 0 },
        tp2: { x: 160, y: 0 },
      }
    }
    case 'relay': {
      const screws = [-60, 0, 60].map((dx, i) => `<circle cx="190" cy="${dx * 1.1}" r="17" fill="#c8cdd2"/><line x1="${178}" y1="${dx * 1.1}" x2="${202}" y2="${dx * 1.1}" stroke="#6e757c" stroke-width="4"/>${label(236, dx * 1.1 + 5, ['L-in', 'N', 'L-out'][i]!, 14, SILK, 'start')}`).join('')
      return {
        svg: `<rect x="-120" y="-80" width="200" height="150" rx="6" fill="${r.pick(['#1f4e96', '#232629', '#f1f1ec'])}"/>`
          + label(-20, -2, s.marking ?? '', 15, '#c9ced4') + label(-20, 24, s.ref, 18, '#c9ced4')
          + `<rect x="160" y="-96" width="60" height="192" rx="5" fill="#3f6e4f" stroke="#2b4c37"/>${screws}`,
        tp1: { x: 190, y: -66 },
        tp2: { x: 190, y: 66 },
      }
    }
    case 'dfn': {
      return {
        svg: `<rect x="-58" y="-50" width="116" height="100" fill="${PAD}" fill-opacity="0.55"/>`
          + [-36, -12, 12].map(dy => `<rect x="-84" y="${dy - 6}" width="26" height="12" fill="${PAD}"/>`).join('')
          + `<rect x="-50" y="-40" width="100" height="80" rx="3" fill="#17181a"/>${label(0, 6, s.ref, 16, '#9da2a8')}`
          + `<rect x="58" y="-30" width="40" height="60" fill="${PAD}"/>`
          + label(-96, -46, 'S', 14) + label(110, -38, 'D', 14) + icTop(0, -130, 'U3', 6),
        tp1: { x: -72, y: -12 },
        tp2: { x: 80, y: 0 },
      }
    }
  }
}

// ---------------------------------------------------------------------------------------------

function probe(tip: Point, angle: number, body: string, cable: string, r: Dice): string {
  const dx = Math.cos(angle)
  const dy = Math.sin(angle)
  const at = (d: number): Point => ({ x: tip.x + dx * d, y: tip.y + dy * d })
  const needleEnd = at(70)
  const guard = at(82)
  const bodyEnd = at(390)
  const bend = { x: bodyEnd.x + dx * 160 + r.range(-120, 120), y: bodyEnd.y + dy * 160 + r.range(-60, 60) }
  const away = { x: bodyEnd.x + dx * 700, y: bodyEnd.y + dy * 700 }
  const nx = -dy
  const ny = dx
  return [
    `<path d="M ${n(bodyEnd.x)} ${n(bodyEnd.y)} Q ${n(bend.x)} ${n(bend.y)} ${n(away.x)} ${n(away.y)}" stroke="${cable}" stroke-width="12" fill="none" stroke-linecap="round"/>`,
    `<line x1="${n(tip.x)}" y1="${n(tip.y)}" x2="${n(needleEnd.x)}" y2="${n(needleEnd.y)}" stroke="#d7dbe0" stroke-width="5" stroke-linecap="round"/>`,
    `<line x1="${n(needleEnd.x)}" y1="${n(needleEnd.y)}" x2="${n(bodyEnd.x)}" y2="${n(bodyEnd.y)}" stroke="${body}" stroke-width="26" stroke-linecap="round"/>`,
    `<line x1="${n(guard.x - nx * 24)}" y1="${n(guard.y - ny * 24)}" x2="${n(guard.x + nx * 24)}" y2="${n(guard.y + ny * 24)}" stroke="${body}" stroke-width="12" stroke-linecap="round"/>`,
    `<line x1="${n(at(120).x + nx * 6)}" y1="${n(at(120).y + ny * 6)}" x2="${n(at(360).x + nx * 6)}" y2="${n(at(360).y + ny * 6)}" stroke="#ffffff" stroke-opacity="0.18" stroke-width="5" stroke-linecap="round"/>`,
  ].join('')
}

function wrapCaption(text: string, width: number): string[] {
  const lines: string[] = []
  let line = ''
  for (const word of text.split(' ')) {
    if (line && (line.length + 1 + word.length) > width) {
      lines.push(line)
      line = word
    }
    else line = line ? `${line} ${word}` : word
  }
  if (line) lines.push(line)
  return lines
}

function composeBenchPhoto(name: string, caption: string, subject: Subject): string {
  const r = dice(hashName(name))
  const W = DEMO_IMAGE_WIDTH
  const H = DEMO_IMAGE_HEIGHT
  const mat = r.pick(['#2f4858', '#34495e', '#3b4a5a', '#2e5060', '#45505c', '#3a4756'])
  const matLine = '#ffffff'
  const green = r.pick(['#1d5c3a', '#1f6b44', '#17593f', '#245f3a', '#1b4f43', '#2a6a3c'])
  const bw = r.range(800, 880)
  const bh = r.range(470, 520)
  const cx = W / 2 + r.range(-50, 50)
  const cy = (H - CAPTION_HEIGHT) / 2 + r.range(-18, 18)
  const angleDeg = r.range(-7, 7)
  const theta = (angleDeg * Math.PI) / 180

  // Board furniture: traces, mounting holes and a scatter of parts on a grid around the subject.
  const traces: string[] = []
  for (let i = 0; i < r.int(14, 22); i++) {
    let x = r.range(-bw / 2 + 30, bw / 2 - 30)
    let y = r.range(-bh / 2 + 30, bh / 2 - 30)
    let d = `M ${n(x)} ${n(y)}`
    for (let k = 0; k < r.int(2, 4); k++) {
      if (r.next() < 0.5) x = Math.max(-bw / 2 + 24, Math.min(bw / 2 - 24, x + r.range(-260, 260)))
      else y = Math.max(-bh / 2 + 24, Math.min(bh / 2 - 24, y + r.range(-180, 180)))
      d += ` L ${n(x)} ${n(y)}`
    }
    traces.push(`<path d="${d}" stroke="#3d9160" stroke-opacity="0.55" stroke-width="${n(r.range(4, 11))}" fill="none" stroke-linejoin="round"/><circle cx="${n(x)}" cy="${n(y)}" r="7" fill="${PAD}"/>`)
  }
  const holes = [[-1, -1], [1, -1], [-1, 1], [1, 1]].map(([sx, sy]) => `<circle cx="${n(sx! * (bw / 2 - 26))}" cy="${n(sy! * (bh / 2 - 26))}" r="13" fill="${PAD}"/><circle cx="${n(sx! * (bw / 2 - 26))}" cy="${n(sy! * (bh / 2 - 26))}" r="7" fill="${mat}"/>`).join('')

  const parts: string[] = []
  const cols = 6
  const rows = 4
  // Reference designators of the scattered parts start above anything the subject uses.
  let rIndex = r.int(20, 40)
  let cIndex = r.int(20, 40)
  let dIndex = r.int(10, 20)
  let uIndex = r.int(6, 9)
  for (let row = 0; row < rows; row++) {
    for (let col = 0; col < cols; col++) {
      if ((col === 2 || col === 3) && (row === 1 || row === 2)) continue // the subject's place
      if ((col === 0 && row === rows - 1) || (col === cols - 1 && row === 0)) continue // the board's own labels
      if (r.next() < 0.22) continue
      const x = -bw / 2 + (col + 0.5) * (bw / cols) + r.range(-22, 22)
      const y = -bh / 2 + (row + 0.5) * (bh / rows) + r.range(-16, 16)
      const kind = r.int(0, 4)
      if (kind === 0) parts.push(resistorTop(x, y, `R${rIndex++}`, r, r.next() < 0.4))
      else if (kind === 1) parts.push(capTop(x, y, `C${cIndex++}`, r.range(14, 24), r.pick(['#1d3557', '#2d2f6b', '#202020', '#3b2f5c'])))
      else if (kind === 2) parts.push(smallCap(x, y, `C${cIndex++}`))
      else if (kind === 3) parts.push(diodeTop(x, y, `D${dIndex++}`))
      else parts.push(icTop(x, y, `U${uIndex++}`, r.pick([6, 8])))
    }
  }

  const sx = r.range(-40, 40)
  const sy = r.range(-10, 20)
  const drawn = drawSubject(subject, r)
  const tpLocal = [drawn.tp1, drawn.tp2].map(p => ({ x: p.x + sx, y: p.y + sy }))
  const testPoints = tpLocal.map(p => `<circle cx="${n(p.x)}" cy="${n(p.y)}" r="12" fill="none" stroke="#ffe066" stroke-width="3"/><circle cx="${n(p.x)}" cy="${n(p.y)}" r="6" fill="#e3e6e8"/>`).join('')

  const toImage = (p: Point): Point => ({
    x: cx + p.x * Math.cos(theta) - p.y * Math.sin(theta),
    y: cy + p.x * Math.sin(theta) + p.y * Math.cos(theta),
  })
  const [tp1, tp2] = tpLocal.map(toImage) as [Point, Point]
  // The red probe comes in from TP1's side of the frame, the black from TP2's, both from above.
  const redFromLeft = tp1.x <= tp2.x
  const up = -Math.PI / 2
  const redAngle = up + (redFromLeft ? -1 : 1) * r.range(0.45, 0.95)
  const blackAngle = up + (redFromLeft ? 1 : -1) * r.range(0.45, 0.95)
  // Test-point tags go on top of everything, level and below the point, on its outer side.
  const tags = [tp1, tp2].map((p, i) => {
    const text = `TP${i + 1} · ${i === 0 ? subject.tp1 : subject.tp2}`
    const width = 20 + text.length * 9.6
    const outward = (i === 0) === redFromLeft ? -1 : 1
    const x = outward < 0 ? p.x - 14 - width : p.x + 14
    const y = p.y + 18
    return `<rect x="${n(x)}" y="${n(y)}" width="${n(width)}" height="28" rx="6" fill="#101418" fill-opacity="0.82"/>`
      + `<line x1="${n(p.x)}" y1="${n(p.y)}" x2="${n(outward < 0 ? x + width : x)}" y2="${n(y + 14)}" stroke="#ffe066" stroke-width="2"/>`
      + label(x + width / 2, y + 20, text, 15, '#ffe066', 'middle', 'bold')
  }).join('')

  const model = name.split('-')[0]!.toUpperCase()
  const lines = wrapCaption(caption, 84)
  const captionSize = lines.length > 1 ? 20 : 24
  const captionY = H - CAPTION_HEIGHT

  return `<svg xmlns="http://www.w3.org/2000/svg" width="${W}" height="${H}" viewBox="0 0 ${W} ${H}">
<defs>
  <pattern id="mat" width="40" height="40" patternUnits="userSpaceOnUse"><path d="M 40 0 L 0 0 0 40" fill="none" stroke="${matLine}" stroke-opacity="0.07" stroke-width="2"/></pattern>
  <radialGradient id="lamp" cx="${n(0.35 + r.range(0, 0.3))}" cy="0.3" r="0.85"><stop offset="0" stop-color="#ffffff" stop-opacity="0.16"/><stop offset="0.6" stop-color="#000000" stop-opacity="0"/><stop offset="1" stop-color="#000000" stop-opacity="0.45"/></radialGradient>
  <filter id="soft" x="-20%" y="-20%" width="140%" height="140%"><feGaussianBlur stdDeviation="16"/></filter>
</defs>
<rect width="${W}" height="${H}" fill="${mat}"/>
<rect width="${W}" height="${H}" fill="url(#mat)"/>
<g transform="translate(${n(cx + 16)} ${n(cy + 22)}) rotate(${n(angleDeg)})"><rect x="${n(-bw / 2)}" y="${n(-bh / 2)}" width="${n(bw)}" height="${n(bh)}" rx="16" fill="#000000" fill-opacity="0.5" filter="url(#soft)"/></g>
<g transform="translate(${n(cx)} ${n(cy)}) rotate(${n(angleDeg)})">
  <rect x="${n(-bw / 2)}" y="${n(-bh / 2)}" width="${n(bw)}" height="${n(bh)}" rx="16" fill="${green}" stroke="#0f3a24" stroke-width="3"/>
  ${traces.join('')}
  ${holes}
  ${parts.join('')}
  <g transform="translate(${n(sx)} ${n(sy)})">${drawn.svg}</g>
  ${testPoints}
  ${label(-bw / 2 + 40, bh / 2 - 22, `${model} REV C`, 16, SILK, 'start', 'bold')}
  ${label(bw / 2 - 60, -bh / 2 + 34, subject.ref, 18, SILK, 'end', 'bold')}
</g>
${probe(tp2, blackAngle, '#1e1f21', '#111213', r)}
${probe(tp1, redAngle, '#c62828', '#8e1b1b', r)}
${tags}
<rect width="${W}" height="${H}" fill="url(#lamp)"/>
<g transform="translate(${W - 170} 40)"><line x1="0" y1="0" x2="100" y2="0" stroke="#f4f4ef" stroke-width="4"/><line x1="0" y1="-8" x2="0" y2="8" stroke="#f4f4ef" stroke-width="3"/><line x1="100" y1="-8" x2="100" y2="8" stroke="#f4f4ef" stroke-width="3"/>${label(50, 28, '10 mm', 15)}</g>
<rect x="0" y="${captionY}" width="${W}" height="${CAPTION_HEIGHT}" fill="#101418" fill-opacity="0.93"/>
${lines.slice(0, 2).map((line, i) => label(28, captionY + 34 + i * 25, line, captionSize, '#f2f2f2', 'start')).join('')}
${label(28, captionY + CAPTION_HEIGHT - 12, `Harbour Lane Repair Co-op · demo bench photo (drawn) · ${name}`, 14, '#93a4b4', 'start')}
</svg>`
}
