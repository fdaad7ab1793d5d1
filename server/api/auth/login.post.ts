import { LoginBody } from '#shared/types/auth'
import { authenticate, toUserDto } from '../../services/accounts'

export default defineEventHandler(async (event) => {
  const body = await readValidatedBody(event, parseWith(LoginBody))
  const user = await authenticate(body.email, body.password, clientIp(event), { verify: verifyPassword, hash: hashPassword })
  await startSession(event, user)
  return { user: toUserDto(user) }
})
