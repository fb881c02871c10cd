import fs from "node:fs";
import os from "node:os";
import path from "node:path";
import { openDatabase, type DB } from "@/db";

/** A fresh SQLite file in its own temporary folder, migrated with the real migrations. */
export function freshDatabase(): { db: DB; file: string; dispose(): void } {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "runnel-test-"));
  const file = path.join(dir, "runnel.db");
  const db = openDatabase(file);
  return {
    db,
    file,
    dispose() {
      db.$client.close();
      fs.rmSync(dir, { recursive: true, force: true });
    },
  };
}
