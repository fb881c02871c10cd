import { describe, expect, it } from "vitest";
import { all, create } from "mathjs/number";
import {
  applyPoint,
  elaborate,
  NFET,
  parseNumber,
  PFET,
  pointScope,
  SUBSTRATE,
  thermalVoltage,
} from "../../src/lang/index";
import type { Network, ProbeContext } from "../../src/lang/network";

const math = create(all);

function net(text: string): Network {
  const r = elaborate(text);
  if (!r.ok || !r.network) throw new Error(r.diagnostics.map((d) => `${d.line}:${d.column} ${d.message}`).join("\n"));
  expect(r.diagnostics.filter((d) => d.severity === "error")).toEqual([]);
  return r.network;
}

function device(n: Network, name: string) {
  const i = n.devices.index.get(name);
  if (i === undefined) throw new Error(`no device ${name}`);
  const node = (k: number) => (k === SUBSTRATE ? "substrate" : n.nodes.names[k]);
  return {
    type: n.devices.type[i],
    gate: node(n.devices.gate[i]),
    source: node(n.devices.source[i]),
    drain: node(n.devices.drain[i]),
    bulk: node(n.devices.bulk[i]),
    w: n.devices.w[i],
    l: n.devices.l[i],
  };
}

const ROW = `rail vdd = 1.8
rail gnd = 0
rail gh = 0.75
rail gv = 0.65
for k in 0..6 {
  nfet lat{k} gate=gh source=x{k} drain=x{k+1}
}
for k in 0..7 {
  nfet out{k} gate=gv source=x{k} drain=vdd w=2u l=4u
}
inject in from=x3 to=gnd value=1n
`;

describe("numbers", () => {
  // SI prefixes f p n u/µ m k M G are powers of ten (BIPM, The International System of Units, 9th ed., 2019 [confirmed]);
  // the expected values are written as plain decimal literals, rounded by the JavaScript parser.
  it.each([
    ["450m", 0.45, ""],
    ["450mV", 0.45, "V"],
    ["10nA", 1e-8, "A"],
    ["300K", 300, "K"],
    ["1e-15", 1e-15, ""],
    ["1f", 1e-15, ""],
    ["2u", 2e-6, ""],
    ["3µ", 3e-6, ""],
    ["1.5e3k", 1.5e6, ""],
    ["2M", 2e6, ""],
    ["1G", 1e9, ""],
    [".5p", 0.5e-12, ""],
  ])("%s is %d", (text, value, unit) => {
    expect(parseNumber(text)).toEqual({ value, unit });
  });

  it("a unit symbol is checked, never scaled", () => {
    const n = net("param a = 450mV\nparam b = 450m\n");
    expect(n.params[0].value).toBe(n.params[1].value);
  });
});

