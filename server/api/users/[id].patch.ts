import { z } from 'zod'
import { UserPatchBody, type AdminUserSavedDto } from '#shared/types/auth'
import { adminUserDto, updateUser } from '../../services/accounts/users'

const Params = z.object({ id: z.coerce.number().int().positive() })

export default defineEventHandler(async (event) => {
  const actor = await requireRole(event, 'admin')
  const { id } = await getValidatedRouterParams(event, parseWith(Params))
  const patch = await readValidatedBody(event, parseWith(UserPatchBody))
  const user = await updateUser(id, patch, actor)
  return { user: await adminUserDto(user) } satisfies AdminUserSavedDto
})
