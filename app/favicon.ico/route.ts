import fs from "node:fs";
import path from "node:path";

/** Browsers ask for /favicon.ico whatever the page declares: answer with the same mark as app/icon.svg. */
export function GET() {
  const svg = fs.readFileSync(path.join(process.cwd(), "app/icon.svg"));
  return new Response(svg, { headers: { "content-type": "image/svg+xml", "cache-control": "public, max-age=86400" } });
}