describe("loop expansion and names", () => {
  it("expands a for block into devices with interpolated names", () => {
    const n = net(ROW);
    expect(n.devices.count).toBe(15);
    expect(n.devices.names.slice(0, 3)).toEqual(["lat0", "lat1", "lat2"]);
    expect(device(n, "lat6")).toMatchObject({
      type: NFET,
      gate: "gh",
      source: "x6",
      drain: "x7",
      bulk: "substrate",
      w: 1e-6,
      l: 1e-6,
    });
    expect(device(n, "out7")).toMatchObject({ source: "x7", drain: "vdd", w: 2e-6, l: 4e-6 });
    expect(n.nodes.names.filter((x) => x.startsWith("x"))).toHaveLength(8);
  });

  it("nests loops and joins several name pieces", () => {
    const n = net(`rail v = 1
for i in 0..2 {
  for j in 0..i {
    nfet m{i}_{j}t gate=v source=v drain=n{2*i+j}
    nfet k{i}_{j} gate=v source=n{2*i+j} drain=v
  }
}
`);
    expect(n.devices.names.filter((x) => x.startsWith("m"))).toEqual([
      "m0_0t",
      "m1_0t",
      "m1_1t",
      "m2_0t",
      "m2_1t",
      "m2_2t",
    ]);
    expect(device(n, "m2_1t").drain).toBe("n5");
  });

  it("loop bounds may use params, and a one-element range runs once", () => {
    const n = net("param n = 4\nrail v = 1\nfor k in n-1..n-1 {\n  nfet m{k} gate=v source=v drain=v\n}\n");
    expect(n.devices.names).toEqual(["m3"]);
  });

  it("nodes are created in order of first use, rails keep their value", () => {
    const n = net(ROW);
    expect(n.nodes.names.slice(0, 5)).toEqual(["vdd", "gnd", "gh", "gv", "x0"]);
    expect(n.nodes.railValue[n.nodes.index.get("vdd")!]).toBe(1.8);
    expect(Number.isNaN(n.nodes.railValue[n.nodes.index.get("x3")!])).toBe(true);
    expect(n.rails.map((r) => r.name)).toEqual(["vdd", "gnd", "gh", "gv"]);
  });

  it("a rail may be declared after a device uses it", () => {
    const n = net("nfet m gate=v source=g drain=v\nrail v = 1\nrail g = 0\n");
    expect(n.rails.map((r) => r.name)).toEqual(["v", "g"]);
    expect(n.nodes.railValue[n.nodes.index.get("g")!]).toBe(0);
  });

  it("pfet bulk holds its well; nfet bulk= is kept", () => {
    const n = net(
      "rail vdd = 1.8\nrail gnd = 0\nrail gp = 1.2\nrail b = 0\npfet p gate=gp source=vdd drain=x well=vdd\nnfet m gate=x source=gnd drain=x bulk=b\n",
    );
    expect(device(n, "p")).toMatchObject({ type: PFET, bulk: "vdd" });
    expect(device(n, "m")).toMatchObject({ type: NFET, bulk: "b" });
  });

  it("injects keep from, to and value; devices and injects remember their statement offsets", () => {
    const n = net(ROW);
    expect(n.injects.count).toBe(1);
    expect(n.nodes.names[n.injects.from[0]]).toBe("x3");
    expect(n.nodes.names[n.injects.to[0]]).toBe("gnd");
    expect(n.injects.value[0]).toBe(1e-9);
    expect(ROW.slice(n.injects.at[0], n.injects.at[0] + 6)).toBe("inject");
    expect(ROW.slice(n.devices.at[0], n.devices.at[0] + 4)).toBe("nfet");
  });
});

describe("params, settings and the thermal voltage", () => {
  it("evaluates params in order, later ones from earlier ones", () => {
    const n = net("param a = 2\nparam b = a * 3 + 1\nparam c = sqrt(b) * 2u\n");
    expect(n.params.map((p) => p.value)).toEqual([2, 7, Math.sqrt(7) * 2e-6]);
  });

  it("has the documented defaults", () => {
    const n = net("");
    expect(n.settings).toEqual({
      kappa: 0.7,
      temp: 300,
      ut: thermalVoltage(300),
      i0: 1e-15,
      vt0: null,
      ispec: null,
      model: "weak",
    });
    expect(n.name).toBeNull();
  });

  it("reads network and set statements", () => {
    const n = net(
      "network lm64\nset kappa = 0.65\nset temp = 350K\nset i0 = 2f\nset vt0 = 450m\nset ispec = 100n\nset model = ekv\n",
    );
    expect(n.name).toBe("lm64");
    expect(n.settings).toMatchObject({ kappa: 0.65, temp: 350, i0: 2e-15, vt0: 0.45, ispec: 1e-7, model: "ekv" });
  });

  // U_T = kT/q, k and q exact since the 2019 SI revision (BIPM SI Brochure, 9th ed., 2019; CODATA 2018) [confirmed]:
  // 25.852000 mV at 300 K, 30.160666 mV at 350 K, 21.543333 mV at 250 K (docs/physics.md §1 Thermal voltage).
  it("ut follows set temp", () => {
    expect(net("param u = ut\n").params[0].value).toBeCloseTo(25.852e-3, 9);
    expect(net("set temp = 350K\nparam u = ut\n").params[0].value).toBeCloseTo(30.160666e-3, 9);
    expect(net("set temp = 250K\nparam u = ut * 1000\n").params[0].value).toBeCloseTo(21.543333, 5);
  });

  it("evaluates with math.js: the same value as math.evaluate of the same text", () => {
    const text = "exp(0.7 * 0.45 / 0.0258) * log(10) / sqrt(2) + max(1, 3, 2) ^ 2";
    expect(net(`param a = ${text}\n`).params[0].value).toBe(math.evaluate(text));
  });
});

