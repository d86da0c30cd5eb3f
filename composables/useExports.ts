/** Where the CSV exports are downloaded from: plain links, so the browser saves the file with the session cookie. */
export function useExports() {
  return {
    teardownMeasurementsCsv: (teardownId: number) => `/api/teardowns/${teardownId}/measurements.csv`,
    partHistoryCsv: (componentId: number) => `/api/parts/${componentId}/history.csv`,
  }
}
