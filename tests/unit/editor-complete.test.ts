import { type CompletionResult, type CompletionSource, CompletionContext } from "@codemirror/autocomplete";
import { ensureSyntaxTree } from "@codemirror/language";
import { EditorState } from "@codemirror/state";
import { describe, expect, it } from "vitest";
import { collectNames, runnel, setElaboratedNames } from "../../src/editor/index";
import { parser } from "../../src/lang/parser";
import { parsed } from "../helpers/editor-state";
import { STATEMENT_WORDS } from "../../src/lang/syntax";

/** Completion at the `|` in `doc` through the language's own completion source. */
function completeAt(doc: string, explicit = false): CompletionResult | null {
  const pos = doc.indexOf("|");
  const text = doc.slice(0, pos) + doc.slice(pos + 1);
  const state = parsed(EditorState.create({ doc: text, selection: { anchor: pos }, extensions: [runnel()] }));
  const sources = state.languageDataAt<CompletionSource>("autocomplete", pos);
  expect(sources).toHaveLength(1);
  return sources[0](new CompletionContext(state, pos, explicit)) as CompletionResult | null;
}

function labels(doc: string, explicit = false): string[] {
  return completeAt(doc, explicit)?.options.map((o) => o.label) ?? [];
}

const NET = `network row
param vb = 450m
param sc = 2
rail vdd = 1.2
rail gnd = 0
rail vbias = vb
nfet m1 gate=vbias source=x1 drain=x2
inject bias from=vdd to=x2 value=1n
`;

describe("statement keywords", () => {
  it("are offered at the start of a line, with the partial word as the range", () => {
    const r = completeAt(`${NET}nf|`);
    expect(r?.from).toBe(NET.length);
    expect(r?.options.map((o) => o.label)).toEqual(expect.arrayContaining([...STATEMENT_WORDS]));
  });

  it("are offered on an indented line inside a for body and right after its brace", () => {
    expect(labels("for k in 1..3 {\n  pf|\n}")).toContain("pfet");
    expect(labels("for k in 1..3 { in|")).toContain("inject");
  });

  it("are not offered in the middle of a line", () => {
    expect(labels("probe p = nf|")).not.toContain("nfet");
  });
});

describe("pin names", () => {
  it("offers an nfet's pins, without the ones already written", () => {
    const got = labels("nfet m1 gate=a s|");
    expect(got).toEqual(expect.arrayContaining(["source", "drain", "bulk", "w", "l"]));
    expect(got).not.toContain("gate");
    expect(got).not.toContain("well");
  });

  it("offers a pfet's well and an inject's from/to/value", () => {
    expect(labels("pfet p1 w|")).toEqual(expect.arrayContaining(["well", "w"]));
    expect(labels("pfet p1 w|")).not.toContain("bulk");
    expect(labels("inject i1 from=a |", true)).toEqual(["to", "value"]);
  });

  it("inserts the equals sign with the pin name", () => {
    const r = completeAt("nfet m1 ga|");
    expect(r?.options.find((o) => o.label === "gate")?.apply).toBe("gate=");
  });

  it("offers nothing for the name being defined", () => {
    expect(labels("nfet m|")).toEqual([]);
  });
});

describe("node names as pin values", () => {
  it("offers rails and internal nodes already used after a node pin's =", () => {
    const got = labels(`${NET}nfet m2 gate=|`);
    expect(got).toEqual(expect.arrayContaining(["vdd", "gnd", "vbias", "x1", "x2"]));
    expect(got).not.toContain("vb");
    expect(got).not.toContain("exp");
  });

  it("offers expressions, not nodes, after w= and value=", () => {
    const got = labels(`${NET}nfet m2 w=s|`);
    expect(got).toEqual(expect.arrayContaining(["sc", "vb", "ut", "kappa", "exp", "sqrt"]));
    expect(got).not.toContain("x1");
    expect(labels(`${NET}inject i2 from=vdd to=x1 value=|`)).toContain("sc");
  });

  it("offers interpolated node patterns inside a for body", () => {
    const doc = "for k in 1..4 {\n  nfet a{k} gate=g source=x{k} drain=x{k+1}\n  nfet b{k} gate=g source=|\n}";
    expect(labels(doc)).toEqual(expect.arrayContaining(["x{k}", "x{k+1}", "g"]));
  });

  it("offers the loop variable inside an interpolation", () => {
    expect(labels("for k in 1..4 {\n  nfet a{k} gate=g source=x{|\n}")).toContain("k");
  });

  it("adds the names the last elaboration published", () => {
    const doc = `${NET}probe v = voltage(|)`;
    const pos = doc.indexOf("|");
    const text = doc.replace("|", "");
    let state = EditorState.create({ doc: text, selection: { anchor: pos }, extensions: [runnel()] });
    state = parsed(state.update({ effects: setElaboratedNames.of({ nodes: ["x1", "x2", "x9"], elements: [] }) }).state);
    const source = state.languageDataAt<CompletionSource>("autocomplete", pos)[0];
    const r = source(new CompletionContext(state, pos, false)) as CompletionResult;
    expect(r.options.map((o) => o.label)).toEqual(expect.arrayContaining(["x9", "x1", "vdd"]));
  });
});