describe("sweeps and mismatch", () => {
  it("a step sweep includes both ends without binary noise", () => {
    const n = net("param vh = 0.45\nsweep vh from 0.3 to 0.4 step 0.02\n");
    expect(n.sweeps[0]).toMatchObject({ param: "vh", log: false, values: [0.3, 0.32, 0.34, 0.36, 0.38, 0.4] });
  });

  it("a downward sweep takes a negative step", () => {
    expect(net("param a = 1\nsweep a from 3 to 1 step -1\n").sweeps[0].values).toEqual([3, 2, 1]);
  });

  it("points N spaces linearly, or geometrically with log", () => {
    const n = net(
      "param ib = 1n\nparam vv = 0.3\nsweep vv from 0.3 to 0.4 points 5\nsweep ib from 1n to 100n points 5 log\n",
    );
    expect(n.sweeps[0].values).toEqual([0.3, 0.325, 0.35, 0.375, 0.4]);
    const log = n.sweeps[1];
    expect(log.log).toBe(true);
    // Geometric spacing: a·(b/a)^(i/(N-1)), here 10^(-9 + i/2).
    const expected = [0, 1, 2, 3, 4].map((i) => Math.pow(10, -9 + i / 2));
    log.values.forEach((v, i) => expect(v / expected[i]).toBeCloseTo(1, 10));
  });

  it("values lists and temperature sweeps; two sweeps keep their order", () => {
    const n = net("param dv = 0\nsweep temp values [250K, 300K, 350K]\nsweep dv values [0, 10m, 20m]\n");
    expect(n.sweeps.map((s) => [s.param, s.values])).toEqual([
      ["temp", [250, 300, 350]],
      ["dv", [0, 0.01, 0.02]],
    ]);
  });

  it("mismatch runs, seed and avt (V·µm)", () => {
    expect(net("mismatch runs 200 seed 7 avt 3.5m\n").mismatch).toMatchObject({ runs: 200, seed: 7, avt: 3.5e-3 });
    expect(net("mismatch avt 5m runs 3\n").mismatch).toMatchObject({ runs: 3, seed: 1, avt: 5e-3 });
  });
});

