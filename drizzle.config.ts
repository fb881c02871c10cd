import { defineConfig } from "drizzle-kit";

export default defineConfig({
  dialect: "sqlite",
  schema: "./db/schema.ts",
  out: "./migrations",
  dbCredentials: { url: process.env.RUNNEL_DB ?? "./data/runnel.db" },
});
