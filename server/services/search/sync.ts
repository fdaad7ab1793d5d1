import { Op, QueryTypes } from 'sequelize'
import { ChangeLogEntry, DeviceType, Procedure, Revision, Symptom, useDb } from '../../db'
import { toSearchDocument } from './document'
import { unavailable } from '../errors'
import { mergedSymptomSlugs } from '../vocabulary'
import { ProcedureSearchIndex } from './engine'
import type { EvidenceLookup, SearchRequest, SearchResponse, SearchVocabulary } from './types'

/** How long an id of the change log is read for again after this instance first saw it. */
const SETTLE_MS = 5 * 60_000

/**
 * This instance's search index over the published procedures, kept in step with MariaDB:
 * built at start, then every few seconds it reads the change log (written in the same
 * transactions as publish, retire, vocabulary and record changes) and applies only what changed.
 * Each app instance runs one; none needs to hear from another.
 *
 * Ids do not arrive in order: a transaction can commit after another that took a higher id, and
 * a Galera cluster interleaves ids across nodes. So the log is not followed past the highest id
 * seen: every poll reads all ids above `settled` that it has not applied yet, and `settled` moves
 * only past ids seen at least `settleMs` ago. A lower id still missing then belongs to a
 * transaction that took its id before one committed that long ago: far longer than any
 * transaction here runs (inTransaction re-runs a failed one with new ids).
 */
export class SearchSync {
  readonly index = new ProcedureSearchIndex()
  /** Every change-log id at or below it has been applied (or was never committed). */
  private settled = 0
  /** Ids above `settled` already applied, with when this instance first saw them. */
  private applied = new Map<number, number>()
  private vocabulary: SearchVocabulary = { symptoms: [], deviceTypes: [] }
  private evidence = new Map<number, Map<string, number>>()
  private evidenceTotals = new Map<string, number>()
  private ready: Promise<void> | null = null
  private polling = false

  constructor(private readonly settleMs = SETTLE_MS) {}

  /** How often a procedure's causes were confirmed for the queried symptoms, out of all confirmed records with them. */
  readonly evidenceLookup: EvidenceLookup = (docId, symptoms) => {
    const mine = this.evidence.get(docId)
    let confirmed = 0
    let total = 0
    for (const s of symptoms) {
      confirmed += mine?.get(s) ?? 0
      total += this.evidenceTotals.get(s) ?? 0
    }
    return total ? { confirmed, total } : undefined
  }

  /** Loads the index once; a failed load (database away) can be started again. */
  start(): Promise<void> {
    this.ready ??= this.load().catch((error) => {
      this.ready = null
      throw error
    })
    return this.ready
  }

  async whenReady(timeoutMs = 15_000): Promise<boolean> {
    const ready = this.start().then(() => true, () => false)
    return await Promise.race([ready, new Promise<boolean>(r => setTimeout(() => r(false), timeoutMs))])
  }

  /**
   * Answers a search, weighing hits by repair evidence. While the index is still being built
   * (or the database has not answered yet) this waits a while, then throws `unavailable`.
   */
  async search(request: SearchRequest): Promise<SearchResponse> {
    if (!(await this.whenReady())) throw unavailable('The search index is still being built; try again in a moment.')
    return this.index.search(request, { evidence: this.evidenceLookup })
  }

  private async load() {
    // The log is read before the documents, so what it holds is in them and a change committed
    // meanwhile is applied by the next poll. Below the newest entry older than the settling time
    // (by its own timestamp: there is no earlier sighting to go by) every id is settled.
    const old = await ChangeLogEntry.findOne({ where: { createdAt: { [Op.lt]: new Date(Date.now() - this.settleMs) } }, order: [['id', 'DESC']], attributes: ['id'] })
    this.settled = old?.id ?? 0
    const recent = await ChangeLogEntry.findAll({ where: { id: { [Op.gt]: this.settled } }, attributes: ['id'], raw: true })
    const now = Date.now()
    this.applied = new Map(recent.map(e => [e.id, now]))
    await this.loadVocabulary()
    this.index.setVocabulary(this.vocabulary)
    const [docs] = await Promise.all([this.loadDocuments(), this.loadEvidence()])
    await this.index.buildAsync(docs)
  }

