import { deliverDueMail } from '../services/mail/outbox'

// Sends queued mail every few seconds. Several instances may run this: rows are claimed with
// SKIP LOCKED, so each message goes out once.
export default defineNitroPlugin((nitroApp) => {
  const { mail } = useRuntimeConfig()
  const intervalMs = Number(mail.pollMs) || 2000
  let running = false
  const tick = async () => {
    if (running) return
    running = true
    try {
      await deliverDueMail(useMailTransport(), { from: mail.from, retryBaseMs: Number(mail.retryBaseMs) || 5000 })
    }
    catch {
      // Database away: the next tick tries again; nothing is lost, the rows stay pending.
    }
    finally {
      running = false
    }
  }
  const timer = setInterval(tick, intervalMs)
  timer.unref()
  nitroApp.hooks.hook('close', () => clearInterval(timer))
})
