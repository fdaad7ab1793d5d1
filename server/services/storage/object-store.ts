import { DeleteObjectCommand, GetObjectCommand, HeadBucketCommand, PutObjectCommand, S3Client } from '@aws-sdk/client-s3'
import type { Readable } from 'node:stream'
import { DomainError } from '../errors'

export interface S3Config {
  endpoint: string
  region: string
  bucket: string
  accessKeyId: string
  secretAccessKey: string
  forcePathStyle: boolean
}

/**
 * The bucket did not answer. Carries no `cause` on purpose: h3 wraps thrown errors by their
 * cause, and the error handler must still see this class to answer 503.
 */
export class ObjectStoreUnavailable extends Error {
  override name = 'ObjectStoreUnavailable'
}

export function s3ConfigFromEnv(env: NodeJS.ProcessEnv = process.env): S3Config {
  return {
    endpoint: env.NUXT_S3_ENDPOINT ?? '',
    region: env.NUXT_S3_REGION ?? 'us-east-1',
    bucket: env.NUXT_S3_BUCKET ?? 'benchlore',
    accessKeyId: env.NUXT_S3_ACCESS_KEY_ID ?? '',
    secretAccessKey: env.NUXT_S3_SECRET_ACCESS_KEY ?? '',
    forcePathStyle: (env.NUXT_S3_FORCE_PATH_STYLE ?? 'true') !== 'false',
  }
}

/** The bucket Benchlore keeps photos and captures in, behind a small interface. */
export class ObjectStore {
  readonly client: S3Client
  constructor(readonly cfg: S3Config) {
    this.client = new S3Client({
      endpoint: cfg.endpoint || undefined,
      region: cfg.region,
      forcePathStyle: cfg.forcePathStyle,
      credentials: cfg.accessKeyId ? { accessKeyId: cfg.accessKeyId, secretAccessKey: cfg.secretAccessKey } : undefined,
      // Checksums only where S3 requires them: the local fake corrupts aws-chunked trailers.
      requestChecksumCalculation: 'WHEN_REQUIRED',
      responseChecksumValidation: 'WHEN_REQUIRED',
      maxAttempts: 2,
    })
  }

  async put(key: string, body: Buffer, contentType: string): Promise<void> {
    try {
      await this.client.send(new PutObjectCommand({ Bucket: this.cfg.bucket, Key: key, Body: body, ContentType: contentType, ContentLength: body.length }))
    }
    catch (error) {
      throw new ObjectStoreUnavailable(`object store refused the upload: ${(error as Error).message}`)
    }
  }

  async get(key: string): Promise<{ body: Readable, contentType?: string, contentLength?: number }> {
    try {
      const res = await this.client.send(new GetObjectCommand({ Bucket: this.cfg.bucket, Key: key }))
      return { body: res.Body as Readable, contentType: res.ContentType, contentLength: res.ContentLength }
    }
    catch (error) {
      const status = (error as { $metadata?: { httpStatusCode?: number } }).$metadata?.httpStatusCode
      if (status === 404) throw new DomainError('not_found', 'object not found')
      throw new ObjectStoreUnavailable(`object store did not answer: ${(error as Error).message}`)
    }
  }

  async delete(key: string): Promise<void> {
    await this.client.send(new DeleteObjectCommand({ Bucket: this.cfg.bucket, Key: key })).catch(() => undefined)
  }

  async ping(): Promise<void> {
    await this.client.send(new HeadBucketCommand({ Bucket: this.cfg.bucket }), { abortSignal: AbortSignal.timeout(2000) })
  }
}
