import { resolve } from 'node:path'
import fsDriver from 'unstorage/drivers/fs'
import s3Driver from 'unstorage/drivers/s3'

// Stored files (logger files, lab reports, photos) live under runtimeConfig.storageDir by default,
// or on an S3-compatible store when runtimeConfig.s3.endpoint is set, so that every instance reads
// what any instance wrote. Mounted at run time so each deployment chooses by environment.
export default defineNitroPlugin(() => {
  const config = useRuntimeConfig()
  const s3 = config.s3 as { endpoint: string; bucket: string; region: string; accessKeyId: string; secretAccessKey: string }
  if (s3?.endpoint) {
    useStorage().mount('files', s3Driver({ endpoint: s3.endpoint, bucket: s3.bucket, region: s3.region, accessKeyId: s3.accessKeyId, secretAccessKey: s3.secretAccessKey }))
  } else {
    useStorage().mount('files', fsDriver({ base: resolve(process.cwd(), config.storageDir) }))
  }
})