describe("settings", () => {
  it("offers setting names after set", () => {
    expect(labels("set k|")).toEqual(["kappa", "temp", "i0", "vt0", "ispec", "model"]);
  });

  it("offers weak and ekv after set model =", () => {
    expect(labels("set model = |", true)).toEqual(["weak", "ekv"]);
    expect(labels("set model = e|")).toEqual(["weak", "ekv"]);
    expect(labels("set kappa = |", true)).toContain("ut");
  });
});

describe("expressions", () => {
  it("offers only earlier params inside a param statement", () => {
    const got = labels("param a = 1\nparam b = a*|\nparam c = 3", true);
    expect(got).toContain("a");
    expect(got).not.toContain("b");
    expect(got).not.toContain("c");
  });

  it("offers voltage() and current() only in probes", () => {
    expect(labels(`${NET}probe p = v|`)).toEqual(expect.arrayContaining(["voltage", "current", "vb"]));
    expect(labels(`${NET}param q = v|`)).not.toContain("voltage");
  });

  it("offers devices, injects and rails inside current(", () => {
    const got = labels(`${NET}nfet m2 gate=vb source=x2 drain=gnd\nprobe i = current(|)`);
    expect(got).toEqual(expect.arrayContaining(["m1", "m2", "bias", "vdd", "gnd"]));
    expect(got).not.toContain("x1");
  });

  it("offers node names inside voltage(", () => {
    const got = labels(`${NET}probe v = voltage(x|)`);
    expect(got).toEqual(expect.arrayContaining(["x1", "x2", "vdd"]));
    expect(got).not.toContain("m1");
  });

  it("offers nothing inside a number or a comment", () => {
    expect(labels("param a = 1n|")).toEqual([]);
    expect(labels("# nf|")).toEqual([]);
  });
});

describe("sweeps and loops", () => {
  it("offers params and temp after sweep", () => {
    const got = labels(`${NET}sweep |`, true);
    expect(got).toEqual(expect.arrayContaining(["vb", "sc", "temp"]));
    expect(got).not.toContain("x1");
  });

  it("offers the sweep's next keyword", () => {
    expect(labels("sweep vb f|")).toEqual(["from", "values"]);
    expect(labels("sweep vb from 1 t|")).toEqual(["to"]);
    expect(labels("sweep vb from 1 to 2 s|")).toEqual(["step", "points"]);
    expect(labels("mismatch runs 10 s|")).toEqual(["runs", "seed", "avt"]);
    // seek: a param after the word, then its options (written key=).
    expect(labels(`${NET}seek |`, true)).toEqual(["vb", "sc"]);
    expect(labels(`${NET}seek vb |`, true)).toEqual(["from", "to", "measure", "target"]);
    expect(completeAt(`${NET}seek vb from=1 t|`)?.options.find((o) => o.label === "to")?.apply).toBe("to=");
    expect(labels("for k i|")).toEqual(["in"]);
  });

  it("stays quiet after a space or a block's brace unless asked", () => {
    expect(completeAt("nfet m1 gate=a |")).toBeNull();
    expect(completeAt("nfet m1 gate=a |", true)).not.toBeNull();
    expect(completeAt("for k in 1..3 {|")).toBeNull();
  });
});

