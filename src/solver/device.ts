/**
 * Per-device current equations of both models in one form, used by every
 * solver path and by the result evaluation.
 *
 * Each device is reduced to the n-channel form: with σ = +1 (nfet) or −1
 * (pfet) and Vb its bulk (0 for the substrate) or well, terminal voltages are
 * x = σ·(V − Vb), and the device current (nfet drain→source, pfet
 * source→drain, as docs/language.md, Sign conventions, reports it) is
 *   weak: I = exp(a + (κ·xg − xs)/U_T) − exp(a + (κ·xg − xd)/U_T),
 *         a = ln(i0·W/L) − κ·dVT/U_T                        (docs/physics.md §2 Weak-inversion drain current)
 *   ekv:  I = b·[F((κ(xg − VT0 − dVT) − xs)/U_T) − F((κ(xg − VT0 − dVT) − xd)/U_T)],
 *         b = ispec·W/L                                       (docs/physics.md §4 EKV all-region model)
 * The current entering the source node is σ·I, entering the drain −σ·I.
 */

import { NFET, type Network } from "../lang/network";
import { ekvF, ekvFPrime } from "./ekv";

/** Per-device constants of one point and mismatch sample. */
export interface DeviceParams {
  /** Weak model: ln(i0·W/L) − κ·dVT/U_T (filled on first use by deviceCurrent: the linear path never needs it). */
  lnScale: Float64Array;
  lnReady: boolean;
  /**
   * (W/L)·e^{−κ·dVT/U_T} with mismatch; null without, where it is W/L and
   * `sizes(P)` makes the array on first use (the linear path reads w and l directly).
   */
  size: Float64Array | null;
  /** The point's widths and lengths (metres). */
  w: Float64Array;
  l: Float64Array;
  i0: number;
  /** EKV: ispec·W/L. */
  ekvScale: Float64Array;
  /** EKV: VT0 + dVT. */
  vt: Float64Array;
  /** Threshold offsets of the sample (zeros without mismatch; empty for the weak model without mismatch, which reads none). */
  dvt: Float64Array;
  kappa: number;
  ut: number;
  ekv: boolean;
}

export function deviceParams(net: Network, dvt: Float64Array | null): DeviceParams {
  const { devices, settings } = net;
  const m = devices.count;
  const { kappa, ut, i0 } = settings;
  const ekv = settings.model === "ekv";
  // ln scale: filled on first use (the linear path never needs it).
  const lnScale = new Float64Array(0);
  const ekvScale = new Float64Array(ekv ? m : 0);
  const vt = new Float64Array(ekv ? m : 0);
  const off = dvt ?? new Float64Array(ekv ? m : 0);
  const { w, l } = devices;
  let size: Float64Array | null = null;
  if (dvt) {
    size = new Float64Array(m);
    for (let d = 0; d < m; d++) {
      const e = dvt[d] === 0 ? 1 : Math.exp((-kappa * dvt[d]) / ut);
      size[d] = (w[d] / l[d]) * e;
    }
  }
  if (ekv) {
    const ispec = settings.ispec as number;
    const vt0 = settings.vt0 as number;
    for (let d = 0; d < m; d++) {
      ekvScale[d] = (ispec * w[d]) / l[d];
      vt[d] = vt0 + off[d];
    }
  }
  return { lnScale, lnReady: false, size, w, l, i0, ekvScale, vt, dvt: off, kappa, ut, ekv };
}

/** (W/L)·e^{−κ·dVT/U_T} per device (W/L without mismatch, made on first use). */
export function sizes(P: DeviceParams): Float64Array {
  if (P.size === null) {
    const { w, l } = P;
    const size = new Float64Array(w.length);
    for (let d = 0; d < w.length; d++) size[d] = w[d] / l[d];
    P.size = size;
  }
  return P.size;
}

function fillLn(P: DeviceParams): void {
  const lnI0 = Math.log(P.i0);
  const size = sizes(P);
  if (P.lnScale.length !== size.length) P.lnScale = new Float64Array(size.length);
  for (let d = 0; d < size.length; d++) P.lnScale[d] = lnI0 + Math.log(size[d]);
  P.lnReady = true;
}

/** σ for a device type. */
export function polarity(type: number): number {
  return type === NFET ? 1 : -1;
}

/**
 * Device current and its partial derivatives with respect to xg, xs, xd,
 * written into out[0..3] = [I, ∂I/∂xg, ∂I/∂xs, ∂I/∂xd]; returns the forward current I_F.
 */
export function deviceCurrent(
  P: DeviceParams,
  d: number,
  xg: number,
  xs: number,
  xd: number,
  out: Float64Array,
): number {
  const ut = P.ut;
  const kappa = P.kappa;
  if (!P.ekv) {
    if (!P.lnReady) fillLn(P);
    const base = P.lnScale[d] + (kappa * xg) / ut;
    const iF = Math.exp(base - xs / ut);
    const iR = Math.exp(base - xd / ut);
    const i = iF - iR;
    out[0] = i;
    out[1] = (kappa * i) / ut;
    out[2] = -iF / ut;
    out[3] = iR / ut;
    return iF;
  }
  const b = P.ekvScale[d];
  const vp = kappa * (xg - P.vt[d]);
  const yf = (vp - xs) / ut;
  const yr = (vp - xd) / ut;
  const iF = b * ekvF(yf);
  const iR = b * ekvF(yr);
  const gf = (b * ekvFPrime(yf)) / ut;
  const gr = (b * ekvFPrime(yr)) / ut;
  out[0] = iF - iR;
  out[1] = kappa * (gf - gr);
  out[2] = -gf;
  out[3] = gr;
  return iF;
}
