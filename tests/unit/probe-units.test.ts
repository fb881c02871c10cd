/**
 * Units the unit checker gives probes and params (src/lang/units.ts
 * unitSymbol), which every table, card and plot shows (app/lib/format.ts).
 * The dimensions follow from the language's rules (docs/language.md: voltage()
 * is in volts, current() in amperes, a product V·A is a power in watts, a
 * quotient of like quantities is a ratio); the expected symbols are SI's
 * (BIPM, The International System of Units, 9th ed., 2019, tables 2 and 4).
 */
import { describe, expect, it } from "vitest";
import { elaborate } from "../../src/lang/index";

const NET = `network units
param vh = 0.72
param dv = 20mV
param bias = 1n
rail vdd = 1.8
rail gnd = 0
rail gh = vh
inject light from=x0 to=gnd value=bias
nfet a gate=gh source=x0 drain=x1
nfet b gate=gh source=x1 drain=vdd
probe vout = voltage(x1)
probe iout = current(b)
probe split = current(b) / current(a)
probe power = voltage(x1) * current(b)
probe g = current(b) / voltage(x1)
probe plain = 2 * 3
`;

function units() {
  const r = elaborate(NET);
  if (!r.network) throw new Error(r.diagnostics.map((d) => d.message).join("; "));
  return {
    probes: Object.fromEntries(r.network.probes.map((p) => [p.name, p.unit])),
    params: Object.fromEntries(r.network.params.map((p) => [p.name, p.unit])),
  };
}

describe("units of probes and params", () => {
  it("gives each probe the unit of its expression", () => {
    expect(units().probes).toEqual({ vout: "V", iout: "A", split: "", power: "W", g: "A/V", plain: null });
  });

  it("gives a param the unit written with it, or the unit of the place a bare param is used", () => {
    const p = units().params;
    expect(p.dv).toBe("V"); // written 20mV
    expect(p.vh).toBe("V"); // bare, the value of a rail
    expect(p.bias).toBe("A"); // bare, the value of an inject
  });
});
