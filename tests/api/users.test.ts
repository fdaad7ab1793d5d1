import { randomBytes } from 'node:crypto'
import { describe, expect, it } from 'vitest'
import { Invitation, OutboxMessage, User } from '../../server/db'
import { ApiClient, DEMO, signedIn } from '../helpers/api'
import { makeUser, testDb } from '../helpers/db'
import { capturedMail, services, waitForMail, waitUntil } from '../helpers/stack'

const linkIn = (text: string) => text.match(/https?:\/\/\S+\/invite\/([\w-]+)/)

describe('invitations', () => {
  it('invites by e-mail; the invitee follows the link, sets a password and is signed in', async () => {
    const admin = await signedIn(DEMO.admin)
    const email = `invitee-${randomBytes(3).toString('hex')}@test.example`
    const sent = await admin.post('/api/users/invite', { email, role: 'author' })
    expect(sent.status).toBe(201)

    const mail = await waitForMail(m => m.to.includes(email))
    expect(mail.subject).toMatch(/invited you to Benchlore/)
    const token = linkIn(mail.text)?.[1]
    expect(token).toBeTruthy()

    const anon = new ApiClient()
    const view = await anon.get(`/api/invitations/${token}`)
    expect(view.body).toMatchObject({ status: 'valid', email, role: 'author' })

    const short = await anon.post('/api/invitations/accept', { token, name: 'New Author', password: 'short' })
    expect(short.status).toBe(400)
    expect(short.body.data.fields).toHaveProperty('password')

    const done = await anon.post('/api/invitations/accept', { token, name: 'New Author', password: 'a-long-enough-passphrase' })
    expect(done.status).toBe(200)
    expect((await anon.get('/api/me')).body.user).toMatchObject({ email, role: 'author', name: 'New Author' })
    expect((await new ApiClient().post('/api/auth/login', { email, password: 'a-long-enough-passphrase' })).status).toBe(200)

    const reused = await new ApiClient().post('/api/invitations/accept', { token, name: 'Someone Else', password: 'another-long-passphrase' })
    expect(reused.status).toBe(410)
    expect((await new ApiClient().get(`/api/invitations/${token}`)).body.status).toBe('used')

    const again = await admin.post('/api/users/invite', { email, role: 'technician' })
    expect(again.status).toBe(409)
  })

  it('an expired link says so and cannot be used', async () => {
    const admin = await signedIn(DEMO.admin)
    const email = `late-${randomBytes(3).toString('hex')}@test.example`
    expect((await admin.post('/api/users/invite', { email, role: 'technician' })).status).toBe(201)
    const mail = await waitForMail(m => m.to.includes(email))
    const token = linkIn(mail.text)![1]!
    testDb()
    const user = await User.findOne({ where: { email } })
    await Invitation.update({ expiresAt: new Date(Date.now() - 1000) }, { where: { userId: user!.id } })
    expect((await new ApiClient().get(`/api/invitations/${token}`)).body.status).toBe('expired')
    expect((await new ApiClient().post('/api/invitations/accept', { token, name: 'Too Late', password: 'a-long-enough-passphrase' })).status).toBe(410)
  })

  it('keeps the invitation mail while SMTP is down and delivers it after recovery (outbox)', async () => {
    const admin = await signedIn(DEMO.admin)
    const email = `outage-${randomBytes(3).toString('hex')}@test.example`
    testDb()
    await services.stopMail()
    try {
      expect((await admin.post('/api/users/invite', { email, role: 'technician' })).status).toBe(201)
      // The worker tried to send it and failed: the message waits in the outbox with the error.
      await waitUntil('a failed send attempt', async () => {
        const row = await OutboxMessage.findOne({ where: { toAddress: email } })
        return !!row && row.attempts >= 1 && row.lastError !== null
      })
      const waiting = await OutboxMessage.findOne({ where: { toAddress: email } })
      expect([waiting?.status, waiting?.sentAt]).toEqual(['pending', null])
      expect(capturedMail().some(m => m.to.includes(email)), 'nothing reached the mail catcher while it was down').toBe(false)
    }
    finally {
      await services.startMail()
    }
    const mail = await waitForMail(m => m.to.includes(email), 30_000)
    expect(linkIn(mail.text)).toBeTruthy()
    await waitUntil('the outbox row marked sent', async () => (await OutboxMessage.findOne({ where: { toAddress: email } }))?.status === 'sent')
    const sent = await OutboxMessage.findOne({ where: { toAddress: email } })
    expect(sent!.attempts, 'sent on a retry after the failed attempt').toBeGreaterThanOrEqual(2)
  })
})