describe("names collected from the tree", () => {
  it("stay exact across incremental edits (reused subtrees are read once)", () => {
    const lines = ["rail vdd = 1", "rail gnd = 0", "param p0 = 1"];
    for (let k = 1; k <= 1500; k++) {
      lines.push(`nfet m${k} gate=vdd source=x${k} drain=x${k + 1}`);
      if (k % 100 === 0) lines.push(`for j in 1..2 {\n  inject i${k}_{j} from=vdd to=y${k}\n}`, `param p${k} = ${k}`);
    }
    let state = EditorState.create({ doc: lines.join("\n") + "\n", extensions: [runnel()] });
    // The editor's own (incrementally parsed) tree, against a fresh parse of the same text.
    const incremental = (st: EditorState) =>
      collectNames(ensureSyntaxTree(st, st.doc.length, 10_000)!, (a, b) => st.sliceDoc(a, b));
    const fresh = (st: EditorState) => collectNames(parser.parse(st.doc.toString()), (a, b) => st.sliceDoc(a, b));
    expect(incremental(state)).toEqual(fresh(state));
    const edits = [
      (st: EditorState) => ({ from: st.doc.line(2).from + 5, to: st.doc.line(2).from + 8, insert: "ground" }),
      (st: EditorState) => ({
        from: st.doc.line(700).from,
        insert: "rail vmid = 0.5\nnfet extra gate=vmid source=q1 drain=q2\n",
      }),
      (st: EditorState) => ({ from: st.doc.line(1200).from, to: st.doc.line(1203).to }),
    ];
    for (const edit of edits) {
      state = state.update({ changes: edit(state) }).state;
      expect(incremental(state)).toEqual(fresh(state));
    }
    const names = incremental(state);
    expect(names.rails).toEqual(expect.arrayContaining(["vdd", "ground", "vmid"]));
    expect(names.nodes).toEqual(expect.arrayContaining(["q1", "q2", "y100", "x1501"]));
    expect(names.rails).not.toContain("gnd");
    expect(names.devices.find((d) => d.name === "extra")).toEqual({ name: "extra", kind: "nfet" });
    expect(names.params.map((p) => p.name)).toEqual(expect.arrayContaining(["p0", "p100", "p1500"]));
  });
});

describe("expectations", () => {
  const ROW = `${NET}for k in 0..3 {
  nfet out{k} gate=vbias source=x{k} drain=vdd
}
probe ratio = current(m1)/current(out0)
`;

  it("offers expect as a statement word", () => {
    expect(labels(`${ROW}exp|`)).toContain("expect");
  });

  it("offers the device-set checks, probes, params and the read functions after expect NAME =", () => {
    const got = labels(`${ROW}expect ok = |`, true);
    expect(got).toEqual(expect.arrayContaining(["saturated", "unsaturated", "weak", "reverse", "ratio", "vb"]));
    expect(got).toEqual(expect.arrayContaining(["voltage", "current", "power", "not"]));
    expect(completeAt(`${ROW}expect ok = sat|`)?.options.find((o) => o.label === "saturated")?.apply).toBe(
      "saturated devices=",
    );
  });

  it("offers the check's options, below only for weak", () => {
    expect(labels(`${ROW}expect s = saturated |`, true)).toEqual(["devices"]);
    expect(labels(`${ROW}expect s = weak devices=* |`, true)).toEqual(["below"]);
  });

  it("offers name patterns of loop-made devices and device names after devices=", () => {
    const got = labels(`${ROW}expect s = saturated devices=|`, true);
    expect(got).toEqual(expect.arrayContaining(["*", "out*", "m1"]));
  });

  it("offers and/or after a comparison, values after and, rails in power()", () => {
    expect(labels(`${ROW}expect s = ratio > 1 |`, true)).toEqual(["and", "or"]);
    expect(labels(`${ROW}expect s = ratio > 1 and |`, true)).toEqual(expect.arrayContaining(["ratio", "current"]));
    expect(labels(`${ROW}expect s = ratio > 1 and |`, true)).not.toContain("saturated");
    expect(labels(`${ROW}expect s = power(|`, true)).toEqual(["vdd", "gnd", "vbias"]);
    expect(labels(`${ROW}expect s = ratio <= |`, true)).toContain("ratio");
  });
});
