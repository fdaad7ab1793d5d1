import { config } from 'zod'

// Zod compiles object parsers with `new Function` when it can, and finds out by trying. The page
// policy allows no eval (server/plugins/page-security.ts), so the browser would refuse the try
// and report it as a violation; parsing without compiling is as correct and fast enough for
// forms. Set when this module loads, before any page's schemas are built (pages load later).
config({ jitless: true })

export default defineNuxtPlugin(() => {})
