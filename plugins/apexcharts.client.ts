import VueApexCharts from 'vue3-apexcharts'

// apexcharts touches window at import time, so it is registered on the client only.
export default defineNuxtPlugin((nuxtApp) => {
  nuxtApp.vueApp.use(VueApexCharts)
})
