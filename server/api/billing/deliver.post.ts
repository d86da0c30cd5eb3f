// An admin's "try the queued invoices now", beside the every-minute retry.
export default defineEventHandler(async (event) => {
  await requireActor(event, ['admin'])
  return { result: await deliverInvoicesNow() }
})
