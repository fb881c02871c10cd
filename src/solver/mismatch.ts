/**
 * Threshold mismatch Monte Carlo (Pelgrom, Duinmaijer, Welbers, "Matching
 * properties of MOS transistors", IEEE JSSC 24(5), 1433–1439, 1989;
 * docs/physics.md §7 Mismatch): each device gets dVT ~ Normal(0, avt / sqrt(W·L)) with W, L
 * in µm and avt in V·µm, applied per device (docs/language.md, Mismatch).
 *
 * Reproducibility: sample s draws from its own stream, the xoroshiro128+
 * generator of the pure-rand package seeded with `seed` and jumped s times
 * (2^64 steps each), so a sample does not depend on how many devices or
 * samples came before it, and the same seed gives the same numbers on every
 * machine. Normal deviates by the Box–Muller transform of 53-bit uniforms.
 * The standard normals of a sample depend only on (seed, sample, device
 * index); sizes scale them, so a sweep of W or L sees the same dies.
 */

import { uniformFloat64 } from "pure-rand/distribution/uniformFloat64";
import { xoroshiro128plus } from "pure-rand/generator/xoroshiro128plus";
import type { JumpableRandomGenerator } from "pure-rand/types/JumpableRandomGenerator";
import type { Mismatch, Network } from "../lang/network";
import type { Distribution } from "./results";

export class MismatchSampler {
  private streams: JumpableRandomGenerator[] = [];
  private z: Float64Array;

  constructor(
    readonly spec: Mismatch,
    readonly devices: number,
  ) {
    this.z = new Float64Array(devices);
  }

  /** Generator of sample s (a fresh clone each call). */
  private stream(s: number): JumpableRandomGenerator {
    if (this.streams.length === 0) this.streams.push(xoroshiro128plus(this.spec.seed | 0));
    while (this.streams.length <= s) {
      const g = this.streams[this.streams.length - 1].clone();
      g.jump();
      this.streams.push(g);
    }
    return this.streams[s].clone();
  }

  /** Standard normal deviates of sample s, one per device (a shared buffer, overwritten by the next call). */
  normals(s: number): Float64Array {
    const g = this.stream(s);
    const z = this.z;
    const m = this.devices;
    for (let d = 0; d < m; d += 2) {
      // Box–Muller: u1 in (0, 1], u2 in [0, 1).
      const u1 = 1 - uniformFloat64(g);
      const u2 = uniformFloat64(g);
      const r = Math.sqrt(-2 * Math.log(u1));
      z[d] = r * Math.cos(2 * Math.PI * u2);
      if (d + 1 < m) z[d + 1] = r * Math.sin(2 * Math.PI * u2);
    }
    return z;
  }

  /** Threshold offsets dVT (volts) of sample s for the device sizes of `net`, into `out`. */
  offsets(net: Network, s: number, out: Float64Array): Float64Array {
    const z = this.normals(s);
    const { w, l } = net.devices;
    const avt = this.spec.avt;
    for (let d = 0; d < this.devices; d++) out[d] = (avt / Math.sqrt(w[d] * 1e6 * (l[d] * 1e6))) * z[d];
    return out;
  }
}

/** Mean, sample standard deviation, extremes and percentiles of `values` (NaN entries ignored). */
export function summarize(values: ArrayLike<number>): { n: number } & Distribution {
  const v = Float64Array.from(
    Array.prototype.filter.call(values, (x: number) => Number.isFinite(x)) as number[],
  ).sort();
  const n = v.length;
  if (n === 0) return { n, mean: NaN, std: NaN, min: NaN, max: NaN, p1: NaN, p5: NaN, p50: NaN, p95: NaN, p99: NaN };
  let mean = 0;
  for (let k = 0; k < n; k++) mean += v[k];
  mean /= n;
  let ss = 0;
  for (let k = 0; k < n; k++) ss += (v[k] - mean) ** 2;
  const std = n > 1 ? Math.sqrt(ss / (n - 1)) : 0;
  // Percentile by linear interpolation between order statistics (position p·(n−1)).
  const pct = (p: number): number => {
    const x = p * (n - 1);
    const lo = Math.floor(x);
    const hi = Math.min(n - 1, lo + 1);
    return v[lo] + (x - lo) * (v[hi] - v[lo]);
  };
  return {
    n,
    mean,
    std,
    min: v[0],
    max: v[n - 1],
    p1: pct(0.01),
    p5: pct(0.05),
    p50: pct(0.5),
    p95: pct(0.95),
    p99: pct(0.99),
  };
}
