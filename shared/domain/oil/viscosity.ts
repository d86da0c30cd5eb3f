/**
 * Viscosity: ASTM D2270 viscosity index, SAE J300 engine-oil grades and the
 * ASTM D341 (Walther) viscosity-temperature relation.
 * Kinematic viscosities are in mm^2/s (1 cSt = 1 mm^2/s), temperatures in deg C.
 */

/**
 * ASTM D2270 Table 1: basic values of L and H (KV40 of the VI 0 and VI 100
 * reference oils) for KV100 from 2.0 to 70 mm^2/s. Row = [KV100, L, H].
 *
 * Source: ASTM D2270 Table 1, transcribed from two independent open
 * reproductions that agree on every one of the 311 rows: the ChEDL
 * "chemicals" Python library (viscosity module) and the libvisc C++ library
 * (libvisc.h). The rows 5.00, 5.10, 7.80, 8.80, 8.90 and 14.0 are checked in
 * the tests against values read in a reproduction of the standard; the other
 * rows rest on the two transcriptions and were not compared with the
 * standard itself.
 */
export const D2270_TABLE: readonly (readonly [number, number, number])[] = Object.freeze([
  [2, 7.994, 6.394], [2.1, 8.64, 6.894], [2.2, 9.309, 7.41], [2.3, 10, 7.944], [2.4, 10.71, 8.496], [2.5, 11.45, 9.063],
  [2.6, 12.21, 9.647], [2.7, 13, 10.25], [2.8, 13.8, 10.87], [2.9, 14.63, 11.5], [3, 15.49, 12.15], [3.1, 16.36, 12.82],
  [3.2, 17.26, 13.51], [3.3, 18.18, 14.21], [3.4, 19.12, 14.93], [3.5, 20.09, 15.66], [3.6, 21.08, 16.42], [3.7, 22.09, 17.19],
  [3.8, 23.13, 17.97], [3.9, 24.19, 18.77], [4, 25.32, 19.56], [4.1, 26.5, 20.37], [4.2, 27.75, 21.21], [4.3, 29.07, 22.05],
  [4.4, 30.48, 22.92], [4.5, 31.96, 23.81], [4.6, 33.52, 24.71], [4.7, 35.13, 25.63], [4.8, 36.79, 26.57], [4.9, 38.5, 27.53],
  [5, 40.23, 28.49], [5.1, 41.99, 29.46], [5.2, 43.76, 30.43], [5.3, 45.53, 31.4], [5.4, 47.31, 32.37], [5.5, 49.09, 33.34],
  [5.6, 50.87, 34.32], [5.7, 52.64, 35.29], [5.8, 54.42, 36.26], [5.9, 56.2, 37.23], [6, 57.97, 38.19], [6.1, 59.74, 39.17],
  [6.2, 61.52, 40.15], [6.3, 63.32, 41.13], [6.4, 65.18, 42.14], [6.5, 67.12, 43.18], [6.6, 69.16, 44.24], [6.7, 71.29, 45.33],
  [6.8, 73.48, 46.44], [6.9, 75.72, 47.51], [7, 78, 48.57], [7.1, 80.25, 49.61], [7.2, 82.39, 50.69], [7.3, 84.53, 51.78],
  [7.4, 86.66, 52.88], [7.5, 88.85, 53.98], [7.6, 91.04, 55.09], [7.7, 93.2, 56.2], [7.8, 95.43, 57.31], [7.9, 97.72, 58.45],
  [8, 100, 59.6], [8.1, 102.3, 60.74], [8.2, 104.6, 61.89], [8.3, 106.9, 63.05], [8.4, 109.2, 64.18], [8.5, 111.5, 65.32],
  [8.6, 113.9, 66.48], [8.7, 116.2, 67.64], [8.8, 118.5, 68.79], [8.9, 120.9, 69.94], [9, 123.3, 71.1], [9.1, 125.7, 72.27],
  [9.2, 128, 73.42], [9.3, 130.4, 74.57], [9.4, 132.8, 75.73], [9.5, 135.3, 76.91], [9.6, 137.7, 78.08], [9.7, 140.1, 79.27],
  [9.8, 142.7, 80.46], [9.9, 145.2, 81.67], [10, 147.7, 82.87], [10.1, 150.3, 84.08], [10.2, 152.9, 85.3], [10.3, 155.4, 86.51],
  [10.4, 158, 87.72], [10.5, 160.6, 88.95], [10.6, 163.2, 90.19], [10.7, 165.8, 91.4], [10.8, 168.5, 92.65], [10.9, 171.2, 93.92],
  [11, 173.9, 95.19], [11.1, 176.6, 96.45], [11.2, 179.4, 97.71], [11.3, 182.1, 98.97], [11.4, 184.9, 100.2], [11.5, 187.6, 101.5],
  [11.6, 190.4, 102.8], [11.7, 193.3, 104.1], [11.8, 196.2, 105.4], [11.9, 199, 106.7], [12, 201.9, 108], [12.1, 204.8, 109.4],
  [12.2, 207.8, 110.7], [12.3, 210.7, 112], [12.4, 213.6, 113.3], [12.5, 216.6, 114.7], [12.6, 219.6, 116], [12.7, 222.6, 117.4],
  [12.8, 225.7, 118.7], [12.9, 228.8, 120.1], [13, 231.9, 121.5], [13.1, 235, 122.9], [13.2, 238.1, 124.2], [13.3, 241.2, 125.6],
  [13.4, 244.3, 127], [13.5, 247.4, 128.4], [13.6, 250.6, 129.8], [13.7, 253.8, 131.2], [13.8, 257, 132.6], [13.9, 260.1, 134],
  [14, 263.3, 135.4], [14.1, 266.6, 136.8], [14.2, 269.8, 138.2], [14.3, 273, 139.6], [14.4, 276.3, 141], [14.5, 279.6, 142.4],
  [14.6, 283, 143.9], [14.7, 286.4, 145.3], [14.8, 289.7, 146.8], [14.9, 293, 148.2], [15, 296.5, 149.7], [15.1, 300, 151.2],
  [15.2, 303.4, 152.6], [15.3, 306.9, 154.1], [15.4, 310.3, 155.6], [15.5, 313.9, 157], [15.6, 317.5, 158.6], [15.7, 321.1, 160.1],
  [15.8, 324.6, 161.6], [15.9, 328.3, 163.1], [16, 331.9, 164.6], [16.1, 335.5, 166.1], [16.2, 339.2, 167.7], [16.3, 342.9, 169.2],
  [16.4, 346.6, 170.7], [16.5, 350.3, 172.3], [16.6, 354.1, 173.8], [16.7, 358, 175.4], [16.8, 361.7, 177], [16.9, 365.6, 178.6],
  [17, 369.4, 180.2], [17.1, 373.3, 181.7], [17.2, 377.1, 183.3], [17.3, 381, 184.9], [17.4, 384.9, 186.5], [17.5, 388.9, 188.1],
  [17.6, 392.7, 189.7], [17.7, 396.7, 191.3], [17.8, 400.7, 192.9], [17.9, 404.6, 194.6], [18, 408.6, 196.2], [18.1, 412.6, 197.8],
  [18.2, 416.7, 199.4], [18.3, 420.7, 201], [18.4, 424.9, 202.6], [18.5, 429, 204.3], [18.6, 433.2, 205.9], [18.7, 437.3, 207.6],
  [18.8, 441.5, 209.3], [18.9, 445.7, 211], [19, 449.9, 212.7], [19.1, 454.2, 214.4], [19.2, 458.4, 216.1], [19.3, 462.7, 217.7],
  [19.4, 467, 219.4], [19.5, 471.3, 221.1], [19.6, 475.7, 222.8], [19.7, 479.7, 224.5], [19.8, 483.9, 226.2], [19.9, 488.6, 227.7],
  [20, 493.2, 229.5], [20.2, 501.5, 233], [20.4, 510.8, 236.4], [20.6, 519.9, 240.1], [20.8, 528.8, 243.5], [21, 538.4, 247.1],
  [21.2, 547.5, 250.7], [21.4, 556.7, 254.2], [21.6, 566.4, 257.8], [21.8, 575.6, 261.5], [22, 585.2, 264.9], [22.2, 595, 268.6],
  [22.4, 604.3, 272.3], [22.6, 614.2, 275.8], [22.8, 624.1, 279.6], [23, 633.6, 283.3], [23.2, 643.4, 286.8], [23.4, 653.8, 290.5],
  [23.6, 663.3, 294.4], [23.8, 673.7, 297.9], [24, 683.9, 301.8], [24.2, 694.5, 305.6], [24.4, 704.2, 309.4], [24.6, 714.9, 313],
  [24.8, 725.7, 317], [25, 736.5, 320.9], [25.2, 747.2, 324.9], [25.4, 758.2, 328.8], [25.6, 769.3, 332.7], [25.8, 779.7, 336.7],
  [26, 790.4, 340.5], [26.2, 801.6, 344.4], [26.4, 812.8, 348.4], [26.6, 824.1, 352.3], [26.8, 835.5, 356.4], [27, 847, 360.5],
  [27.2, 857.5, 364.6], [27.4, 869, 368.3], [27.6, 880.6, 372.3], [27.8, 892.3, 376.4], [28, 904.1, 380.6], [28.2, 915.8, 384.6],
  [28.4, 927.6, 388.8], [28.6, 938.6, 393], [28.8, 951.2, 396.6], [29, 963.4, 401.1], [29.2, 975.4, 405.3], [29.4, 987.1, 409.5],
  [29.6, 998.9, 413.5], [29.8, 1011, 417.6], [30, 1023, 421.7], [30.5, 1055, 432.4], [31, 1086, 443.2], [31.5, 1119, 454],
  [32, 1151, 464.9], [32.5, 1184, 475.9], [33, 1217, 487], [33.5, 1251, 498.1], [34, 1286, 509.6], [34.5, 1321, 521.1],
  [35, 1356, 532.5], [35.5, 1391, 544], [36, 1427, 555.6], [36.5, 1464, 567.1], [37, 1501, 579.3], [37.5, 1538, 591.3],
  [38, 1575, 603.1], [38.5, 1613, 615], [39, 1651, 627.1], [39.5, 1691, 639.2], [40, 1730, 651.8], [40.5, 1770, 664.2],
  [41, 1810, 676.6], [41.5, 1851, 689.1], [42, 1892, 701.9], [42.5, 1935, 714.9], [43, 1978, 728.2], [43.5, 2021, 741.3],
  [44, 2064, 754.4], [44.5, 2108, 767.6], [45, 2152, 780.9], [45.5, 2197, 794.5], [46, 2243, 808.2], [46.5, 2288, 821.9],
  [47, 2333, 835.5], [47.5, 2380, 849.2], [48, 2426, 863], [48.5, 2473, 876.9], [49, 2521, 890.9], [49.5, 2570, 905.3],
  [50, 2618, 919.6], [50.5, 2667, 933.6], [51, 2717, 948.2], [51.5, 2767, 962.9], [52, 2817, 977.5], [52.5, 2867, 992.1],
  [53, 2918, 1007], [53.5, 2969, 1021], [54, 3020, 1036], [54.5, 3073, 1051], [55, 3126, 1066], [55.5, 3180, 1082],
  [56, 3233, 1097], [56.5, 3286, 1112], [57, 3340, 1127], [57.5, 3396, 1143], [58, 3452, 1159], [58.5, 3507, 1175],
  [59, 3563, 1190], [59.5, 3619, 1206], [60, 3676, 1222], [60.5, 3734, 1238], [61, 3792, 1254], [61.5, 3850, 1270],
  [62, 3908, 1286], [62.5, 3966, 1303], [63, 4026, 1319], [63.5, 4087, 1336], [64, 4147, 1352], [64.5, 4207, 1369],
  [65, 4268, 1386], [65.5, 4329, 1402], [66, 4392, 1419], [66.5, 4455, 1436], [67, 4517, 1454], [67.5, 4580, 1471],
  [68, 4645, 1488], [68.5, 4709, 1506], [69, 4773, 1523], [69.5, 4839, 1541], [70, 4905, 1558],
] as const)

