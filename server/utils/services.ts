import type { Transporter } from 'nodemailer'
import { createTransport } from '../services/mail/transport'
import { ObjectStore } from '../services/storage'

// Process-wide clients, created on first use from the runtime config.
let objectStore: ObjectStore | undefined
let transport: Transporter | undefined

export function useObjectStore(): ObjectStore {
  if (!objectStore) {
    const { s3 } = useRuntimeConfig()
    objectStore = new ObjectStore({
      endpoint: s3.endpoint,
      region: s3.region,
      bucket: s3.bucket,
      accessKeyId: s3.accessKeyId,
      secretAccessKey: s3.secretAccessKey,
      forcePathStyle: s3.forcePathStyle !== false && String(s3.forcePathStyle) !== 'false',
    })
  }
  return objectStore
}

export function useMailTransport(): Transporter {
  if (!transport) {
    const { smtp } = useRuntimeConfig()
    transport = createTransport({ host: smtp.host, port: Number(smtp.port), secure: smtp.secure === true || String(smtp.secure) === 'true', user: smtp.user, password: smtp.password })
  }
  return transport
}