/** Invites a fresh address as `role` and answers its user id and the link's token from the mail. */
async function invited(admin: ApiClient, role: string, label: string) {
  const email = `${label}-${randomBytes(3).toString('hex')}@test.example`
  const sent = await admin.post('/api/users/invite', { email, role })
  expect(sent.status, JSON.stringify(sent.body)).toBe(201)
  const mail = await waitForMail(m => m.to.includes(email))
  return { email, id: sent.body.user.id as number, token: linkIn(mail.text)![1]!, mail }
}

describe('invitations and the admin\'s later decisions', () => {
  it('sends the link as a link: an HTML part beside the text part, both with the same address', async () => {
    const admin = await signedIn(DEMO.admin)
    const { mail, token } = await invited(admin, 'technician', 'html')
    expect(mail.html, 'the message has an HTML part').toBeTruthy()
    const href = mail.html!.match(/<a href="([^"]+)"/)?.[1]
    expect(href).toMatch(new RegExp(`/invite/${token}$`))
    expect(mail.text).toContain(href)
  })

  it('a deactivated invitee cannot activate the account by accepting', async () => {
    const admin = await signedIn(DEMO.admin)
    const { email, id, token } = await invited(admin, 'author', 'deactivated')
    expect((await admin.patch(`/api/users/${id}`, { active: false })).status).toBe(200)
    expect((await new ApiClient().get(`/api/invitations/${token}`)).body.status).toBe('withdrawn')
    const accept = await new ApiClient().post('/api/invitations/accept', { token, name: 'Let Me In', password: 'a-long-enough-passphrase' })
    expect(accept.status).toBe(410)
    testDb()
    const user = await User.findByPk(id)
    expect([user!.active, user!.passwordHash]).toEqual([false, null])
    expect((await new ApiClient().post('/api/auth/login', { email, password: 'a-long-enough-passphrase' })).status).toBe(401)
  })

  it('an invitee demoted before accepting does not get the invited role back', async () => {
    const admin = await signedIn(DEMO.admin)
    const { id, token } = await invited(admin, 'editor', 'demoted')
    expect((await admin.patch(`/api/users/${id}`, { role: 'technician' })).status).toBe(200)
    const accept = await new ApiClient().post('/api/invitations/accept', { token, name: 'Was Editor', password: 'a-long-enough-passphrase' })
    expect(accept.status).toBe(410)
    expect(accept.body.message).toMatch(/withdrawn/)
    testDb()
    expect((await User.findByPk(id))!.role).toBe('technician')
    // A new link carries the role the admin gave last.
    const resent = await admin.post(`/api/users/${id}/invitation`)
    expect(resent.status).toBe(201)
    const mail = await waitForMail(m => m.to.includes(resent.body.user.email) && linkIn(m.text)?.[1] !== token)
    const fresh = linkIn(mail.text)![1]!
    const client = new ApiClient()
    expect((await client.post('/api/invitations/accept', { token: fresh, name: 'Now Technician', password: 'a-long-enough-passphrase' })).status).toBe(200)
    expect((await client.get('/api/me')).body.user.role).toBe('technician')
  })

  it('does not silently send a second invitation: it says when the first went out and offers a new link or withdrawing it', async () => {
    const admin = await signedIn(DEMO.admin)
    const { email, id, token } = await invited(admin, 'technician', 'twice')
    const again = await admin.post('/api/users/invite', { email, role: 'technician' })
    expect(again.status).toBe(409)
    expect(again.body.message).toMatch(/was invited on .* send a new link, or withdraw/)
    expect(again.body.data).toMatchObject({ fields: { email: 'already invited' }, invited: { userId: id } })
    testDb()
    expect(await Invitation.count({ where: { userId: id } }), 'no second invitation was made').toBe(1)

    const resent = await admin.post(`/api/users/${id}/invitation`)
    expect(resent.status).toBe(201)
    expect(resent.body.replaced).toBe(1)
    expect((await new ApiClient().get(`/api/invitations/${token}`)).body.status).toBe('withdrawn')
    const listed = (await admin.get('/api/users')).body.data.find((u: { id: number }) => u.id === id)
    expect(listed.invitation).toMatchObject({ status: 'valid' })

    const withdrawn = await admin.delete(`/api/users/${id}/invitation`)
    expect(withdrawn.status).toBe(200)
    expect(withdrawn.body.user.invitation).toMatchObject({ status: 'withdrawn' })
    expect((await admin.delete(`/api/users/${id}/invitation`)).status).toBe(409)
    // Once withdrawn, inviting the address again is a fresh invitation.
    expect((await admin.post('/api/users/invite', { email, role: 'author' })).status).toBe(201)
  })

  it('refuses a new link for someone who has joined, or who is deactivated', async () => {
    const admin = await signedIn(DEMO.admin)
    const joined = await makeUser()
    expect((await admin.post(`/api/users/${joined.id}/invitation`)).status).toBe(409)
    expect((await admin.delete(`/api/users/${joined.id}/invitation`)).status).toBe(409)
    const { id } = await invited(admin, 'technician', 'parked')
    await admin.patch(`/api/users/${id}`, { active: false })
    const res = await admin.post(`/api/users/${id}/invitation`)
    expect(res.status).toBe(409)
    expect(res.body.message).toMatch(/reactivate/)
    expect((await admin.post('/api/users/987654/invitation')).status).toBe(404)
  })
})