export const D2270_TABLE_MIN_KV100 = 2.0
export const D2270_TABLE_MAX_KV100 = 70.0

/** L and H for a KV100; linear interpolation between table rows (as the standard allows), formulas above 70. */
export function lookupLH(kv100: number): { L: number; H: number } {
  if (!Number.isFinite(kv100)) throw new RangeError(`KV100 must be a finite number, got ${kv100}`)
  if (kv100 < D2270_TABLE_MIN_KV100) {
    // The standard does not define VI below 2.0 mm^2/s.
    throw new RangeError(`viscosity index is not defined for KV100 below 2.0 mm^2/s, got ${kv100}`)
  }
  if (kv100 > D2270_TABLE_MAX_KV100) {
    const y = kv100
    return { L: 0.8353 * y * y + 14.67 * y - 216, H: 0.1684 * y * y + 11.85 * y - 97 }
  }
  let lo = 0
  let hi = D2270_TABLE.length - 1
  // Binary search for the row pair that brackets kv100.
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1
    if (D2270_TABLE[mid]![0] <= kv100) lo = mid
    else hi = mid
  }
  const [x0, l0, h0] = D2270_TABLE[lo]!
  const [x1, l1, h1] = D2270_TABLE[hi]!
  if (kv100 === x0) return { L: l0, H: h0 }
  if (kv100 === x1) return { L: l1, H: h1 }
  const f = (kv100 - x0) / (x1 - x0)
  return { L: l0 + f * (l1 - l0), H: h0 + f * (h1 - h0) }
}

