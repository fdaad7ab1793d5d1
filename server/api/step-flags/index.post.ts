import { StepFlagBody, type StepFlagRaisedDto } from '#shared/types/records'
import { flagStep } from '../../services/records/step-flags'

export default defineEventHandler(async (event) => {
  const actor = await requireUser(event)
  const body = await readValidatedBody(event, parseWith(StepFlagBody))
  const flag = await flagStep(body, actor, useRuntimeConfig().appOrigin)
  setResponseStatus(event, 201)
  return { flag: { id: flag.id, stepKey: flag.stepKey, kind: flag.kind } } satisfies StepFlagRaisedDto
})
