import type { NextConfig } from "next";
import { SECURITY_HEADERS } from "./app/lib/security-headers";

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
  // On every answer, pages and API alike (app/lib/security-headers.ts).
  async headers() {
    return [
      {
        source: "/:path*",
        headers: [...SECURITY_HEADERS],
      },
    ];
  },
};

export default config;
