import { describe, expect, it } from "vitest";
import { elaborate } from "../../src/lang/index";

/**
 * Names made by loops are found through per-shape indexes (the literal parts
 * of a name, `n{i}_{j}` → "n", "_", ""), not only through the name Map. These
 * checks pin the language's one-namespace rules where two shapes, or a shape
 * and a fixed name, give the same name: the result must be the same as if
 * every name were looked up as a string.
 */

function messages(text: string): string[] {
  return elaborate(text).diagnostics.map((d) => `${d.line}: ${d.message}`);
}

const RAILS = `rail vdd = 1
rail gnd = 0
`;

describe("names from different shapes", () => {
  it("a device name from two shapes is defined twice", () => {
    const text = `${RAILS}nfet m12 gate=vdd source=gnd drain=a
for k in 1..1 {
  for j in 2..2 {
    nfet m{k}{j} gate=vdd source=a drain=gnd
  }
}
for k in 1..1 {
  nfet m{k}_{k+1} gate=vdd source=a drain=gnd
}
nfet m1_2 gate=vdd source=a drain=gnd
`;
    expect(messages(text)).toEqual([
      "6: device 'm12' is defined twice (first on line 3)",
      "12: device 'm1_2' is defined twice (first on line 10)",
    ]);
  });

  it("the same shape in two statements shares one node", () => {
    const r = elaborate(`${RAILS}for i in 0..2 {
  for j in 0..2 {
    nfet h{i}_{j} gate=vdd source=n{i}_{j} drain=gnd
  }
}
for i in 0..2 {
  for j in 0..2 {
    nfet v{i}_{j} gate=vdd source=n{j}_{i} drain=gnd
  }
}
for k in 0..2 {
  nfet o{k} gate=vdd source=n{k}_{k} drain=gnd
}
`);
    expect(r.network).not.toBeNull();
    const n = r.network!;
    expect(n.nodes.names.filter((x) => x.startsWith("n"))).toHaveLength(9);
    const o1 = n.devices.index.get("o1")!;
    expect(n.nodes.names[n.devices.source[o1]]).toBe("n1_1");
    expect(n.nodes.index.get("n0_2")).toBe(n.devices.source[n.devices.index.get("h0_2")!]);
    expect(n.devices.source[n.devices.index.get("v2_0")!]).toBe(n.nodes.index.get("n0_2"));
  });

  it("a fixed name after a loop finds the loop's node; a leading zero names another node", () => {
    const r = elaborate(`${RAILS}for i in 0..3 {
  for j in 0..3 {
    nfet h{i}_{j} gate=vdd source=n{i}_{j} drain=gnd
  }
}
inject a from=n2_3 to=gnd value=1n
inject b from=n02_3 to=gnd value=1n
`);
    const n = r.network;
    expect(r.diagnostics.map((d) => d.message)).toContain("node 'n02_3' has no DC path to any rail");
    expect(n).toBeNull();
    const ok = elaborate(`${RAILS}for i in 0..3 {
  for j in 0..3 {
    nfet h{i}_{j} gate=vdd source=n{i}_{j} drain=gnd
  }
}
inject a from=n2_3 to=gnd value=1n
probe v = voltage(n3_0)
`);
    expect(ok.ok).toBe(true);
    expect(ok.network!.nodes.names).toHaveLength(2 + 16);
  });

  it("a node named like a device of another shape is reported", () => {
    expect(
      messages(`${RAILS}for k in 0..1 {
  nfet q{k} gate=vdd source=gnd drain=x{k}a
}
nfet x1a_dev gate=vdd source=x1a drain=q1
`),
    ).toContain("6: node name 'q1' is already a device");
  });

  it("a device named like a rail, param or inject made before its loop is a clash", () => {
    expect(
      messages(`rail m3 = 1
param m1 = 2
rail gnd = 0
inject m0 from=x2 to=gnd value=1n
for k in 0..4 {
  nfet m{k} gate=m3 source=gnd drain=x{k}
}
`).filter((m) => m.includes("already")),
    ).toEqual([
      "6: device name 'm0' is already an inject (first on line 4)",
      "6: device name 'm1' is already a param (first on line 2)",
      "6: device name 'm3' is already a rail (first on line 1)",
    ]);
  });

  it("a rail declared after a loop node of the same name is the same node", () => {
    const r = elaborate(`${RAILS}for k in 0..2 {
  nfet d{k} gate=vdd source=y{k} drain=gnd
}
rail y1 = 0.5
`);
    const n = r.network!;
    const y1 = n.nodes.index.get("y1")!;
    expect(n.nodes.railValue[y1]).toBe(0.5);
    expect(n.devices.source[n.devices.index.get("d1")!]).toBe(y1);
  });

  it("past 256 loop statements with their own name shapes, names are still found", () => {
    let text = RAILS;
    for (let s = 0; s < 300; s++)
      text += `for k in 0..2 {\n  nfet d${s}x{k} gate=vdd source=gnd drain=n${(s * 7) % 300}y{k}\n}\n`;
    text +=
      "nfet d5x1 gate=vdd source=n3y1 drain=gnd\nnfet q1 gate=vdd source=d7x2 drain=gnd\nfor k in 0..2 {\n  nfet d299x{k} gate=vdd source=gnd drain=n1y{k}\n}\n";
    const r = elaborate(text);
    expect(r.diagnostics.filter((d) => d.severity === "error").map((d) => `${d.line}: ${d.message}`)).toEqual([
      "903: device 'd5x1' is defined twice (first on line 19)",
      "904: node name 'd7x2' is already a device",
      "906: device 'd299x0' is defined twice (first on line 901) (and 2 more like it from this statement)",
    ]);
  });
});
