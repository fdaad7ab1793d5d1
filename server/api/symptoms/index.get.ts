import { listSymptoms } from '../../services/vocabulary'

export default defineEventHandler(async (event) => {
  await requireUser(event)
  return { data: await listSymptoms() }
})
