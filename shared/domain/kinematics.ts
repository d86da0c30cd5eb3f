// Slider-crank kinematics of the engine type (Heywood, Internal Combustion Engine Fundamentals, ch. 2).
// Crank angle in degrees from TDC; piston displacement x measured from TDC towards BDC, so velocity
// and acceleration are positive towards BDC. Sheet figures are design aids, not service limits.

function geometry(strokeMm: number, conrodMm: number): { a: number; l: number; R: number } {
  if (!(strokeMm > 0)) throw new RangeError('stroke must be positive')
  const a = strokeMm / 2
  // A rod no longer than the crank radius cannot complete a revolution.
  if (!(conrodMm > a)) throw new RangeError('conrod must be longer than the crank radius')
  return { a, l: conrodMm, R: conrodMm / a }
}

const rad = (deg: number) => (deg * Math.PI) / 180
const omega = (rpm: number) => (2 * Math.PI * rpm) / 60

/** Sp = 2 L N, m/s */
export function meanPistonSpeed(strokeMm: number, rpm: number): number {
  return (2 * (strokeMm / 1000) * rpm) / 60
}

/** x = (a + l) - (a cos t + sqrt(l^2 - a^2 sin^2 t)), mm from TDC */
export function pistonDisplacement(strokeMm: number, conrodMm: number, crankDeg: number): number {
  const { a, l } = geometry(strokeMm, conrodMm)
  const t = rad(crankDeg)
  const sin = Math.sin(t)
  return a + l - (a * Math.cos(t) + Math.sqrt(l * l - a * a * sin * sin))
}

/** v = a w sin t [1 + cos t / sqrt(R^2 - sin^2 t)], m/s */
export function pistonVelocity(strokeMm: number, conrodMm: number, rpm: number, crankDeg: number): number {
  const { a, R } = geometry(strokeMm, conrodMm)
  const t = rad(crankDeg)
  const sin = Math.sin(t)
  return (a / 1000) * omega(rpm) * sin * (1 + Math.cos(t) / Math.sqrt(R * R - sin * sin))
}

/**
 * Piston acceleration, m/s^2. 'exact': a w^2 [cos t + (R^2 cos 2t + sin^4 t) / (R^2 - sin^2 t)^1.5];
 * 'two-term': the textbook series a w^2 (cos t + cos 2t / R).
 */
export function pistonAcceleration(
  strokeMm: number,
  conrodMm: number,
  rpm: number,
  crankDeg: number,
  form: 'exact' | 'two-term' = 'exact',
): number {
  const { a, R } = geometry(strokeMm, conrodMm)
  const t = rad(crankDeg)
  const aw2 = (a / 1000) * omega(rpm) ** 2
  if (form === 'two-term') return aw2 * (Math.cos(t) + Math.cos(2 * t) / R)
  const sin2 = Math.sin(t) ** 2
  return aw2 * (Math.cos(t) + (R * R * Math.cos(2 * t) + sin2 * sin2) / Math.pow(R * R - sin2, 1.5))
}

/** Peak piston speed on the down stroke: where the exact acceleration crosses zero (between 0 and 90 deg). */
export function peakPistonSpeed(strokeMm: number, conrodMm: number, rpm: number): { speed: number; crankDeg: number } {
  geometry(strokeMm, conrodMm)
  // Acceleration is positive at TDC and -a w^2 / sqrt(R^2 - 1) at 90 deg, so one root lies between.
  // Evaluated at a unit speed so the sign test does not depend on rpm.
  let lo = 0
  let hi = 90
  for (let i = 0; i < 80; i++) {
    const mid = (lo + hi) / 2
    if (pistonAcceleration(strokeMm, conrodMm, 60, mid) > 0) lo = mid
    else hi = mid
  }
  const crankDeg = (lo + hi) / 2
  return { speed: pistonVelocity(strokeMm, conrodMm, rpm, crankDeg), crankDeg }
}

/** F = m a, N (reciprocating mass times piston acceleration) */
export function inertiaForce(massKg: number, accel: number): number {
  return massKg * accel
}

/** Reciprocating inertia force at the dead centres for one rpm, N, positive towards BDC. */
export interface InertiaForceAt {
  rpm: number
  /** at TDC the mass pulls the piston away from the crank: the rod and its bolts in tension */
  tdcN: number
  /** at BDC the mass pushes towards the crank (negative in this sign convention) */
  bdcN: number
}

/**
 * F = m a at TDC and BDC, with the exact slider-crank acceleration (Heywood ch. 2), which at the
 * dead centres is a w^2 (1 + 1/R) and -a w^2 (1 - 1/R); the two-term form gives the same there.
 * massKg is the reciprocating mass per cylinder: piston, pin, rings, clips and the small-end share
 * of the conrod. A design aid, not a service limit.
 */
