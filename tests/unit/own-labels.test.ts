import { readdirSync, readFileSync } from 'node:fs'
import { join, relative } from 'node:path'
import { describe, expect, it } from 'vitest'

// Benchlore's labels are its own (contributor guide, "Labels of our own"): wording that together
// with the rest would recall another program stays out of every page, component and shared label.

const RETIRED = [
  'out of the waste stream',
  'what a good unit looks like',
  'what this fault looks like',
  'confirmed in',
  'mark as settled',
  '>write<',
  '>preview<',
]

const ROOTS = ['app', 'shared']

function sourceFiles(dir: string): string[] {
  return readdirSync(dir, { withFileTypes: true }).flatMap((e) => {
    const path = join(dir, e.name)
    if (e.isDirectory()) return sourceFiles(path)
    return /\.(vue|ts|css)$/.test(e.name) ? [path] : []
  })
}

describe('labels of our own', () => {
  const files = ROOTS.flatMap(r => sourceFiles(join(process.cwd(), r)))

  it('reads the sources it checks', () => {
    expect(files.some(f => f.endsWith('dashboard.vue'))).toBe(true)
    expect(files.some(f => f.endsWith('captures.ts'))).toBe(true)
  })

  it.each(RETIRED)('no source says "%s"', (phrase) => {
    // Whitespace and line breaks inside a template, or around a tag's text, do not hide a phrase.
    const found = files.filter(f => readFileSync(f, 'utf8').replace(/\s+/g, ' ').replace(/> | </g, m => m.trim()).toLowerCase().includes(phrase)).map(f => relative(process.cwd(), f))
    expect(found).toEqual([])
  })
})
