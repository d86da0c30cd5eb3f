// apexcharts touches window at import: register it on the client only and wrap charts in <ClientOnly>.
import VueApexCharts from 'vue3-apexcharts'

export default defineNuxtPlugin((nuxtApp) => {
  nuxtApp.vueApp.use(VueApexCharts)
})