describe('user administration', () => {
  it('lists users for admins only', async () => {
    const res = await (await signedIn(DEMO.admin)).get('/api/users')
    expect(res.status).toBe(200)
    expect(res.body.data.map((u: { email: string }) => u.email)).toContain(DEMO.editor)
    expect(res.body.data[0]).not.toHaveProperty('passwordHash')
  })

  it('never demotes or deactivates the last active admin', async () => {
    const admin = await signedIn(DEMO.admin)
    const me = (await admin.get('/api/me')).body.user
    testDb()
    const otherAdmins = await User.count({ where: { role: 'admin', active: true } })
    expect(otherAdmins, 'the demo admin is the only active admin at this point').toBe(1)
    const demote = await admin.patch(`/api/users/${me.id}`, { role: 'editor' })
    expect(demote.status).toBe(409)
    expect(demote.body.message).toMatch(/at least one active admin/)
    expect((await admin.patch(`/api/users/${me.id}`, { active: false })).status).toBe(409)

    const second = await makeUser({ role: 'admin' })
    expect((await admin.patch(`/api/users/${me.id}`, { role: 'editor' })).status).toBe(200)
    const secondClient = await new ApiClient().login(second.email, 'factory-password-123')
    expect((await secondClient.patch(`/api/users/${second.id}`, { active: false })).status).toBe(409)
    expect((await secondClient.patch(`/api/users/${me.id}`, { role: 'admin' })).status).toBe(200)
    expect((await (await signedIn(DEMO.admin)).patch(`/api/users/${second.id}`, { active: false })).status).toBe(200)
  })

  it('answers 404 for an unknown user and 400 for an empty change', async () => {
    const admin = await signedIn(DEMO.admin)
    expect((await admin.patch('/api/users/987654', { role: 'editor' })).status).toBe(404)
    const empty = await admin.patch('/api/users/1', {})
    expect(empty.status).toBe(400)
  })
})
