import localFont from "next/font/local";

/** Interface text: Inter (variable), shipped from @fontsource; nothing is fetched at build or run time. */
export const inter = localFont({
  src: "../node_modules/@fontsource-variable/inter/files/inter-latin-wght-normal.woff2",
  weight: "100 900",
  variable: "--font-inter",
  display: "swap",
});

/**
 * Network text, numbers in tables: JetBrains Mono, shipped from @fontsource. One weight (22 kB less on every first
 * visit, where each face is preloaded): the few bold mono words (the header's name) are drawn bolder by the browser.
 */
export const jetbrains = localFont({
  src: [
    { path: "../node_modules/@fontsource/jetbrains-mono/files/jetbrains-mono-latin-400-normal.woff2", weight: "400" },
  ],
  variable: "--font-jetbrains",
  display: "swap",
});
