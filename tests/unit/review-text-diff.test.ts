import { describe, expect, it } from "vitest";
import { diffText, unifiedPatch } from "@/app/lib/review/text-diff";

const lines = (n: number, f: (i: number) => string) => Array.from({ length: n }, (_, i) => f(i + 1)).join("\n") + "\n";

describe("text diff", () => {
  it("a one-line change: unified rows and a paired side-by-side row", () => {
    const a = "network row\nnfet m1 gate=vg source=x drain=vdd w=1u\nprobe i = current(m1)\n";
    const b = "network row\nnfet m1 gate=vg source=x drain=vdd w=2u\nprobe i = current(m1)\n";
    const d = diffText(a, b);
    expect(d.added).toBe(1);
    expect(d.removed).toBe(1);
    expect(d.complete).toBe(true);
    expect(d.unified.map((r) => [r.kind, r.oldLine, r.newLine])).toEqual([
      ["same", 1, 1],
      ["removed", 2, null],
      ["added", null, 2],
      ["same", 3, 3],
    ]);
    expect(d.sideBySide).toHaveLength(3);
    expect(d.sideBySide[1]).toMatchObject({
      kind: "changed",
      left: { line: 2, text: "nfet m1 gate=vg source=x drain=vdd w=1u", kind: "removed" },
      right: { line: 2, text: "nfet m1 gate=vg source=x drain=vdd w=2u", kind: "added" },
    });
    // Within the line, only the changed token is marked; the pieces join back to the line.
    const changed = (m: { text: string; changed: boolean }[]) => m.filter((x) => x.changed).map((x) => x.text);
    expect(changed(d.sideBySide[1].left!.marks!)).toEqual(["1u"]);
    expect(changed(d.sideBySide[1].right!.marks!)).toEqual(["2u"]);
    expect(d.sideBySide[1].right!.marks!.map((m) => m.text).join("")).toBe(d.sideBySide[1].right!.text);
    expect(changed(d.unified[2].marks!)).toEqual(["2u"]);
  });

  it("folds long unchanged runs into gaps that count the hidden lines", () => {
    const a = lines(40, (i) => `param p${i} = ${i}`);
    const b = a.replace("param p20 = 20", "param p20 = 21");
    const d = diffText(a, b, { context: 2 });
    const gaps = d.unified.filter((r) => r.kind === "gap");
    expect(gaps.map((g) => g.hidden)).toEqual([17, 18]); // lines 1–17 and 23–40
    const shown = d.unified.filter((r) => r.kind !== "gap");
    expect(shown.map((r) => r.oldLine ?? r.newLine)).toEqual([18, 19, 20, 20, 21, 22]);
    expect(d.sideBySide.filter((r) => r.kind === "gap")).toHaveLength(2);
  });

  it("added and removed blocks of different lengths pair up, then stand alone", () => {
    const d = diffText("a\nb\nc\n", "a\nB1\nB2\nB3\nc\n");
    expect(d.sideBySide.map((r) => r.kind)).toEqual(["same", "changed", "added", "added", "same"]);
    expect(diffText("", "x\n").unified).toEqual([{ kind: "added", oldLine: null, newLine: 1, text: "x" }]);
    expect(diffText("same\n", "same\n").added).toBe(0);
  });

  it("marks nothing within lines that have no partner, or are too long to mark", () => {
    const d = diffText("a\n", "a\nnew line\n");
    expect(d.unified[1].marks).toBeUndefined();
    const long = "x".repeat(5000);
    const e = diffText(`${long}1\n`, `${long}2\n`);
    expect(e.sideBySide[0].left!.marks).toBeUndefined();
  });

  it("gives up line-by-line beyond maxEdit and shows a whole replacement", () => {
    const a = lines(50, (i) => `old ${i}`);
    const b = lines(50, (i) => `new ${i}`);
    const d = diffText(a, b, { maxEdit: 10 });
    expect(d.complete).toBe(false);
    expect(d.removed).toBe(50);
    expect(d.added).toBe(50);
  });

  it("writes a unified patch with the commit labels", () => {
    const p = unifiedPatch("c1", "c2", "a\nb\n", "a\nc\n");
    expect(p).toContain("--- c1");
    expect(p).toContain("+++ c2");
    expect(p).toContain("-b\n+c");
  });
});
