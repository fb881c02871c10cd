import localFont from "next/font/local";

/*
 * The two faces every page preloads, shipped with the app (nothing is fetched at build or run time). Both are cut
 * from the @fontsource packages by `npm run fonts` (scripts/subset-fonts.ts: the characters the interface writes,
 * Inter's weights 400–700, no code ligatures), which took them from 69 kB to 30 kB of every first visit. Their
 * licences (SIL OFL 1.1) are beside them.
 */

/** Interface text: Inter (variable, weights 400–700). */
export const inter = localFont({
  src: "./inter-ui.woff2",
  weight: "400 700",
  variable: "--font-inter",
  display: "swap",
});

/**
 * Network text, numbers in tables: JetBrains Mono, one weight: the few bold mono words (the header's name) are
 * drawn bolder by the browser.
 */
export const jetbrains = localFont({
  src: [{ path: "./jetbrains-mono-text.woff2", weight: "400" }],
  variable: "--font-jetbrains",
  display: "swap",
});
