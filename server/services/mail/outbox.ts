import type { Transporter } from 'nodemailer'
import { Op, Transaction } from 'sequelize'
import { inTransaction, OutboxMessage } from '../../db'
import { retryTransient } from '../../db/cluster'

export interface OutgoingMail {
  kind: string
  to: string
  subject: string
  text: string
  /** The same message as HTML, sent as an alternative part beside the text. */
  html?: string
}

/**
 * Queues mail in the outbox inside the caller's transaction: the change and its mail commit
 * together, and the worker sends it afterwards (transactional outbox).
 */
export async function queueMail(mail: OutgoingMail | OutgoingMail[], transaction?: Transaction): Promise<void> {
  const list = Array.isArray(mail) ? mail : [mail]
  if (!list.length) return
  await OutboxMessage.bulkCreate(list.map(m => ({
    kind: m.kind,
    toAddress: m.to,
    subject: m.subject.slice(0, 250),
    textBody: m.text,
    htmlBody: m.html ?? null,
    lastError: null,
    sentAt: null,
    lockedUntil: null,
  })), { transaction })
}

/** Backoff after the n-th failed attempt: base·2^(n−1), capped at five minutes. */
export function retryDelayMs(attempts: number, baseMs: number): number {
  return Math.min(baseMs * 2 ** Math.max(0, attempts - 1), 5 * 60_000)
}

/**
 * Sends what is due. Rows are claimed with SELECT … FOR UPDATE SKIP LOCKED and a lease, so
 * several app instances can run the worker without sending a message twice. The claim commits
 * before anything is sent: on a Galera cluster, where row locks do not reach other nodes, two
 * workers may both pick a row, and certification lets only the first claim commit (the other
 * fails as a deadlock and is re-run by inTransaction, reading the row as claimed). The claim reads
 * in READ COMMITTED: under REPEATABLE READ its range scan would also lock the gaps of the
 * outbox's (status, next_attempt_at) index, and every transaction queueing mail meanwhile (a
 * submission holding its procedure's lock, say) would have to wait for the worker.
 */
export async function deliverDueMail(transport: Transporter, opts: { from: string, retryBaseMs: number, batch?: number }): Promise<{ sent: number, failed: number }> {
  const now = new Date()
  const claimed = await inTransaction(async (transaction) => {
    const rows = await OutboxMessage.findAll({
      where: {
        status: 'pending',
        nextAttemptAt: { [Op.lte]: now },
        [Op.or]: [{ lockedUntil: null }, { lockedUntil: { [Op.lt]: now } }],
      },
      order: [['id', 'ASC']],
      limit: opts.batch ?? 20,
      lock: transaction.LOCK.UPDATE,
      skipLocked: true,
      transaction,
    })
    if (rows.length) {
      await OutboxMessage.update({ lockedUntil: new Date(now.getTime() + 60_000) }, { where: { id: rows.map(r => r.id) }, transaction })
    }
    return rows
  }, { isolationLevel: Transaction.ISOLATION_LEVELS.READ_COMMITTED })
  let sent = 0
  let failed = 0
  for (const row of claimed) {
    let sendError: unknown
    try {
      await transport.sendMail({ from: opts.from, to: row.toAddress, subject: row.subject, text: row.textBody, ...(row.htmlBody ? { html: row.htmlBody } : {}), headers: { 'X-Benchlore-Kind': row.kind } })
    }
    catch (error) {
      sendError = error ?? new Error('sending failed')
    }
    // The outcome is written even across a lost connection (retried on a fresh one, another
    // node of a cluster): a sent message left unmarked would go out again when its lease ends,
    // and a database error after sending must not count as a failed send.
    // Static updates: the instances were loaded before the lease was written, so an instance
    // update would not see lockedUntil as changed and would leave the lease in place.
    if (sendError === undefined) {
      await retryTransient(() => OutboxMessage.update({ status: 'sent', sentAt: new Date(), lockedUntil: null, attempts: row.attempts + 1, lastError: null }, { where: { id: row.id } }))
      sent++
    }
    else {
      const attempts = row.attempts + 1
      await retryTransient(() => OutboxMessage.update({
        attempts,
        lockedUntil: null,
        lastError: String((sendError as Error).message ?? sendError).slice(0, 500),
        nextAttemptAt: new Date(Date.now() + retryDelayMs(attempts, opts.retryBaseMs)),
      }, { where: { id: row.id } }))
      failed++
    }
  }
  return { sent, failed }
}