  private async loadVocabulary() {
    const [symptoms, types] = await Promise.all([
      Symptom.findAll({ where: { status: { [Op.ne]: 'merged' } } }),
      DeviceType.findAll(),
    ])
    this.vocabulary = {
      symptoms: symptoms.map(s => ({ slug: s.slug, name: s.name, synonyms: s.synonyms })),
      deviceTypes: types.map(t => ({ slug: t.slug, name: t.name })),
    }
  }

  private async loadDocuments(procedureIds?: number[]) {
    const revisions = await Revision.findAll({
      where: { state: 'published', ...(procedureIds ? { procedureId: procedureIds } : {}) },
      include: [{ model: Procedure, as: 'procedure', where: { status: 'active' }, required: true, attributes: ['id', 'slug', 'publishedRevisionId'] }],
    })
    return revisions.map((r) => {
      const proc = (r as Revision & { procedure: Procedure }).procedure
      return toSearchDocument(proc.id, proc.slug, this.resolveMerged(r.content), this.vocabulary, r.publishedAt?.toISOString())
    })
  }

  /** Revisions keep the symptom slugs they were written with; a merged one is read as its target. */
  private mergedInto = new Map<string, string>()
  private resolveMerged<T extends { symptoms: string[] }>(content: T): T {
    if (!this.mergedInto.size) return content
    return { ...content, symptoms: [...new Set(content.symptoms.map(s => this.mergedInto.get(s) ?? s))] }
  }

  private async loadMerged() {
    this.mergedInto = await mergedSymptomSlugs()
  }

  private async loadEvidence() {
    await this.loadMerged()
    const rows = await useDb().query<{ pid: number, symptom: string, n: number }>(
      `SELECT r.cause_procedure_id AS pid, s.symptom AS symptom, COUNT(*) AS n
       FROM repair_records r JOIN record_symptoms s ON s.record_id = r.id
       WHERE r.status = 'closed' AND r.cause_key IS NOT NULL
       GROUP BY r.cause_procedure_id, s.symptom`,
      { type: QueryTypes.SELECT },
    )
    const evidence = new Map<number, Map<string, number>>()
    const totals = new Map<string, number>()
    for (const row of rows) {
      const n = Number(row.n)
      if (!evidence.has(row.pid)) evidence.set(row.pid, new Map())
      evidence.get(row.pid)!.set(row.symptom, n)
      totals.set(row.symptom, (totals.get(row.symptom) ?? 0) + n)
    }
    this.evidence = evidence
    this.evidenceTotals = totals
  }

  /** Applies the entries of the change log not applied yet. Returns how many it applied. */
  async poll(): Promise<number> {
    if (this.polling || !this.ready) return 0
    this.polling = true
    try {
      await this.ready
      const known = [...this.applied.keys()]
      const entries = await ChangeLogEntry.findAll({
        where: { id: { [Op.gt]: this.settled, ...(known.length ? { [Op.notIn]: known } : {}) } },
        order: [['id', 'ASC']],
        limit: 2000,
      })
      if (entries.length) await this.apply(entries)
      this.settle()
      return entries.length
    }
    finally {
      this.polling = false
    }
  }

  private async apply(entries: ChangeLogEntry[]) {
    const procedures = new Set<number>()
    let vocabulary = false
    let evidence = false
    for (const e of entries) {
      if (e.kind === 'procedure' && e.procedureId) procedures.add(e.procedureId)
      if (e.kind === 'vocabulary') vocabulary = true
      if (e.kind === 'evidence') evidence = true
    }
    if (vocabulary) {
      await this.loadVocabulary()
      await this.loadMerged()
      this.index.setVocabulary(this.vocabulary)
    }
    if (evidence) await this.loadEvidence()
    if (procedures.size) {
      const docs = await this.loadDocuments([...procedures])
      const live = new Set(docs.map(d => d.id))
      for (const d of docs) this.index.upsert(d)
      for (const id of procedures) if (!live.has(id)) this.index.discard(id)
    }
    const now = Date.now()
    for (const e of entries) this.applied.set(e.id, now)
  }

  /** Moves `settled` up past the lowest applied ids that were first seen long enough ago. */
  private settle() {
    const horizon = Date.now() - this.settleMs
    for (const id of [...this.applied.keys()].sort((a, b) => a - b)) {
      if (this.applied.get(id)! > horizon) break
      this.settled = id
      this.applied.delete(id)
    }
  }
}