export function inertiaForceAtRpm(strokeMm: number, conrodMm: number, massKg: number, rpm: number): InertiaForceAt {
  if (!(massKg > 0) || !Number.isFinite(massKg)) throw new RangeError('reciprocating mass must be positive')
  if (!(rpm >= 0) || !Number.isFinite(rpm)) throw new RangeError('rpm must be zero or above')
  return {
    rpm,
    tdcN: inertiaForce(massKg, pistonAcceleration(strokeMm, conrodMm, rpm, 0, 'exact')),
    bdcN: inertiaForce(massKg, pistonAcceleration(strokeMm, conrodMm, rpm, 180, 'exact')),
  }
}

export interface InertiaForceRow extends InertiaForceAt {
  /** null for the rev limit, else the over-rev band whose threshold this is */
  bandId: string | null
  label: string
}

/**
 * The inertia force at the rev limit and at each over-rev band's threshold, lowest rpm first;
 * null when the engine type has no reciprocating mass.
 */
export function inertiaForceTable(t: {
  strokeMm: number
  conrodMm: number
  revLimitRpm: number
  reciprocatingMassKg?: number | null
  overRevBands?: readonly { id: string; label: string; minRpm: number }[]
}): InertiaForceRow[] | null {
  const mass = t.reciprocatingMassKg
  if (mass === undefined || mass === null) return null
  const rows: InertiaForceRow[] = [{ bandId: null, label: 'Rev limit', ...inertiaForceAtRpm(t.strokeMm, t.conrodMm, mass, t.revLimitRpm) }]
  for (const b of [...(t.overRevBands ?? [])].sort((x, y) => x.minRpm - y.minRpm)) {
    rows.push({ bandId: b.id, label: b.label, ...inertiaForceAtRpm(t.strokeMm, t.conrodMm, mass, b.minRpm) })
  }
  return rows
}

/** Even firing interval: 720 / cylinders for a four-stroke, 360 / cylinders for a two-stroke. */
export function firingIntervalDeg(cylinders: number, strokes: 2 | 4 = 4): number {
  if (!Number.isInteger(cylinders) || cylinders < 1) throw new RangeError('cylinders must be a positive integer')
  return (strokes === 2 ? 360 : 720) / cylinders
}

/** Swept volume, cc */
export function displacementCc(boreMm: number, strokeMm: number, cylinders: number): number {
  return ((Math.PI / 4) * boreMm * boreMm * strokeMm * cylinders) / 1000
}

export interface EngineTypeSheet {
  displacementCc: number
  meanPistonSpeedAtLimit: number
  peakPistonSpeedAtLimit: number
  pistonAccelTdcAtLimit: number
  pistonAccelBdcAtLimit: number
  inertiaForceTdcAtLimit: number | null
  /** at the rev limit and each over-rev band's threshold; null without a reciprocating mass */
  inertiaForces: InertiaForceRow[] | null
  firingIntervalDeg: number
  /** conrod length / stroke, as engine builders quote it */
  rodRatio: number
  /** Heywood's R = conrod length / crank radius */
  rodToCrankRadius?: number
  peakPistonSpeedCrankDeg?: number
}

export function engineTypeSheet(t: {
  cylinders: number
  boreMm: number
  strokeMm: number
  conrodMm: number
  revLimitRpm: number
  reciprocatingMassKg?: number | null
  overRevBands?: readonly { id: string; label: string; minRpm: number }[]
  strokes?: 2 | 4
}): EngineTypeSheet {
  const { R } = geometry(t.strokeMm, t.conrodMm)
  const accelTdc = pistonAcceleration(t.strokeMm, t.conrodMm, t.revLimitRpm, 0)
  const peak = peakPistonSpeed(t.strokeMm, t.conrodMm, t.revLimitRpm)
  const mass = t.reciprocatingMassKg
  return {
    displacementCc: displacementCc(t.boreMm, t.strokeMm, t.cylinders),
    meanPistonSpeedAtLimit: meanPistonSpeed(t.strokeMm, t.revLimitRpm),
    peakPistonSpeedAtLimit: peak.speed,
    pistonAccelTdcAtLimit: accelTdc,
    pistonAccelBdcAtLimit: pistonAcceleration(t.strokeMm, t.conrodMm, t.revLimitRpm, 180),
    inertiaForceTdcAtLimit: mass === undefined || mass === null ? null : inertiaForce(mass, accelTdc),
    inertiaForces: inertiaForceTable(t),
    firingIntervalDeg: firingIntervalDeg(t.cylinders, t.strokes ?? 4),
    rodRatio: t.conrodMm / t.strokeMm,
    rodToCrankRadius: R,
    peakPistonSpeedCrankDeg: peak.crankDeg,
  }
}
