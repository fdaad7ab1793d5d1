import { listUsers } from '../../services/accounts'

export default defineEventHandler(async (event) => {
  await requireRole(event, 'admin')
  return { data: await listUsers() }
})
