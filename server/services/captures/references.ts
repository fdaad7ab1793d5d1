import type { MatchGroupDto, ReferenceBody, ReferenceDto, SignatureMatchDto } from '../../../shared/types/captures'
import { groupRanked, rankSignatures } from '../../../shared/utils/waveform/signature'
import { Capture, Procedure, Revision, SignatureReference, User } from '../../db'
import { invalid, notFound } from '../errors'

async function referenceDtos(refs: SignatureReference[]): Promise<ReferenceDto[]> {
  const procs = await Procedure.findAll({ where: { id: [...new Set(refs.map(r => r.procedureId))] } })
  const revs = await Revision.findAll({ where: { id: procs.map(p => p.publishedRevisionId).filter((x): x is number => !!x) } })
  const people = new Map((await User.findAll({ where: { id: refs.map(r => r.createdById) }, attributes: ['id', 'name'], raw: true })).map(u => [u.id, u]))
  return refs.map((r) => {
    const p = procs.find(x => x.id === r.procedureId)
    const title = revs.find(x => x.procedureId === r.procedureId)?.content.title ?? p?.slug ?? ''
    return { id: r.id, captureId: r.captureId, kind: r.kind, note: r.note, procedure: { slug: p?.slug ?? '', title }, stepKey: r.stepKey, symptom: r.symptom, createdBy: people.get(r.createdById) ?? { id: r.createdById, name: 'Unknown' } }
  })
}

/** The references made from one capture. */
export async function referencesOfCapture(captureId: number): Promise<ReferenceDto[]> {
  return await referenceDtos(await SignatureReference.findAll({ where: { captureId } }))
}

export async function addReference(capture: Capture, input: ReferenceBody, actor: User): Promise<ReferenceDto> {
  const proc = await Procedure.findOne({ where: { slug: input.procedureSlug } })
  const rev = proc?.publishedRevisionId ? await Revision.findByPk(proc.publishedRevisionId) : null
  if (!proc || !rev) throw invalid(`"${input.procedureSlug}" is not a live procedure.`, { procedureSlug: 'not a live procedure' })
  if (input.stepKey && !rev.content.steps.some(s => s.key === input.stepKey)) throw invalid(`The procedure has no step "${input.stepKey}".`, { stepKey: 'no such step' })
  if (input.symptom && !rev.content.symptoms.includes(input.symptom)) throw invalid(`The procedure does not list the symptom "${input.symptom}".`, { symptom: 'not a symptom of this procedure' })
  const ref = await SignatureReference.create({ captureId: capture.id, procedureId: proc.id, stepKey: input.stepKey ?? null, symptom: input.symptom ?? null, kind: input.kind, note: input.note, createdById: actor.id })
  return (await referenceDtos([ref]))[0]!
}

export async function listReferences(procedureSlug: string): Promise<ReferenceDto[]> {
  const proc = await Procedure.findOne({ where: { slug: procedureSlug } })
  if (!proc) throw notFound('procedure')
  return await referenceDtos(await SignatureReference.findAll({ where: { procedureId: proc.id }, order: [['id', 'ASC']] }))
}

const MAX_GROUPS = 20

/**
 * Reference signatures of live procedures ranked by distance to this capture
 * (shared/utils/waveform/signature.ts), gathered per procedure: its nearest reference first.
 */
export async function matchCapture(capture: Capture): Promise<MatchGroupDto[]> {
  const refs = await SignatureReference.findAll({
    include: [{ model: Procedure, as: 'procedure', where: { status: 'active' }, required: true, attributes: ['id'] }],
  })
  const others = refs.filter(r => r.captureId !== capture.id)
  const captures = new Map((await Capture.findAll({ where: { id: [...new Set(others.map(r => r.captureId))] }, attributes: ['id', 'features'] })).map(c => [c.id, c.features]))
  const ranked = rankSignatures(capture.features, others.map(r => ({ id: r.id, features: captures.get(r.captureId)! })).filter(r => r.features))
  const dtos = new Map((await referenceDtos(others)).map(d => [d.id, d]))
  const matches: SignatureMatchDto[] = ranked.map((m) => {
    const reference = dtos.get(m.id)!
    const f = captures.get(reference.captureId)!
    return { reference, distance: m.distance, similarity: m.similarity, features: { cutType: f.cutType, vrms: f.vrms, conductionAngleDeg: f.conductionAngleDeg, asymmetry: f.asymmetry, thd: f.thd } }
  })
  return groupRanked(matches, m => m.reference.procedure.slug).slice(0, MAX_GROUPS).map(group => ({
    procedure: group[0]!.reference.procedure,
    similarity: group[0]!.similarity,
    matches: group,
  }))
}
