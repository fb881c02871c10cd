import type { NextConfig } from "next";

const config: NextConfig = {
  // Worker-thread pools must load from node_modules at run time, not from the bundle.
  serverExternalPackages: [
    "piscina",
    "better-sqlite3",
    "@node-rs/argon2",
    "smtp-server",
    "nodemailer",
    "bullmq",
    "ioredis",
  ],
  poweredByHeader: false,
  typescript: { ignoreBuildErrors: false },
  turbopack: { root: import.meta.dirname },
  // On every answer, pages and API alike (the Content-Security-Policy itself comes from scripts/lib/next-server.ts,
  // which makes a nonce per page).
  async headers() {
    return [
      {
        source: "/:path*",
        headers: [
          { key: "X-Content-Type-Options", value: "nosniff" },
          { key: "X-Frame-Options", value: "DENY" },
          { key: "Referrer-Policy", value: "same-origin" },
          { key: "Cross-Origin-Opener-Policy", value: "same-origin" },
        ],
      },
    ];
  },
};

export default config;
