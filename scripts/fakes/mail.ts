// Local stand-in for an SMTP relay: accepts every message on loopback and keeps it as an .eml
// file plus a small .json summary (read by the admin mail page and by the tests).
// Usage: node --import tsx scripts/fakes/mail.ts <dir> <port>
import { mkdirSync, renameSync, writeFileSync } from 'node:fs'
import { join } from 'node:path'
import { simpleParser } from 'mailparser'
import { SMTPServer } from 'smtp-server'

const [dir, port] = process.argv.slice(2)
if (!dir || !port) {
  console.error('usage: mail.ts <dir> <port>')
  process.exit(2)
}
mkdirSync(dir, { recursive: true })

let sequence = 0
const server = new SMTPServer({
  authOptional: true,
  disabledCommands: ['STARTTLS'],
  logger: false,
  size: 10 * 1024 * 1024,
  onData(stream, session, callback) {
    const chunks: Buffer[] = []
    stream.on('data', (c: Buffer) => chunks.push(c))
    stream.on('end', async () => {
      try {
        const raw = Buffer.concat(chunks)
        const parsed = await simpleParser(raw)
        const id = `${new Date().toISOString().replace(/[:.]/g, '-')}-${process.pid}-${++sequence}`
        const summary = {
          id,
          receivedAt: new Date().toISOString(),
          from: parsed.from?.text ?? session.envelope.mailFrom?.toString() ?? '',
          to: session.envelope.rcptTo.map(r => r.address),
          subject: parsed.subject ?? '',
          text: parsed.text ?? '',
          html: typeof parsed.html === 'string' ? parsed.html : null,
          messageId: parsed.messageId ?? null,
        }
        writeFileSync(join(dir, `${id}.eml`), raw)
        // Written last and renamed into place, so a reader never sees half a summary.
        writeFileSync(join(dir, `${id}.json.tmp`), JSON.stringify(summary, null, 2))
        renameSync(join(dir, `${id}.json.tmp`), join(dir, `${id}.json`))
        callback()
      }
      catch (error) {
        callback(error as Error)
      }
    })
  },
})
server.listen(Number(port), '127.0.0.1', () => console.log(`mail catcher listening on 127.0.0.1:${port}, keeping messages in ${dir}`))

const stop = () => server.close(() => process.exit(0))
process.on('SIGTERM', stop)
process.on('SIGINT', stop)
