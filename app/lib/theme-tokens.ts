/**
 * The theme's colour tokens (`--color-NAME: #rrggbb` in app/globals.css) for drawings made on the server, read
 * once from the stylesheet so the palette stays written in one place (app/ui/theme.ts reads the same tokens from
 * the page in the browser). Server only.
 */
import fs from "node:fs";
import path from "node:path";
import type { Palette } from "@/app/ui/run/first-look";

let tokens: Map<string, string> | null = null;

/** The value of `--color-NAME`, or a `var()` reference to it if the stylesheet could not be read. */
export function themeToken(name: string): string {
  if (!tokens) {
    tokens = new Map();
    try {
      const css = fs.readFileSync(path.join(process.cwd(), "app", "globals.css"), "utf8");
      for (const m of css.matchAll(/--color-([a-z0-9-]+):\s*(#[0-9a-fA-F]{3,8})\s*;/g)) tokens.set(m[1], m[2]);
    } catch {
      // a build run from elsewhere: the browser resolves the references
    }
  }
  return tokens.get(name) ?? `var(--color-${name})`;
}

/** The palette of a plot drawn on the server: text, grid, a map's unknown cells, the six curve colours. */
export function serverPalette(): Palette {
  return {
    ink: themeToken("stone-ink"),
    grid: themeToken("stone-300"),
    unknown: themeToken("stone-200"),
    curves: [1, 2, 3, 4, 5, 6].map((i) => themeToken(`curve-${i}`)),
  };
}
