import type { NextConfig } from "next";

const config: NextConfig = {
  // Worker-thread pools must load from node_modules at run time, not from the bundle.
  serverExternalPackages: ["piscina", "better-sqlite3", "@node-rs/argon2", "smtp-server", "nodemailer"],
  poweredByHeader: false,
  typescript: { ignoreBuildErrors: false },
  turbopack: { root: import.meta.dirname },
};

export default config;
