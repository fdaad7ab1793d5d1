// Local stand-in for an S3 bucket: s3rver on loopback, objects kept under the given folder.
// Usage: node --import tsx scripts/fakes/object-store.ts <dir> <port> <bucket>
import S3rver from 's3rver'

const [dir, port, bucket] = process.argv.slice(2)
if (!dir || !port || !bucket) {
  console.error('usage: object-store.ts <dir> <port> <bucket>')
  process.exit(2)
}

const server = new S3rver({
  address: '127.0.0.1',
  port: Number(port),
  silent: true,
  directory: dir,
  configureBuckets: [{ name: bucket, configs: [] }],
})
await server.run()
console.log(`object store listening on 127.0.0.1:${port}, bucket ${bucket}`)

const stop = () => {
  server.close().finally(() => process.exit(0))
}
process.on('SIGTERM', stop)
process.on('SIGINT', stop)
