/** For tests of the `runnel` command run in-process: its output and exit code, and network files to give it. */
import { mkdtempSync, writeFileSync } from "node:fs";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { main } from "../../scripts/runnel";

/** `runnel ARGS…` in this process: exit code, standard output and standard error. */
export function runCli(args: string[]): { code: number; out: string; err: string } {
  let out = "";
  let err = "";
  const code = main(args, { out: (t) => (out += t), err: (t) => (err += t) });
  return { code, out, err };
}

/** `text` written to a new file `name` in a fresh temporary folder; its path. */
export function networkFile(text: string, name = "net.runnel"): string {
  const f = join(mkdtempSync(join(tmpdir(), "runnel-cli-")), name);
  writeFileSync(f, text);
  return f;
}