/**
 * Rounds a VI to a whole number; an exact half goes to the even neighbour
 * (ASTM E29 rounding, from memory).
 */
export function roundViscosityIndex(vi: number): number {
  const floor = Math.floor(vi)
  const diff = vi - floor
  if (Math.abs(diff - 0.5) < 1e-9) return floor % 2 === 0 ? floor : floor + 1
  return Math.round(vi)
}

/**
 * VI from given L and H (lets a caller reproduce a worked example that
 * printed L and H rounded). Procedure A when KV40 is above H (VI below 100),
 * procedure B otherwise.
 */
export function viscosityIndexFromLH(kv40: number, kv100: number, L: number, H: number): { vi: number; procedure: 'A' | 'B' } {
  if (kv40 > H) return { vi: ((L - kv40) / (L - H)) * 100, procedure: 'A' }
  const n = (Math.log10(H) - Math.log10(kv40)) / Math.log10(kv100)
  return { vi: (10 ** n - 1) / 0.00715 + 100, procedure: 'B' }
}

/** ASTM D2270 viscosity index from KV40 and KV100 (mm^2/s). Throws RangeError where VI is not defined. */
export function viscosityIndex(kv40: number, kv100: number): { vi: number; reported: number; procedure: 'A' | 'B'; L: number; H: number } {
  if (!Number.isFinite(kv40) || kv40 <= 0) throw new RangeError(`KV40 must be a positive number, got ${kv40}`)
  if (!(kv40 > kv100)) throw new RangeError(`KV40 (${kv40}) must be greater than KV100 (${kv100})`)
  const { L, H } = lookupLH(kv100)
  const { vi, procedure } = viscosityIndexFromLH(kv40, kv100, L, H)
  return { vi, reported: roundViscosityIndex(vi), procedure, L, H }
}

