/**
 * Expectations over a whole run: per expectation whether it held at every point, how many points passed, the
 * first failing point, the smallest margin, and with mismatch the yield — passing samples over samples with its
 * 95 % Wilson score interval, over the run and per grid point.
 *
 * The Wilson score interval for k successes in n trials (E. B. Wilson, "Probable inference, the law of
 * succession, and statistical inference", J. American Statistical Association 22(158), 209–212, 1927):
 *   centre = (p̂ + z²/2n) / (1 + z²/n),  half-width = z·√(p̂(1 − p̂)/n + z²/4n²) / (1 + z²/n),  p̂ = k/n,
 * with z = Φ⁻¹(0.975) for 95 %. Unlike p̂ ± z·√(p̂(1 − p̂)/n) it stays inside [0, 1] and does not collapse to a
 * point when every sample passes (k = n).
 *
 * Pure: the command line tallies points as it solves them, the server from the stored points of a finished run.
 */

/** Φ⁻¹(0.975): the two-sided 95 % quantile of the standard normal distribution. */
export const Z95 = 1.959963984540054;

/** The Wilson score interval of k successes in n > 0 trials at quantile z (95 % by default). */
export function wilsonInterval(k: number, n: number, z = Z95): { low: number; high: number } {
  if (!(n > 0)) return { low: 0, high: 1 };
  const p = k / n;
  const z2 = z * z;
  const denominator = 1 + z2 / n;
  const centre = (p + z2 / (2 * n)) / denominator;
  const half = (z * Math.sqrt((p * (1 - p)) / n + z2 / (4 * n * n))) / denominator;
  // At k = 0 and k = n one end is exactly 0 or 1 (the quadratic's root p = p̂); rounding would leave 1 − 1e-16.
  return { low: k <= 0 ? 0 : Math.max(0, centre - half), high: k >= n ? 1 : Math.min(1, centre + half) };
}

export interface FirstFailure {
  point: number;
  params: Record<string, number>;
  /** Mismatch sample, null without mismatch. */
  sample: number | null;
}

export interface YieldEstimate {
  passed: number;
  samples: number;
  low: number;
  high: number;
}

/** An expectation over a run (the server keeps all of it; the command line prints the contract's part). */
export interface ExpectationSummary {
  name: string;
  /** Line of the expect statement. */
  line: number;
  /** Margin unit ("V", "A", "W", "" for a ratio), null when unknown or mixed. */
  unit: string | null;
  passed: boolean;
  /** Points counted: every point of the run that was reached (solved or not). */
  points: number;
  pointsPassed: number;
  /** Points that could not be solved: they count as failing (nothing shows the condition holds there). */
  notSolved: number;
  firstFailure: FirstFailure | null;
  /** The smallest margin over solved points, null when none has one. */
  margin: number | null;
  /** The point with the smallest margin. */
  worstPoint: number | null;
  /** With mismatch: over every sample of every grid point. */
  yield: YieldEstimate | null;
  /** With mismatch: per grid point, passing samples and samples (grid points of the run in order). */
  gridYield: { passed: number[]; samples: number[] } | null;
}

/** What a summary needs to know of each expectation. */
export interface ExpectationDef {
  name: string;
  line: number;
  unit: string | null;
}

/** Collects points (any order) into the run's summaries. */
export class ExpectationTally {
  private readonly n: number;
  private readonly points: Int32Array;
  private readonly passed: Int32Array;
  private readonly notSolved: Int32Array;
  private readonly first: (FirstFailure | null)[];
  private readonly margin: Float64Array;
  private readonly worst: Int32Array;
  private readonly gridPassed: Int32Array | null;
  private readonly gridSamples: Int32Array | null;

  /**
   * `samples`: mismatch samples per grid point, null without mismatch; `gridPoints`: grid points of the run.
   */
  constructor(
    private readonly defs: readonly ExpectationDef[],
    private readonly samples: number | null,
    private readonly gridPoints: number,
  ) {
    const n = defs.length;
    this.n = n;
    this.points = new Int32Array(n);
    this.passed = new Int32Array(n);
    this.notSolved = new Int32Array(n);
    this.first = new Array<FirstFailure | null>(n).fill(null);
    this.margin = new Float64Array(n).fill(NaN);
    this.worst = new Int32Array(n).fill(-1);
    this.gridPassed = samples !== null ? new Int32Array(n * gridPoints) : null;
    this.gridSamples = samples !== null ? new Int32Array(gridPoints) : null;
  }

  /**
   * A point of the run: its verdicts and margins (null when it could not be solved); `params` gives its params,
   * asked only when it is the first failure so far.
   */
  add(
    point: number,
    outcome: { passed: ArrayLike<number>; margins: ArrayLike<number> } | null,
    params: () => Record<string, number>,
  ): void {
    const { n, samples } = this;
    const grid = samples !== null ? Math.floor(point / samples) : point;
    if (this.gridSamples && grid < this.gridPoints) this.gridSamples[grid]++;
    for (let i = 0; i < n; i++) {
      this.points[i]++;
      const ok = outcome !== null && outcome.passed[i] === 1;
      if (outcome === null) this.notSolved[i]++;
      if (ok) {
        this.passed[i]++;
        if (this.gridPassed && grid < this.gridPoints) this.gridPassed[i * this.gridPoints + grid]++;
      } else {
        const f = this.first[i];
        if (f === null || point < f.point)
          this.first[i] = { point, params: params(), sample: samples !== null ? point - grid * samples : null };
      }
      if (outcome !== null) {
        const m = outcome.margins[i];
        if (
          !Number.isNaN(m) &&
          (Number.isNaN(this.margin[i]) || m < this.margin[i] || (m === this.margin[i] && point < this.worst[i]))
        ) {
          this.margin[i] = m;
          this.worst[i] = point;
        }
      }
    }
  }

  finish(): ExpectationSummary[] {
    return this.defs.map((d, i) => {
      const points = this.points[i];
      const pointsPassed = this.passed[i];
      const m = this.margin[i];
      let yieldEstimate: YieldEstimate | null = null;
      let gridYield: ExpectationSummary["gridYield"] = null;
      if (this.samples !== null && this.gridPassed && this.gridSamples) {
        const { low, high } = wilsonInterval(pointsPassed, points);
        yieldEstimate = { passed: pointsPassed, samples: points, low, high };
        const g = this.gridPoints;
        gridYield = {
          passed: Array.from(this.gridPassed.subarray(i * g, (i + 1) * g)),
          samples: Array.from(this.gridSamples),
        };
      }
      return {
        name: d.name,
        line: d.line,
        unit: d.unit,
        passed: points > 0 && pointsPassed === points,
        points,
        pointsPassed,
        notSolved: this.notSolved[i],
        firstFailure: this.first[i],
        margin: Number.isFinite(m) ? m : null,
        worstPoint: Number.isFinite(m) ? this.worst[i] : null,
        yield: yieldEstimate,
        gridYield,
      };
    });
  }
}

/** One expectation as the `runnel solve --json` document prints it (docs/language.md, Expectations). */
export interface ExpectationJson {
  name: string;
  line: number;
  passed: boolean;
  points: number;
  points_passed: number;
  first_failure: FirstFailure | null;
  margin: number | null;
  yield: YieldEstimate | null;
}

export function expectationJson(s: ExpectationSummary): ExpectationJson {
  return {
    name: s.name,
    line: s.line,
    passed: s.passed,
    points: s.points,
    points_passed: s.pointsPassed,
    first_failure: s.firstFailure,
    margin: s.margin,
    yield: s.yield,
  };
}
