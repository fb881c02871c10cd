/**
 * Writes the two font files the app ships (app/fonts/*.woff2) from the @fontsource packages, cut down to what the
 * interface draws: `npm run fonts` (run it after changing FONT_TEXT or a font package; the outputs are committed,
 * so a build never runs it and nothing is fetched).
 *
 * Every page preloads both faces, so their size is paid by every first visit (issue 16: the compare page's first
 * visit was 347.5 kB, 70 kB of it fonts). The cut, by HarfBuzz's subsetter (subset-font):
 * - the characters of FONT_TEXT only: Basic Latin, Latin-1, Greek, and the punctuation, math signs, arrows and
 *   marks the interface writes (tests/unit/fonts.test.ts checks that every non-ASCII character in app/ and the
 *   language's messages is listed). A character outside it is still drawn, by the browser's fallback face;
 * - Inter's weight axis narrowed to 400–700, the weights the interface uses (normal, medium, semibold, bold);
 * - the OpenType features the interface needs (kerning, marks, tabular figures); JetBrains Mono's code ligatures
 *   go (a network's `->` or `>=` reads as typed, character by character).
 * Inter 48.3 → 21.9 kB, JetBrains Mono 21.2 → 7.9 kB. Both fonts are under the SIL Open Font License 1.1, which
 * allows modified versions under the same licence (neither declares a Reserved Font Name); the licences are
 * copied beside the files.
 */
import fs from "node:fs";
import path from "node:path";
import { fileURLToPath } from "node:url";

const range = (from: number, to: number) =>
  Array.from({ length: to - from + 1 }, (_, k) => String.fromCodePoint(from + k)).join("");

/** What the subset fonts can draw. */
export const FONT_TEXT =
  range(0x20, 0x7e) + // Basic Latin
  range(0xa0, 0xff) + // Latin-1: × ± µ ² · § and accented letters
  range(0x391, 0x3a9) + // Greek capitals (Δ Σ Φ Λ Ω)
  range(0x3b1, 0x3c9) + // Greek small letters (σ μ κ λ π θ α δ ε)
  "ĝ" + // a hat over g (a fitted factor)
  "\u0302" + // combining circumflex
  "‐‑‒–—‘’‚“”„•…‰′″‹›‖" + // punctuation
  "⁰¹²³⁴⁵⁶⁷⁸⁹⁻₀₁₂₃₄₅₆₇₈₉ₑₛᵀ" + // super- and subscripts
  "−∂≤≥≈≠√∞∓∑Σ∈∪⊆⌊⌋⟺⋃∆∏∫" + // math
  "→←↑↓↺⇅" + // arrows
  "▲▼▴▾▸●○◆✓✗✕☑☐⚠⌘€"; // marks

/** The layout features kept: kerning, mark placement, localised forms, tabular and case-sensitive figures. */
const FEATURES = ["kern", "ccmp", "locl", "mark", "mkmk", "tnum", "case"];

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..");
export const FONT_FILES = {
  inter: path.join(root, "app", "fonts", "inter-ui.woff2"),
  mono: path.join(root, "app", "fonts", "jetbrains-mono-text.woff2"),
};

/** The subset fonts as `npm run fonts` writes them, with where each goes and its licence. */
export async function subsetFonts(): Promise<
  { from: string; to: string; license: string; licenseTo: string; input: Buffer; output: Buffer }[]
> {
  const { default: subsetFont } = await import("subset-font");
  const mod = (p: string) => path.join(root, "node_modules", p);
  const jobs = [
    {
      from: mod("@fontsource-variable/inter/files/inter-latin-wght-normal.woff2"),
      to: FONT_FILES.inter,
      license: mod("@fontsource-variable/inter/LICENSE"),
      licenseTo: path.join(root, "app", "fonts", "inter-OFL.txt"),
      options: { variationAxes: { wght: { min: 400, max: 700 } } },
    },
    {
      from: mod("@fontsource/jetbrains-mono/files/jetbrains-mono-latin-400-normal.woff2"),
      to: FONT_FILES.mono,
      license: mod("@fontsource/jetbrains-mono/LICENSE"),
      licenseTo: path.join(root, "app", "fonts", "jetbrains-mono-OFL.txt"),
      options: {},
    },
  ];
  const out = [];
  for (const { options, ...j } of jobs) {
    const input = fs.readFileSync(j.from);
    const output = await subsetFont(input, FONT_TEXT, { targetFormat: "woff2", keepFeatures: FEATURES, ...options });
    out.push({ ...j, input, output });
  }
  return out;
}

async function main(): Promise<void> {
  for (const f of await subsetFonts()) {
    fs.mkdirSync(path.dirname(f.to), { recursive: true });
    fs.writeFileSync(f.to, f.output);
    fs.copyFileSync(f.license, f.licenseTo);
    console.log(
      `${path.relative(root, f.to)}: ${(f.input.length / 1000).toFixed(1)} → ${(f.output.length / 1000).toFixed(1)} kB`,
    );
  }
}

if (process.argv[1] && path.resolve(process.argv[1]) === fileURLToPath(import.meta.url)) await main();