// ---------------------------------------------------------------- SAE J300

export interface SaeGrade {
  /** KV100 minimum, mm^2/s (the grade includes it) */
  kv100Min: number
  /** KV100 upper bound, mm^2/s (the grade is below it) */
  kv100Max: number
  /** high-temperature high-shear viscosity minimum at 150 C, mPa s */
  hthsMin: number | null
}

export interface SaeJ300Table {
  /** short key of the edition, as stored beside a check that used it */
  id: string
  /** what the figures rest on */
  edition: string
  grades: Record<string, SaeGrade>
  /** KV100 minimum of each winter (W) grade, mm^2/s */
  winterGrades: Record<string, { kv100Min: number }>
  /** HTHS minimum of SAE 40 when the winter grade is one of lowWinterFor40; other 40s use grades['40'].hthsMin */
  hthsMin40LowWinter: number
  lowWinterFor40: readonly string[]
}

/**
 * SAE J300 engine-oil viscosity classification, kept as data because editions
 * change it (grades are added, minimums move): a new edition is a new entry in
 * SAE_J300_EDITIONS, and every check names the edition it used. Summer grades
 * and HTHS minimums as reproduced (grade 12 from memory); the winter-grade
 * KV100 minimums and the edition's year are from memory.
 */
export const SAE_J300_2015: SaeJ300Table = Object.freeze({
  id: 'J300-2015',
  edition: 'SAE J300 (2015 and later revisions, grades 8 to 60), as reproduced; grade 12 and winter minimums from memory',
  grades: Object.freeze({
    '8': { kv100Min: 4.0, kv100Max: 6.1, hthsMin: 1.7 },
    '12': { kv100Min: 5.0, kv100Max: 7.1, hthsMin: 2.0 },
    '16': { kv100Min: 6.1, kv100Max: 8.2, hthsMin: 2.3 },
    '20': { kv100Min: 6.9, kv100Max: 9.3, hthsMin: 2.6 },
    '30': { kv100Min: 9.3, kv100Max: 12.5, hthsMin: 2.9 },
    '40': { kv100Min: 12.5, kv100Max: 16.3, hthsMin: 3.7 },
    '50': { kv100Min: 16.3, kv100Max: 21.9, hthsMin: 3.7 },
    '60': { kv100Min: 21.9, kv100Max: 26.1, hthsMin: 3.7 },
  }),
  winterGrades: Object.freeze({
    '0W': { kv100Min: 3.8 },
    '5W': { kv100Min: 3.8 },
    '10W': { kv100Min: 4.1 },
    '15W': { kv100Min: 5.6 },
    '20W': { kv100Min: 5.6 },
    '25W': { kv100Min: 9.3 },
  }),
  hthsMin40LowWinter: 3.5,
  lowWinterFor40: Object.freeze(['0W', '5W', '10W']),
})

