import type { MeasurementSpec } from '../../../shared/types/measurement'
import type { RevisionContent } from '../../../shared/types/procedure'
import type { ReadingResultDto, RecordDto } from '../../../shared/types/records'
import { isPassingVerdict, verdictCauses } from '../../../shared/types/verdicts'
import { evaluateReading } from '../../../shared/utils/readings'
import type { RepairRecord } from '../../db'
import { Attachment, DeviceType, Procedure, RecordAmendment, Revision, Symptom, User } from '../../db'
import { recordReasoning } from '../diagnosis/record'
import { candidateCauses, causeId } from '../evidence/causes'
import { renderContent } from '../procedures/dto'
import { toAttachmentDto } from '../uploads/attachments'
import { canAmendRecord, canEditRecord, findRecord } from './access'

/** Stored cents as the euros the API shows. */
export const eur = (c: number | null) => (c === null ? null : c / 100)

function evaluateStep(step: RevisionContent['steps'][number] | undefined, value: string): ReadingResultDto {
  const empty = { value, verdict: null, pass: null, display: null, error: null, raises: [], question: null, suggestion: null }
  if (!step?.measurement || !value.trim()) return empty
  const r = evaluateReading(value, step.measurement as MeasurementSpec, [], { ask: true })
  if (!r.ok) return { ...empty, error: r.error }
  if (r.verdict === null) return { ...empty, display: r.parsed.display, question: r.question, suggestion: r.suggestion }
  return { value, verdict: r.verdict, pass: r.pass, display: r.parsed.display, error: null, raises: r.pass ? [] : verdictCauses(step, r.verdict), question: null, suggestion: null }
}

export async function toRecordDto(r: RepairRecord, user: User): Promise<RecordDto> {
  const [proc, rev, tech, type, symptomRows, amendments, photos] = await Promise.all([
    r.procedureId ? Procedure.findByPk(r.procedureId) : null,
    r.revisionId ? Revision.findByPk(r.revisionId) : null,
    User.findByPk(r.technicianId, { attributes: ['id', 'name'] }),
    DeviceType.findOne({ where: { slug: r.deviceType } }),
    Symptom.findAll({ where: { slug: r.symptoms }, attributes: ['slug', 'name'], raw: true }),
    RecordAmendment.findAll({ where: { recordId: r.id }, order: [['id', 'ASC']] }),
    r.photoIds.length ? Attachment.findAll({ where: { id: r.photoIds, kind: 'image' } }) : [],
  ])
  const content = rev?.content
  const candidates = await candidateCauses({ deviceType: r.deviceType, symptoms: r.symptoms, procedureId: r.procedureId ?? undefined })
  const label = new Map(candidates.map(c => [causeId(c.procedureSlug, c.causeKey), c.label]))
  const steps: RecordDto['steps'] = {}
  const raisedCount = new Map<string, number>()
  for (const [key, s] of Object.entries(r.steps)) {
    const step = content?.steps.find(st => st.key === key)
    const verdict = s.verdict ?? null
    steps[key] = { value: s.value, note: s.note, done: s.done, verdict, readAt: s.readAt ?? null, result: evaluateStep(step, s.value) }
    // Failing verdicts of checks as well as of readings raise the causes they name.
    if (proc && step && verdict && !isPassingVerdict(step, verdict)) for (const c of verdictCauses(step, verdict)) raisedCount.set(causeId(proc.slug, c), (raisedCount.get(causeId(proc.slug, c)) ?? 0) + 1)
  }
  let confirmed: RecordDto['confirmedCause'] = null
  if (r.causeKey && r.causeProcedureId) {
    const cp = r.causeProcedureId === proc?.id ? proc : await Procedure.findByPk(r.causeProcedureId)
    const id = causeId(cp?.slug ?? String(r.causeProcedureId), r.causeKey)
    confirmed = { id, label: label.get(id) ?? r.causeKey }
  }
  const people = new Map((await User.findAll({ where: { id: amendments.map(a => a.authorId) }, attributes: ['id', 'name'], raw: true })).map(u => [u.id, u]))
  const symptomName = new Map(symptomRows.map(s => [s.slug, s.name]))
  return {
    id: r.id,
    status: r.status,
    procedure: proc && content ? { id: proc.id, slug: proc.slug, title: content.title } : null,
    revision: rev ? { id: rev.id, number: rev.number ?? 0 } : null,
    deviceType: { slug: r.deviceType, name: type?.name ?? r.deviceType },
    symptoms: r.symptoms.map(s => ({ slug: s, name: symptomName.get(s) ?? s })),
    unit: { model: r.unitModel, serial: r.unitSerial, jobRef: r.jobRef },
    technician: { id: r.technicianId, name: tech?.name ?? 'Unknown' },
    steps,
    notes: r.notes,
    raised: [...raisedCount].map(([cause, readings]) => ({ cause, label: label.get(cause) ?? cause, readings })).sort((a, b) => b.readings - a.readings),
    confirmedCause: confirmed,
    outcome: r.outcome,
    parts: r.parts,
    partsCost: r.partsCostCents / 100,
    minutes: r.minutes,
    replacementCost: eur(r.replacementCostCents),
    photos: photos.map(p => ({ id: p.id, url: toAttachmentDto(p).url, thumbnailUrl: toAttachmentDto(p).thumbnailUrl })),
    comeback: r.comeback,
    version: r.version,
    startedAt: r.startedAt.toISOString(),
    closedAt: r.closedAt?.toISOString() ?? null,
    amendments: amendments.map(a => ({ id: a.id, author: people.get(a.authorId) ?? { id: a.authorId, name: 'Unknown' }, reason: a.reason, changes: a.changes, createdAt: a.createdAt.toISOString() })),
    candidates: candidates.map(c => ({ id: causeId(c.procedureSlug, c.causeKey), label: c.label, procedureSlug: c.procedureSlug })),
    guide: rev && content ? { content, rendered: renderContent(content), attachments: await attachmentsOfContent(content) } : null,
    can: { edit: canEditRecord(user, r), close: canEditRecord(user, r), amend: canAmendRecord(user, r) },
    closeDraft: r.status === 'in_progress' ? r.closeDraft : null,
    reasoning: proc && rev && content ? await recordReasoning(r, { procedureId: proc.id, slug: proc.slug, content }) : null,
  }
}

async function attachmentsOfContent(content: RevisionContent) {
  const ids = [...new Set(content.steps.flatMap(s => s.imageIds ?? []))]
  if (!ids.length) return {}
  return Object.fromEntries((await Attachment.findAll({ where: { id: ids } })).map(a => [String(a.id), toAttachmentDto(a)]))
}

/** One record as its page shows it (every signed-in person reads every record). */
export async function readRecord(id: number, user: User): Promise<RecordDto> {
  return await toRecordDto(await findRecord(id), user)
}
