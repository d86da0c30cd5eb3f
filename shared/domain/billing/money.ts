// Money is kept in integer minor units (cents, pence, yen) with an ISO 4217 code; never a float.

/** ISO 4217 codes the runtime's ICU data knows (current and some historic codes). */
const KNOWN = new Set(Intl.supportedValuesOf('currency'))

export function isCurrencyCode(code: string): boolean {
  return /^[A-Z]{3}$/.test(code) && KNOWN.has(code)
}

/** Digits after the decimal point of a currency's minor unit (EUR 2, JPY 0, BHD 3). */
export function minorDigits(currency: string): number {
  return new Intl.NumberFormat('en', { style: 'currency', currency }).resolvedOptions().maximumFractionDigits ?? 2
}

/**
 * round(a * b / c) with halves away from zero, exact for any integers (BigInt inside):
 * km in metres times a rate per km, or milliseconds times a rate per hour, pass 2^53 easily.
 */
export function mulDivRound(a: number, b: number, c: number): number {
  if (!Number.isInteger(a) || !Number.isInteger(b) || !Number.isInteger(c) || c === 0) throw new RangeError('mulDivRound takes integers and a non-zero divisor')
  const num = BigInt(a) * BigInt(b)
  const den = BigInt(c)
  const neg = num < 0n !== den < 0n
  const n = num < 0n ? -num : num
  const d = den < 0n ? -den : den
  const q = (2n * n + d) / (2n * d)
  return Number(neg ? -q : q)
}

/** 12345 EUR -> "12,345.00" style text of a minor-unit amount, for screens and CSV. */
export function formatMinor(amountMinor: number, currency: string): string {
  const digits = minorDigits(currency)
  const sign = amountMinor < 0 ? '-' : ''
  const abs = Math.abs(amountMinor)
  const unit = 10 ** digits
  const whole = Math.floor(abs / unit).toLocaleString('en-GB')
  const frac = digits ? `.${String(abs % unit).padStart(digits, '0')}` : ''
  return `${sign}${whole}${frac}`
}
