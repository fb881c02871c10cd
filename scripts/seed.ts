import { databasePath, openDatabase } from "../db";
import { seedDemo } from "./seed/index";
import { runScript } from "./lib/fail";

await runScript(() => {
  const file = databasePath();
  const db = openDatabase(file);
  const counts = seedDemo(db);
  db.$client.close();
  console.log(`demo data in ${file}: ${counts.users} users, ${counts.workspaces} workspaces`);
});