describe("bindings and applyPoint", () => {
  const DIVIDER = `set temp = 300.15K
param vcm = 0.7
param dv = 10mV
param half = dv / 2
rail vdd = 1.8
rail gnd = 0
rail g1 = vcm + half
rail g2 = vcm - half
nfet m1 gate=g1 source=tail drain=vdd w=wl
nfet m2 gate=g2 source=tail drain=vdd
inject ib from=tail to=gnd value=100n * (1 + 0*dv/ut)
param wl = 1u
probe ratio = current(m1) / current(m2)
probe ideal = exp(kappa * dv / ut)
probe vt = voltage(tail)
probe supply = current(vdd)
probe tailsink = current(ib)
sweep dv values [0, 10m, 20m]
`;

  it("only values that depend on params or temp get bindings", () => {
    const r = elaborate(DIVIDER);
    // wl is used before it is defined: an error, not a silent default.
    expect(r.diagnostics.map((d) => d.message)).toEqual(["param 'wl' is used before it is defined (line 12)"]);
    const n = net(DIVIDER.replace("w=wl", "w=1u"));
    expect(n.bindings.map((b) => b.target.kind).sort()).toEqual(["inject", "rail", "rail"]);
    const g1 = n.bindings.find((b) => b.target.kind === "rail" && b.target.node === n.nodes.index.get("g1"))!;
    expect(g1.dependsOn.sort()).toEqual(["dv", "half", "vcm"]);
  });

  it("applyPoint re-evaluates rails, including through derived params, without mutating the network", () => {
    const n = net(DIVIDER.replace("w=wl", "w=1u"));
    const g1 = n.nodes.index.get("g1")!;
    const g2 = n.nodes.index.get("g2")!;
    const p = applyPoint(n, { dv: 0.02 });
    expect(p.nodes.railValue[g1]).toBeCloseTo(0.71, 12);
    expect(p.nodes.railValue[g2]).toBeCloseTo(0.69, 12);
    expect(p.params.find((x) => x.name === "half")!.value).toBeCloseTo(0.01, 12);
    expect(n.nodes.railValue[g1]).toBeCloseTo(0.705, 12);
    expect(applyPoint(n, { dv: 0.01 })).toBe(n);
  });

  it("a temperature point changes ut and whatever reads it", () => {
    const n = net("param vb = 0.4 + 4*ut\nrail v = vb\nrail g = 0\nnfet m gate=v source=g drain=v w=2u*(1+0*ut/ut)\n");
    const p = applyPoint(n, { temp: 350 });
    expect(p.settings.ut).toBeCloseTo(30.160666e-3, 9);
    expect(p.nodes.railValue[n.nodes.index.get("v")!]).toBeCloseTo(0.4 + 4 * 30.160666e-3, 8);
    expect(p.devices.w[0]).toBeCloseTo(2e-6, 15);
    expect(n.settings.temp).toBe(300);
  });

  it("set kappa may follow a swept param", () => {
    const n = net(
      "param k = 0.7\nset kappa = k\nparam x = kappa * 2\nrail v = x\nrail g = 0\nnfet m gate=v source=g drain=v\nsweep k values [0.6, 0.7]\n",
    );
    const p = applyPoint(n, { k: 0.6 });
    expect(p.settings.kappa).toBe(0.6);
    expect(pointScope(n, { k: 0.6 }).x).toBeCloseTo(1.2, 12);
    expect(p.nodes.railValue[n.nodes.index.get("v")!]).toBeCloseTo(1.2, 12);
  });

  it("bindings inside loops capture their loop variable", () => {
    const n = net(
      "param step = 0.1\nrail g = 0\nfor k in 1..3 {\n  rail r{k} = k * step\n  nfet m{k} gate=r{k} source=g drain=r{k}\n}\n",
    );
    const p = applyPoint(n, { step: 0.2 });
    expect([1, 2, 3].map((k) => p.nodes.railValue[n.nodes.index.get(`r${k}`)!])).toEqual([
      0.2, 0.4, 0.6000000000000001,
    ]);
  });

  // Differential pair, both devices saturated: I1/I2 = exp(κΔV/U_T) = 1.3107989 at ΔV 10 mV, κ 0.7, 300.15 K
  // (C. Mead, Analog VLSI and Neural Systems, Addison-Wesley, 1989 [confirmed record; formula derived],
  // docs/physics.md §5 Differential pair);
  // 1.3839 at 250 K and 1.2612 at 350 K (docs/physics.md §9 Temperature).
  it("probes read the solved point through the context", () => {
    const n = net(DIVIDER.replace("w=wl", "w=1u"));
    const byName = Object.fromEntries(n.probes.map((p) => [p.name, p]));
    const tail = n.nodes.index.get("tail")!;
    const vdd = n.nodes.index.get("vdd")!;
    const ctx: ProbeContext = {
      voltage: (i) => (i === tail ? 0.123 : NaN),
      deviceCurrent: (i) => (i === 0 ? 3e-9 : i === 1 ? 2e-9 : NaN),
      injectCurrent: (i) => (i === 0 ? 1e-7 : NaN),
      railCurrent: (i) => (i === vdd ? 5e-9 : NaN),
    };
    expect(byName.ratio.evaluate(ctx, {}, n.settings)).toBeCloseTo(1.5, 12);
    expect(byName.vt.evaluate(ctx, {}, n.settings)).toBe(0.123);
    expect(byName.supply.evaluate(ctx, {}, n.settings)).toBe(5e-9);
    expect(byName.tailsink.evaluate(ctx, {}, n.settings)).toBe(1e-7);
    expect(byName.ideal.evaluate(ctx, {}, n.settings)).toBeCloseTo(1.3107989, 6);
    for (const [temp, ratio] of [
      [250, 1.3839],
      [350, 1.2612],
    ]) {
      const p = applyPoint(n, { temp });
      expect(byName.ideal.evaluate(ctx, { dv: 0.01 }, p.settings)).toBeCloseTo(ratio, 4);
    }
    expect(byName.ideal.evaluate(ctx, { dv: 0.02 }, n.settings)).toBeCloseTo(1.3107989 ** 2, 6);
  });

  it("probes inside loops resolve each instance", () => {
    const n = net(
      "rail v = 1\nrail g = 0\nfor k in 0..2 {\n  nfet m{k} gate=v source=g drain=v\n  probe i{k} = current(m{k}) * (k + 1)\n}\n",
    );
    const ctx: ProbeContext = {
      voltage: () => 0,
      deviceCurrent: (i) => 10 ** i,
      injectCurrent: () => 0,
      railCurrent: () => 0,
    };
    expect(n.probes.map((p) => p.evaluate(ctx, {}, n.settings))).toEqual([1, 20, 300]);
  });
});

