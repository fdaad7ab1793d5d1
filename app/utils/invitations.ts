import type { InvitationSentDto, InvitationWithdrawnDto } from '#shared/types/auth'

// The two things an admin can do with an invitation not yet accepted, each answering the
// sentence the people page shows afterwards.

/** Sends a new link; the earlier one stops working. */
export async function sendNewInvitationLink(userId: number, email: string): Promise<string> {
  const sent = await $fetch<InvitationSentDto>(`/api/users/${userId}/invitation`, { method: 'POST' })
  return sent.replaced
    ? `A new link went to ${email}, valid for 72 hours. The earlier link no longer works.`
    : `A new link went to ${email}, valid for 72 hours.`
}

/** Withdraws the open invitation: its link stops working. */
export async function withdrawInvitation(userId: number, email: string): Promise<string> {
  await $fetch<InvitationWithdrawnDto>(`/api/users/${userId}/invitation`, { method: 'DELETE' })
  return `The invitation to ${email} is withdrawn: its link no longer works.`
}
