// Public: answers 200 with or without a session. Clearing the cookie also ends the session's row
// (server/plugins/03.auth-sessions.ts), so the same sealed cookie replayed later answers 401 on
// every instance.
export default defineEventHandler(async (event) => {
  await clearUserSession(event)
  return { ok: true }
})
