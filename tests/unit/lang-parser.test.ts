import { readdirSync, readFileSync } from "node:fs";
import { join } from "node:path";
import { buildParserFile } from "@lezer/generator";
import { fileTests } from "@lezer/generator/test";
import { describe, expect, it } from "vitest";
import { parser } from "../../src/lang/parser";

const root = join(__dirname, "../..");
const corpus = join(__dirname, "corpus/parse");

// Parser corpus: `# Title` / input / `==>` / expected tree (Lezer's fileTests format).
for (const file of readdirSync(corpus).filter((f) => f.endsWith(".txt"))) {
  describe(`parse corpus ${file}`, () => {
    for (const t of fileTests(readFileSync(join(corpus, file), "utf8"), file)) it(t.name, () => t.run(parser));
  });
}

describe("generated parser", () => {
  it("matches grammar/runnel.grammar (run `npm run grammar` when this fails)", () => {
    const grammar = readFileSync(join(root, "grammar/runnel.grammar"), "utf8");
    const built = buildParserFile(grammar, { fileName: "grammar/runnel.grammar", moduleStyle: "es", typeScript: true });
    expect(readFileSync(join(root, "src/lang/parser.ts"), "utf8")).toBe(built.parser);
    expect(readFileSync(join(root, "src/lang/parser.terms.ts"), "utf8")).toBe(built.terms);
  });

  it("package.json generates the typed parser", () => {
    const pkg = JSON.parse(readFileSync(join(root, "package.json"), "utf8")) as { scripts: Record<string, string> };
    expect(pkg.scripts.grammar).toBe("lezer-generator --typeScript grammar/runnel.grammar -o src/lang/parser.ts");
  });
});
