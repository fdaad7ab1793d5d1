import { SearchSync } from '../services/search/sync'

// One index per server process (see server/plugins/search.ts).
let sync: SearchSync | undefined

export function useSearch(): SearchSync {
  sync ??= new SearchSync()
  return sync
}
