/**
 * `runnel sensitivity` and `runnel seek` (docs/language.md, The runnel command; Goal-seek and sensitivities):
 * the documents carry the pair's closed form ∂ln(I1/I2)/∂ΔV = κ/U_T (docs/physics.md §5; C. Mead, Analog VLSI
 * and Neural Systems, 1989), Pelgrom's first-order σ (docs/physics.md §7; Pelgrom et al., IEEE JSSC 24, 1989) and a
 * goal-seek of the pair's 90/10 split, ΔV = U_T·ln 9/κ (docs/physics.md §5), one per temperature of a sweep.
 */
import { describe, expect, it } from "vitest";
import { networkFile, runCli } from "../helpers/cli";
import { elaborate } from "../../src/lang/index";
import { thermalVoltage } from "../../src/lang/point";
import type { SeekJson, SensitivityJson } from "../../src/solver/design-json";

const PAIR = `network pair
set temp = 300.15K
param dv = 10m
param ib = 100n
rail vdd = 1.8
rail gnd = 0
rail v1 = 0.7 + dv
rail v2 = 0.7
nfet m1 gate=v1 source=tail drain=vdd w=2u l=2u
nfet m2 gate=v2 source=tail drain=vdd w=2u l=2u
inject tailsink from=tail to=gnd value=ib
probe lnratio = log(current(m1) / current(m2))
probe share = current(m1) / ib
`;

const file = (text: string) => networkFile(text);
const run = runCli;

describe("runnel sensitivity", () => {
  it("--json: thresholds per mV, normalised sizes, params and the first-order budget with groups", () => {
    const r = run(["sensitivity", file(PAIR), "--json", "--avt", "5m", "--groups", "m1,m*"]);
    expect(r.code).toBe(0);
    const doc = JSON.parse(r.out) as SensitivityJson;
    expect(doc.ok).toBe(true);
    expect(doc.method).toBe("linear");
    const ln = doc.probes.find((p) => p.probe === "lnratio")!;
    const kut = 0.7 / thermalVoltage(300.15);
    expect(Math.abs((ln.params.dv as number) / kut - 1)).toBeLessThan(1e-6);
    const m1 = ln.devices.find((d) => d.device === "m1")!;
    expect(Math.abs(m1.vt_per_mv / (-kut * 1e-3) - 1)).toBeLessThan(1e-9);
    // Pelgrom: σ = 5 mV·µm / 2 µm = 2.5 mV; docs/physics.md §7 gives σ(ln I1/I2) = 0.0677 when the pair's ΔVT has
    // that σ. Runnel applies avt per device, so ΔVT = VT1 − VT2 has √2 times it: 0.0677·√2.
    expect(ln.budget!.sigma / Math.SQRT2).toBeCloseTo(0.0677, 4);
    // A device counts in the first pattern it matches: m1 in "m1", m2 in "m*".
    expect(ln.budget!.groups.map((g) => [g.pattern, g.devices]).sort()).toEqual([
      ["m*", 1],
      ["m1", 1],
    ]);
    expect(ln.budget!.groups[0].share).toBeCloseTo(0.5, 9);
    expect(ln.budget!.groups[0].share + ln.budget!.groups[1].share).toBeCloseTo(1, 12);
  });

  it("with the file's mismatch: the Monte Carlo σ and its standard error beside the first-order σ, within 3 of them", () => {
    const r = run(["sensitivity", file(`${PAIR}mismatch runs 2000 seed 5 avt 5m\n`), "--json", "--probes", "lnratio"]);
    expect(r.code).toBe(0);
    const b = (JSON.parse(r.out) as SensitivityJson).probes[0].budget!;
    expect(b.avt).toBe(0.005);
    expect(b.monte_carlo!.samples).toBe(2000);
    expect(Math.abs(b.monte_carlo!.sigma - b.sigma)).toBeLessThan(3 * b.monte_carlo!.standard_error);
    // Another avt than the file's: no Monte Carlo to compare with.
    const other = run(["sensitivity", file(`${PAIR}mismatch runs 20 seed 5 avt 5m\n`), "--json", "--avt", "3m"]);
    expect((JSON.parse(other.out) as SensitivityJson).probes[0].budget!.monte_carlo).toBeNull();
  });

  it("a network with errors prints its diagnostics; unknown probes and bad numbers are usage errors", () => {
    expect(run(["sensitivity", file("network x\nrail a = \n"), "--json"]).code).toBe(1);
    expect(run(["sensitivity", file(PAIR), "--probes", "nope"]).code).toBe(2);
    expect(run(["sensitivity", file(PAIR), "--avt", "abc"]).err).toMatch(/--avt: 'abc' is not a number/);
  });
});

