import { generateCorpus } from '../server/services/search/corpus'
import { ProcedureSearchIndex } from '../server/services/search/engine'
const corpus = generateCorpus(10_000, 42)
for (let b = 0; b < 2; b++) {
  const idx = new ProcedureSearchIndex(corpus.vocabulary)
  const t0 = performance.now()
  idx.build(corpus.docs)
  console.log('build', (performance.now() - t0).toFixed(0), 'ms')
}
