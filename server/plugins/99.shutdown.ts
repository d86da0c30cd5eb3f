// Graceful shutdown: Nitro stops taking requests on SIGTERM, lets those in flight finish, then
// calls 'close'; the scheduler plugin stops its jobs there, a life check in progress is finished,
// and the pool is closed last.
export default defineNitroPlugin((nitroApp) => {
  nitroApp.hooks.hook('close', async () => {
    await settleLifeCheck()
    await closeDb()
  })
})
