/**
 * The shipped fonts are cut down to FONT_TEXT (scripts/subset-fonts.ts). These checks keep the cut honest: every
 * character the interface or the language's messages write is in it, and the committed files are what
 * `npm run fonts` makes from today's FONT_TEXT and font packages.
 */
import fs from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { FONT_FILES, FONT_TEXT, subsetFonts } from "@/scripts/subset-fonts";

const ROOT = path.resolve(__dirname, "..", "..");

function sourceFiles(dir: string): string[] {
  const out: string[] = [];
  for (const e of fs.readdirSync(dir, { withFileTypes: true })) {
    const p = path.join(dir, e.name);
    if (e.isDirectory()) out.push(...sourceFiles(p));
    else if (/\.(tsx?|css|md)$/.test(e.name)) out.push(p);
  }
  return out;
}

describe("the shipped fonts", () => {
  it("draw every character the interface and the messages write", () => {
    const have = new Set(FONT_TEXT);
    const missing = new Map<string, string>();
    for (const dir of ["app", "src/lang", "src/solver", "examples"])
      for (const f of sourceFiles(path.join(ROOT, dir)))
        for (const ch of fs.readFileSync(f, "utf8"))
          if (ch.codePointAt(0)! > 0x7e && ch !== "\n" && !have.has(ch) && !/\p{Extended_Pictographic}/u.test(ch))
            if (!missing.has(ch)) missing.set(ch, path.relative(ROOT, f));
    expect([...missing].map(([ch, f]) => `${ch} (U+${ch.codePointAt(0)!.toString(16)}) in ${f}`)).toEqual([]);
  });

  it("are what `npm run fonts` makes, and smaller than the packages' files", async () => {
    const made = await subsetFonts();
    expect(made.map((m) => m.to).sort()).toEqual(Object.values(FONT_FILES).sort());
    for (const m of made) {
      expect(fs.readFileSync(m.to).equals(m.output), `${path.relative(ROOT, m.to)} is stale: run npm run fonts`).toBe(
        true,
      );
      expect(m.output.length).toBeLessThan(m.input.length * 0.6);
      expect(fs.readFileSync(m.licenseTo, "utf8")).toContain("SIL Open Font License");
    }
  }, 60_000);
});
