import { resolve } from 'node:path'
import fsDriver from 'unstorage/drivers/fs'

// Stored files (logger files, lab reports, photos) live under runtimeConfig.storageDir by default.
// Mounted at run time so that NUXT_STORAGE_DIR can point each instance, or an object-store driver, elsewhere.
export default defineNitroPlugin(() => {
  const base = resolve(process.cwd(), useRuntimeConfig().storageDir)
  useStorage().mount('files', fsDriver({ base }))
})
