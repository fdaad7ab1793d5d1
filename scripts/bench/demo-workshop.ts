import { Procedure, Revision, User } from '../../server/db'
import { ObjectStore, s3ConfigFromEnv } from '../../server/services/storage'
import { seedProcedures, seedVocabulary } from '../seed/procedures'
import { seedDemoUsers } from '../seed/users'
import { DEMO_RECORD_PROFILE } from '../seed/demo-content'

/**
 * The demo workshop in a bench database: its people, vocabulary and procedures, then each live
 * procedure that has a record profile (with its published revision) and the technicians, from
 * which a bench draws its synthetic records.
 *
 * @example
 * const { live, techs } = await seedBenchWorkshop()
 * const { rev, proc } = live[0]! // DEMO_RECORD_PROFILE[proc.slug] is defined
 */
export async function seedBenchWorkshop() {
  const users = await seedDemoUsers()
  await seedVocabulary()
  await seedProcedures(users as never, new ObjectStore(s3ConfigFromEnv()))
  const procs = await Procedure.findAll({ where: { status: 'active' } })
  const revs = await Revision.findAll({ where: { id: procs.map(p => p.publishedRevisionId).filter((x): x is number => !!x) } })
  const live = revs.map(r => ({ rev: r, proc: procs.find(p => p.id === r.procedureId)! })).filter(x => DEMO_RECORD_PROFILE[x.proc.slug])
  const techs = await User.findAll({ where: { role: 'technician' } })
  return { live, techs }
}
