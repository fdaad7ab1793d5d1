import nodemailer, { type Transporter } from 'nodemailer'

export interface SmtpConfig {
  host: string
  port: number
  secure: boolean
  user?: string
  password?: string
}

/** The SMTP relay the outbox worker sends through (one per process: server/utils/services.ts). */
export function createTransport(cfg: SmtpConfig): Transporter {
  const local = cfg.host === '127.0.0.1' || cfg.host === 'localhost'
  return nodemailer.createTransport({
    host: cfg.host,
    port: Number(cfg.port),
    secure: Boolean(cfg.secure),
    // The local catcher speaks plain SMTP; a real relay negotiates STARTTLS as usual.
    ignoreTLS: local && !cfg.secure,
    auth: cfg.user ? { user: cfg.user, pass: cfg.password ?? '' } : undefined,
    connectionTimeout: 3000,
    greetingTimeout: 3000,
    socketTimeout: 10_000,
  })
}