describe("long runs of one precedence are not nesting", () => {
  it("a flat sum of 250 and of 100,000 terms is a value, not a depth error", () => {
    expect(net(`param p = ${Array(250).fill("1").join("+")}\n`).params[0].value).toBe(250);
    expect(net(`param p = ${Array(100_000).fill("1").join("+")}\n`).params[0].value).toBe(100_000);
  });

  it("a long mixed run folds from the left exactly as math.js does", () => {
    // math.js's own parse nests one level per operator: 1,000 terms stay within its stack.
    const terms = Array.from({ length: 1000 }, (_, i) => `${(i % 7) + 0.1 * (i % 3)}`);
    const sum =
      terms[0] +
      terms
        .slice(1)
        .map((t, i) => (i % 3 === 1 ? ` - ${t}` : ` + ${t}`))
        .join("");
    expect(net(`param a = ${sum}\n`).params[0].value).toBe(math.evaluate(sum));
    const product = terms
      .slice(0, 600)
      .map((t, i) => (i === 0 ? t : i % 2 ? ` * ${t}` : ` / ${t}`))
      .join("")
      .replace(/ \/ 0(?!\.)/g, " / 3");
    expect(net(`param b = ${product}\n`).params[0].value).toBe(math.evaluate(product));
    // 100,000 terms, past every chunk of the evaluator: the left fold in JavaScript.
    const many = Array.from({ length: 100_000 }, (_, i) => 0.1 * ((i * 37) % 11));
    let fold = many[0];
    for (let i = 1; i < many.length; i++) fold = i % 2 ? fold + many[i] : fold - many[i];
    const text = many.map((v, i) => (i === 0 ? `${v}` : `${i % 2 ? "+" : "-"}${v}`)).join("");
    expect(net(`param c = ${text}\n`).params[0].value).toBe(fold);
  });

  it("a run of powers folds from the right", () => {
    expect(net("param a = 2 ^ 3 ^ 2\n").params[0].value).toBe(512);
    // 2 ^ (1 ^ (… ^ (3 ^ 2))) = 2; from the left it would be 2 ^ 18.
    expect(net(`param b = 2 ^ ${Array(20).fill("1").join(" ^ ")} ^ 3 ^ 2\n`).params[0].value).toBe(2);
    expect(net(`param c = 2 ^ ${Array(2000).fill("1").join(" ^ ")} ^ 3\n`).params[0].value).toBe(2);
    expect(net("param d = 2 ^ -1 ^ 2 * 4\n").params[0].value).toBe(2);
  });

  it("a probe summing the currents of a 300-tap row parses and sums every device", () => {
    let text = "rail gnd = 0\nrail g = 0.3\n";
    for (let k = 0; k < 300; k++) text += `rail out${k} = 0.5\nnfet n${k} gate=g source=gnd drain=out${k}\n`;
    text += `probe tot = ${Array.from({ length: 300 }, (_, k) => `current(n${k})`).join(" + ")}\n`;
    const n = net(text);
    const ctx: ProbeContext = {
      voltage: () => NaN,
      deviceCurrent: (i) => (i + 1) * 1e-9,
      injectCurrent: () => NaN,
      railCurrent: () => NaN,
    };
    let want = 0;
    for (let i = 0; i < 300; i++) want += (i + 1) * 1e-9;
    expect(n.probes[0].evaluate(ctx, {}, n.settings)).toBe(want);
  });
});