/** Every edition the program knows, by id. */
export const SAE_J300_EDITIONS: Readonly<Record<string, SaeJ300Table>> = Object.freeze({ [SAE_J300_2015.id]: SAE_J300_2015 })

/** The edition checks use unless told otherwise. */
export const SAE_J300: SaeJ300Table = SAE_J300_2015

/**
 * '5W-40' -> { winter: '5W', summer: '40' }; '40' -> { winter: null, summer: '40' }; null if not a known grade.
 * Labs and oil drums write the same grade as 5W-40, 5W40, 5w/40 or SAE 5W–40.
 */
export function parseGrade(grade: string, table: SaeJ300Table = SAE_J300): { winter: string | null; summer: string } | null {
  if (typeof grade !== 'string') return null
  const m = /^\s*(?:SAE\s*)?(?:(\d{1,2})\s*W\s*[-\u2010-\u2015/]?\s*)?(\d{1,2})\s*$/i.exec(grade)
  if (!m) return null
  const winter = m[1] !== undefined ? `${Number(m[1])}W` : null
  const summer = String(Number(m[2]))
  if (!(summer in table.grades)) return null
  if (winter !== null && !(winter in table.winterGrades)) return null
  return { winter, summer }
}

/** Whether a KV100 lies in the grade's range (min included, max excluded); null for an unknown grade. */
export function kv100InGrade(grade: string, kv100: number, table: SaeJ300Table = SAE_J300): { ok: boolean; min: number; max: number } | null {
  const parsed = parseGrade(grade, table)
  if (!parsed) return null
  const summer = table.grades[parsed.summer]!
  const winterMin = parsed.winter ? table.winterGrades[parsed.winter]!.kv100Min : -Infinity
  const min = Math.max(summer.kv100Min, winterMin)
  const max = summer.kv100Max
  return { ok: Number.isFinite(kv100) && kv100 >= min && kv100 < max, min, max }
}

/**
 * HTHS minimum at 150 C for a grade, mPa s; null for an unknown grade or one
 * without a minimum. A multigrade takes the minimum of its summer grade, except
 * that a 40 with a low winter grade (0W-40, 5W-40, 10W-40) has the lower one.
 */
export function hthsMinFor(grade: string, table: SaeJ300Table = SAE_J300): number | null {
  const parsed = parseGrade(grade, table)
  if (!parsed) return null
  if (parsed.summer === '40' && parsed.winter !== null && table.lowWinterFor40.includes(parsed.winter)) return table.hthsMin40LowWinter
  return table.grades[parsed.summer]!.hthsMin
}

/** Whether an HTHS viscosity (mPa s at 150 C) meets the grade's minimum (the minimum itself passes); null when the grade has none. */
export function hthsInGrade(grade: string, hths: number, table: SaeJ300Table = SAE_J300): { ok: boolean; min: number } | null {
  const min = hthsMinFor(grade, table)
  if (min === null) return null
  return { ok: Number.isFinite(hths) && hths >= min, min }
}

// ------------------------------------------------------- ASTM D341 Walther

export interface WaltherFit {
  A: number
  B: number
}

const KELVIN_OFFSET = 273.15

function waltherZ(v: number): number {
  // Plain v + 0.7 form; the standard adds small correction terms that matter only below about 2 mm^2/s.
  return Math.log10(Math.log10(v + 0.7))
}

/** Fits log10 log10(v + 0.7) = A - B log10 T (T in kelvin) through two points. */
export function fitWalther(t1C: number, v1: number, t2C: number, v2: number): WaltherFit {
  if (t1C === t2C) throw new RangeError('the two temperatures must differ')
  if (!(v1 > 0.3) || !(v2 > 0.3)) throw new RangeError('viscosities must be above 0.3 mm^2/s for log log(v + 0.7)')
  const x1 = Math.log10(t1C + KELVIN_OFFSET)
  const x2 = Math.log10(t2C + KELVIN_OFFSET)
  const z1 = waltherZ(v1)
  const z2 = waltherZ(v2)
  const B = (z1 - z2) / (x2 - x1)
  const A = z1 + B * x1
  return { A, B }
}

/** Kinematic viscosity (mm^2/s) at a temperature from a Walther fit. */
export function waltherViscosity(fit: WaltherFit, tC: number): number {
  const z = fit.A - fit.B * Math.log10(tC + KELVIN_OFFSET)
  return 10 ** (10 ** z) - 0.7
}
