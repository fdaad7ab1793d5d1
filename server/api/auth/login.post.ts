import { LoginBody, type MeDto } from '#shared/types/auth'
import { authenticate } from '../../services/accounts/sign-in'
import { toUserDto } from '../../services/accounts/users'

export default defineEventHandler(async (event) => {
  const body = await readValidatedBody(event, parseWith(LoginBody))
  const user = await authenticate(body.email, body.password, clientIp(event), { verify: verifyPassword, hash: hashPassword })
  await startSession(event, user)
  return { user: toUserDto(user) } satisfies MeDto
})
