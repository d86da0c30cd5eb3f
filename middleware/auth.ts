// Pages opt in with definePageMeta({ middleware: 'auth' }); the server guards the data regardless.
export default defineNuxtRouteMiddleware(async (to) => {
  const store = useActorStore()
  if (!store.actor) await store.load()
  if (!store.actor) return navigateTo({ path: '/login', query: to.fullPath !== '/' ? { next: to.fullPath } : {} })
  const roles = to.meta.roles as string[] | undefined
  if (roles && !roles.includes(store.actor.role)) return abortNavigation(createError({ statusCode: 403, message: 'Your role may not open this page' }))
})
