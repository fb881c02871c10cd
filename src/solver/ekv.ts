/**
 * The all-region EKV interpolation (Enz, Krummenacher, Vittoz, "An analytical
 * MOS transistor model valid in all regions of operation and dedicated to
 * low-voltage and low-current applications", Analog Integrated Circuits and
 * Signal Processing 8(1), 83–114, 1995; docs/physics.md §4 EKV all-region model):
 *   I = Ispec·(W/L)·[F((Vp − Vs)/U_T) − F((Vp − Vd)/U_T)],  F(x) = ln²(1 + e^{x/2}),
 *   Vp = κ·(Vg − VT0), voltages referenced to the bulk (downward from the well
 *   for a p-channel device). Deep in weak inversion F(x) → e^x.
 */

/** ln(1 + e^y) without overflow or loss for large |y|. */
export function softplus(y: number): number {
  return y > 0 ? y + Math.log1p(Math.exp(-y)) : Math.log1p(Math.exp(y));
}

/** 1 / (1 + e^{-y}) without overflow. */
export function logistic(y: number): number {
  if (y >= 0) return 1 / (1 + Math.exp(-y));
  const e = Math.exp(y);
  return e / (1 + e);
}

/** F(x) = ln²(1 + e^{x/2}): the normalised forward (or reverse) current. */
export function ekvF(x: number): number {
  const s = softplus(x / 2);
  return s * s;
}

/** dF/dx = ln(1 + e^{x/2}) · logistic(x/2). */
export function ekvFPrime(x: number): number {
  return softplus(x / 2) * logistic(x / 2);
}