describe("runnel seek", () => {
  it("finds ΔV for a 90/10 split (U_T·ln 9/κ) at each temperature of a sweep", () => {
    const text = `${PAIR}sweep temp values [250, 300.15, 350]\n`;
    const r = run([
      "seek",
      file(text),
      "--json",
      "--param",
      "dv",
      "--low",
      "0",
      "--high",
      "200m",
      "--probe",
      "share",
      "--target",
      "0.9",
    ]);
    expect(r.err).toBe("");
    expect(r.code).toBe(0);
    const doc = JSON.parse(r.out) as SeekJson;
    expect(doc.points.map((p) => p.at.temp)).toEqual([250, 300.15, 350]);
    for (const p of doc.points) {
      expect(p.ok).toBe(true);
      if (!p.ok) continue;
      expect(Math.abs(p.value - (thermalVoltage(p.at.temp) * Math.log(9)) / 0.7)).toBeLessThan(1e-9);
      expect(Math.abs(p.achieved - 0.9)).toBeLessThan(1e-9);
    }
  });

  it("no crossing: exit 1 and the probe's range over the bracket", () => {
    const r = run([
      "seek",
      file(PAIR),
      "--param",
      "dv",
      "--low",
      "0",
      "--high",
      "10m",
      "--probe",
      "share",
      "--target",
      "0.9",
    ]);
    expect(r.code).toBe(1);
    expect(r.out).toMatch(
      /no dv: share does not cross 0\.9 for dv in \[0, 0\.01\]: over the 9 points tried it stays within \[0\.5000\d*, 0\.5672/,
    );
    expect(run(["seek", file(PAIR), "--param", "dv"]).err).toMatch(/missing --low/);
  });
});

describe("the seek statement (docs/language.md, Goal-seek and sensitivities)", () => {
  it("elaborates into the network and runnel seek FILE runs it", () => {
    const text = `${PAIR}seek dv from=0 to=200m measure=share target=0.9\n`;
    const net = elaborate(text).network!;
    expect(net.seeks).toEqual([
      { param: "dv", from: 0, to: 0.2, probe: "share", target: 0.9, span: expect.any(Object) as unknown },
    ]);
    const r = run(["seek", file(text), "--json"]);
    expect(r.code).toBe(0);
    const doc = JSON.parse(r.out) as { ok: boolean; seeks: SeekJson[] };
    const p = doc.seeks[0].points[0];
    expect(p.ok && Math.abs(p.value - (thermalVoltage(300.15) * Math.log(9)) / 0.7)).toBeLessThan(1e-9);
    expect(run(["seek", file(PAIR)]).err).toMatch(/the file has no seek statement/);
  });

  it.each([
    ["seek nope from=0 to=1 measure=share target=1", "seek of unknown param 'nope'"],
    ["seek dv from=0 to=1 measure=shar target=1", "seek measures 'shar', which is not a probe"],
    ["seek dv from=1 to=0 measure=share target=1", "seek's bracket is empty: from=1 must be below to=0"],
    ["seek dv from=0 to=1 target=1", "seek needs 'measure=PROBE', the probe to bring to the target"],
    ["seek dv from=0 measure=share target=1", "seek needs 'to=', a bound of dv"],
    ["seek dv from=0 to=1V measure=share target=1 from=2", "'from' is given twice"],
  ])("%s: %s", (line, message) => {
    const r = elaborate(`${PAIR}${line}\n`);
    expect(r.diagnostics.filter((d) => d.severity === "error").map((d) => d.message)).toContain(message);
  });

  it("a broken seek line gets a syntax message with an example", () => {
    const r = elaborate(`${PAIR}seek dv from 0\n`);
    expect(
      r.diagnostics.some((d) => /seek vh from=600m to=900m measure=lambda target=8/.test(d.hint ?? d.message)),
    ).toBe(true);
  });
});
