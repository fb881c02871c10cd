/**
 * After `next build`: writes FILE.br beside each of the build's static scripts and stylesheets (brotli, quality 11),
 * which scripts/lib/static-brotli.ts sends to browsers that accept brotli. Files under 1 kB are left alone.
 * `node scripts/precompress.mjs [DIR]` (default .next/static).
 */
import fs from "node:fs";
import path from "node:path";
import zlib from "node:zlib";

const EXTENSIONS = new Set([".js", ".css", ".json", ".svg", ".txt", ".map"]);
const dir = path.resolve(process.argv[2] ?? ".next/static");

function* files(d) {
  for (const e of fs.readdirSync(d, { withFileTypes: true })) {
    const p = path.join(d, e.name);
    if (e.isDirectory()) yield* files(p);
    else if (EXTENSIONS.has(path.extname(e.name))) yield p;
  }
}

let count = 0;
let before = 0;
let after = 0;
for (const f of files(dir)) {
  const data = fs.readFileSync(f);
  if (data.length < 1024) continue;
  const br = zlib.brotliCompressSync(data, {
    params: {
      [zlib.constants.BROTLI_PARAM_QUALITY]: 11,
      [zlib.constants.BROTLI_PARAM_SIZE_HINT]: data.length,
      [zlib.constants.BROTLI_PARAM_MODE]: zlib.constants.BROTLI_MODE_TEXT,
    },
  });
  fs.writeFileSync(f + ".br", br);
  count++;
  before += data.length;
  after += br.length;
}
console.log(`precompress: ${count} files, ${(before / 1e3).toFixed(0)} kB → ${(after / 1e3).toFixed(0)} kB (brotli)`);
