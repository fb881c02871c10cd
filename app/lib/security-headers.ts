/**
 * The headers every answer carries, pages and API alike (next.config.ts sets them on Next's answers,
 * scripts/lib/static-brotli.ts on the static files it sends itself). The Content-Security-Policy comes from
 * scripts/lib/next-server.ts, which makes a nonce per page.
 */
export const SECURITY_HEADERS: readonly { key: string; value: string }[] = [
  { key: "X-Content-Type-Options", value: "nosniff" },
  { key: "X-Frame-Options", value: "DENY" },
  { key: "Referrer-Policy", value: "same-origin" },
  { key: "Cross-Origin-Opener-Policy", value: "same-origin" },
];
