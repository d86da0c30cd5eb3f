// Graceful shutdown: Nitro stops taking requests on SIGTERM, lets those in flight finish, then
// calls 'close'; the scheduler stops its jobs and finishes a life check in progress on
// 'crankledger:draining', and the pool is closed last.
export default defineNitroPlugin((nitroApp) => {
  nitroApp.hooks.hook('close', async () => {
    await nitroApp.hooks.callHook('crankledger:draining')
    await closeDb()
  })
})
