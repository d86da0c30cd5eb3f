// Benchmark (not a test): oil assessment over a large synthetic fleet history.
// `npm run bench:oil -- [engines] [samplesPerEngine]`
import { DEFAULT_OIL_LIMITS, OIL_ELEMENTS, type OilSampleValues } from '../shared/domain/oil/limits'
import { assessEngineHistory, assessLatest, leaveOneOutLimits } from '../shared/domain/oil/history'

const engines = Number(process.argv[2] ?? 40)
const perEngine = Number(process.argv[3] ?? 125)
let seed = 42
const rand = () => ((seed = (Math.imul(seed, 1664525) + 1013904223) >>> 0) / 2 ** 32)

const byEngine: OilSampleValues[][] = []
for (let e = 0; e < engines; e++) {
  const list: OilSampleValues[] = []
  for (let i = 0; i < perEngine; i++) {
    const elements = Object.fromEntries(OIL_ELEMENTS.map((el) => [el, 5 + rand() * 10]))
    list.push({ sampleId: `E${e}-${i}`, sampledAt: new Date(Date.UTC(2026, 0, 1) + i * 86_400_000).toISOString(), engineHours: i * 4, oilHours: i * 4, elements, kv40: 88, kv100: 14, hths: 3.9, fuelDilutionPct: 1, waterPct: 0.02, p4: 3000, p6: 900, p14: 80, grade: '5W-40' })
  }
  byEngine.push(list)
}
const population = byEngine.flat()

function time(label: string, fn: () => void) {
  fn()
  const runs = 5
  const t0 = performance.now()
  for (let i = 0; i < runs; i++) fn()
  console.log(`${label}: ${((performance.now() - t0) / runs).toFixed(1)} ms`)
}
console.log(`${engines} engines x ${perEngine} samples = ${population.length} samples of one type`)
time('latest status of every engine (board column)', () => {
  const popFor = leaveOneOutLimits(population, DEFAULT_OIL_LIMITS)
  for (const h of byEngine) assessLatest(h, DEFAULT_OIL_LIMITS, population, popFor)
})
time('full history of one engine (engine oil page)', () => { assessEngineHistory(byEngine[0]!, DEFAULT_OIL_LIMITS, population) })
