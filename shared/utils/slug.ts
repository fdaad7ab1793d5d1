/** URL slug of a name: lowercase ASCII words joined by dashes ("Does not dim" → "does-not-dim"). */
export function slugify(text: string, maxLength = 80): string {
  const slug = text
    .normalize('NFKD')
    .replace(/[\u0300-\u036F]/g, '')
    .replace(/ł/g, 'l').replace(/Ł/g, 'L').replace(/ø/g, 'o').replace(/ß/g, 'ss')
    .toLowerCase()
    .replace(/[^a-z0-9]+/g, '-')
    .replace(/^-+|-+$/g, '')
    .slice(0, maxLength)
    .replace(/-+$/g, '')
  return slug || 'item'
}
