import { closeDb, databasePath, openDatabase } from "../db";
import { runScript } from "./lib/fail";

await runScript(() => {
  const file = databasePath();
  openDatabase(file).$client.close();
  closeDb();
  console.log(`migrations applied to ${file}`);
});
