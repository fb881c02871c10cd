/**
 * Bench measurements: a CSV of measured data, parsed strictly, and its error
 * against a simulated curve.
 *
 * The CSV format (Runnel's own; documented in the upload form)
 * - UTF-8 text (a UTF-8 byte-order mark is allowed), at most 10 MB; comma,
 *   semicolon or tab separated (whichever the header line uses); lines starting with `#` are notes and skipped,
 *   as are blank lines.
 * - The first other line is the header: the first column is x, each further
 *   column a measured series. Each header cell is `name [unit]`, e.g.
 *   `vin [V]`, `i_out [nA]`, `ratio [1]`. The unit is an optional SI prefix
 *   (f p n u µ m k M G) and one of V, A, K, or `1` for a plain number.
 * - Every further line has exactly as many cells as the header, each a plain
 *   decimal number (`-1.5`, `2e-9`, `.5`; no prefixes, no units, no blanks).
 * - x is strictly increasing or strictly decreasing (it is the sweep axis).
 * Values are stored in SI base units (V, A, K), with the written unit kept for display.
 *
 * Every problem names its row (the line number in the file, 1-based, as an
 * editor shows it) and column (1-based, with the header name when known).
 * Parsing either succeeds completely or returns errors; nothing partial.
 */
import Papa from "papaparse";

export const MAX_MEASUREMENT_BYTES = 10 * 1024 * 1024;
/** At most this many errors are reported; one is enough to refuse the file. */
const MAX_ERRORS = 20;

export type Dimension = "V" | "A" | "K" | "1";

export interface Axis {
  name: string;
  /** The unit as written in the header, e.g. "nA". */
  unit: string;
  dimension: Dimension;
  /** Multiply a written value by this to get SI base units. */
  scale: number;
}

export interface MeasurementSeries extends Axis {
  /** SI values, one per row. */
  values: Float64Array;
}

export interface Measurement {
  x: Axis & { values: Float64Array };
  series: MeasurementSeries[];
  rows: number;
}

export interface CsvError {
  /** 1-based line in the file; 0 for a problem with the file as a whole (size). */
  row: number;
  /** 1-based column; 0 when the problem is not in one column. */
  column: number;
  /** The header name of the column, when known. */
  columnName?: string;
  message: string;
}

export type ParseResult = { ok: true; measurement: Measurement } | { ok: false; errors: CsvError[] };

const PREFIX: Record<string, number> = {
  f: 1e-15,
  p: 1e-12,
  n: 1e-9,
  u: 1e-6,
  µ: 1e-6,
  μ: 1e-6,
  m: 1e-3,
  k: 1e3,
  M: 1e6,
  G: 1e9,
};
const HEADER = /^(.*?)\s*[[(]\s*([^\])]*?)\s*[\])]$/;
const NAME = /^[A-Za-z_][A-Za-z0-9_.-]{0,63}$/;
/** A plain decimal number: sign, digits with an optional point, optional exponent. */
const NUMBER = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

/** `nA` → {dimension A, scale 1e-9}; null when not a unit of this format. */
export function parseUnit(unit: string): { dimension: Dimension; scale: number } | null {
  if (unit === "1") return { dimension: "1", scale: 1 };
  const m = /^(f|p|n|u|µ|μ|m|k|M|G)?(V|A|K)$/.exec(unit);
  if (!m) return null;
  return { dimension: m[2] as Dimension, scale: m[1] ? PREFIX[m[1]] : 1 };
}

/**
 * Byte offset of the first invalid UTF-8 sequence, or -1 when `bytes` is valid
 * UTF-8 (RFC 3629: no overlong forms, no surrogates, at most U+10FFFF).
 */
export function invalidUtf8At(bytes: Uint8Array): number {
  let i = 0;
  while (i < bytes.length) {
    const b = bytes[i];
    if (b < 0x80) {
      i++;
      continue;
    }
    // Continuation bytes needed after the lead byte, and the smallest code point that form may encode.
    const need = b >= 0xc2 && b <= 0xdf ? 1 : b >= 0xe0 && b <= 0xef ? 2 : b >= 0xf0 && b <= 0xf4 ? 3 : 0;
    if (need === 0) return i;
    const min = need === 1 ? 0x80 : need === 2 ? 0x800 : 0x10000;
    if (i + need >= bytes.length) return i;
    let cp = b & (0x3f >> need);
    for (let k = 1; k <= need; k++) {
      const c = bytes[i + k];
      if (c === undefined || (c & 0xc0) !== 0x80) return i;
      cp = (cp << 6) | (c & 0x3f);
    }
    if (cp < min || cp > 0x10ffff || (cp >= 0xd800 && cp <= 0xdfff)) return i;
    i += need + 1;
  }
  return -1;
}

/** 1-based line and CSV column (delimiters counted before it on its line) of a byte offset. */
function csvPosition(bytes: Uint8Array, offset: number): { row: number; column: number } {
  let row = 1;
  let column = 1;
  for (let i = 0; i < offset; i++) {
    const b = bytes[i];
    if (b === 0x0a) {
      row++;
      column = 1;
    } else if (b === 0x2c || b === 0x3b || b === 0x09) column++;
  }
  return { row, column };
}

/** A written value in SI units; dividing by an exact power of ten keeps 1.5 nA at exactly 1.5e-9. */
const toSI = (x: number, scale: number) => (scale < 1 ? x / Math.round(1 / scale) : x * scale);

/** Decodes the upload to text, or says why it is not UTF-8 text. */
export function decodeCsv(bytes: Uint8Array): { ok: true; text: string } | { ok: false; errors: CsvError[] } {
  const fail = (row: number, column: number, message: string) => ({
    ok: false as const,
    errors: [{ row, column, message }],
  });
  if (bytes.length > MAX_MEASUREMENT_BYTES) {
    return fail(0, 0, `the file is ${(bytes.length / 1048576).toFixed(1)} MB; at most 10 MB is accepted`);
  }
  if (bytes.length >= 2 && ((bytes[0] === 0xff && bytes[1] === 0xfe) || (bytes[0] === 0xfe && bytes[1] === 0xff))) {
    return fail(1, 1, "the file is UTF-16 text (it starts with a UTF-16 byte-order mark); save it as UTF-8 CSV");
  }
  const bad = invalidUtf8At(bytes);
  if (bad !== -1) {
    const { row, column } = csvPosition(bytes, bad);
    const hex = bytes[bad].toString(16).toUpperCase().padStart(2, "0");
    return fail(
      row,
      column,
      `byte 0x${hex} at offset ${bad} is not valid UTF-8; save the file as UTF-8 (Latin-1 or UTF-16 text is not accepted)`,
    );
  }
  if (bytes.includes(0)) {
    const { row, column } = csvPosition(bytes, bytes.indexOf(0));
    return fail(row, column, "the file contains a NUL byte; it looks binary, not CSV text");
  }
  let text = new TextDecoder("utf-8").decode(bytes);
  if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
  return { ok: true, text };
}

/** The separator the header line uses most among comma, semicolon and tab (comma when none). */
function separatorOf(text: string): string {
  const header = text.split("\n").find((l) => l.trim() !== "" && !l.trimStart().startsWith("#")) ?? "";
  let best = ",";
  let most = 0;
  for (const d of [",", ";", "\t"]) {
    const n = header.split(d).length - 1;
    if (n > most) {
      best = d;
      most = n;
    }
  }
  return best;
}

/** Parses a measurement CSV (see the format at the top). */
export function parseMeasurementCsv(input: Uint8Array | string): ParseResult {
  let text: string;
  if (typeof input === "string") {
    if (Buffer.byteLength(input, "utf8") > MAX_MEASUREMENT_BYTES) {
      return {
        ok: false,
        errors: [{ row: 0, column: 0, message: "the file is larger than 10 MB; at most 10 MB is accepted" }],
      };
    }
    text = input.charCodeAt(0) === 0xfeff ? input.slice(1) : input;
  } else {
    const d = decodeCsv(input);
    if (!d.ok) return d;
    text = d.text;
  }

  // Line numbers: papaparse's rows are lines here, because quoted cells with line breaks are refused below.
  const parsed = Papa.parse<string[]>(text, { delimiter: separatorOf(text), skipEmptyLines: false, header: false });
  const errors: CsvError[] = [];
  const push = (e: CsvError) => {
    if (errors.length < MAX_ERRORS) errors.push(e);
  };
  for (const e of parsed.errors) {
    push({ row: (e.row ?? 0) + 1, column: 0, message: `CSV syntax: ${e.message}` });
  }
  if (errors.length) return { ok: false, errors };
  const spanning = parsed.data.findIndex((cells) => cells.some((c) => /[\r\n]/.test(c)));
  if (spanning !== -1) {
    return {
      ok: false,
      errors: [
        { row: spanning + 1, column: 0, message: "a quoted cell spans several lines; every row must be on one line" },
      ],
    };
  }

  const lines = parsed.data.map((cells, i) => ({ row: i + 1, cells }));
  const content = lines.filter(
    (l) => !(l.cells.length === 1 && l.cells[0].trim() === "") && !l.cells[0]?.trimStart().startsWith("#"),
  );
  if (content.length === 0)
    return {
      ok: false,
      errors: [{ row: 1, column: 1, message: "the file is empty; expected a header such as `vin [V], i_out [nA]`" }],
    };

  const head = content[0];
  if (head.cells.length < 2) {
    return {
      ok: false,
      errors: [
        {
          row: head.row,
          column: 1,
          message:
            "the header has one column; expected an x column and at least one value column, separated by commas, e.g. `vin [V], i_out [nA]`",
        },
      ],
    };
  }
  const axes: Axis[] = [];
  const seen = new Set<string>();
  head.cells.forEach((cell, j) => {
    const at = { row: head.row, column: j + 1 };
    const m = HEADER.exec(cell.trim());
    if (!m) {
      push({
        ...at,
        message: `header cell "${cell.trim()}" has no unit; write it as \`name [unit]\`, e.g. \`i_out [nA]\` (\`[1]\` for a plain number)`,
      });
      return;
    }
    const [, name, unitText] = m;
    const unit = parseUnit(unitText);
    if (!NAME.test(name))
      push({
        ...at,
        message: `column name "${name}" must start with a letter or _ and use letters, digits, _ . - only`,
      });
    else if (seen.has(name)) push({ ...at, columnName: name, message: `column name "${name}" appears twice` });
    if (!unit)
      push({
        ...at,
        columnName: name,
        message: `unit "${unitText}" is not known; use V, A or K with an optional prefix f p n u m k M G (e.g. nA, mV), or 1 for a plain number`,
      });
    seen.add(name);
    if (unit) axes.push({ name, unit: unitText, ...unit });
  });
  if (errors.length) return { ok: false, errors };

  const data = content.slice(1);
  if (data.length < 2)
    return {
      ok: false,
      errors: [
        { row: head.row, column: 0, message: `expected at least 2 data rows after the header, found ${data.length}` },
      ],
    };
  const columns = axes.map(() => new Float64Array(data.length));
  data.forEach((line, i) => {
    if (line.cells.length !== axes.length) {
      push({
        row: line.row,
        column: Math.min(line.cells.length, axes.length) + 1,
        message: `this row has ${line.cells.length} cells; the header has ${axes.length}`,
      });
      return;
    }
    line.cells.forEach((cell, j) => {
      const v = cell.trim();
      if (!NUMBER.test(v)) {
        const what = v === "" ? "an empty cell" : `"${v.length > 24 ? v.slice(0, 24) + "…" : v}"`;
        push({
          row: line.row,
          column: j + 1,
          columnName: axes[j].name,
          message: `${what} is not a number; write plain decimals such as 1.5e-9 (the unit belongs in the header)`,
        });
        return;
      }
      const x = Number(v);
      if (!Number.isFinite(x))
        push({ row: line.row, column: j + 1, columnName: axes[j].name, message: `"${v}" is out of range` });
      columns[j][i] = toSI(x, axes[j].scale);
    });
  });
  if (errors.length) return { ok: false, errors };

  const xs = columns[0];
  const increasing = xs[1] > xs[0];
  for (let i = 1; i < xs.length; i++) {
    const step = xs[i] - xs[i - 1];
    if (step === 0 || step > 0 !== increasing) {
      const here = data[i].cells[0].trim();
      const before = data[i - 1].cells[0].trim();
      push({
        row: data[i].row,
        column: 1,
        columnName: axes[0].name,
        message:
          step === 0
            ? `x repeats the value ${here} of the row before; x is the sweep axis and must be strictly increasing or decreasing`
            : `x must be strictly ${increasing ? "increasing" : "decreasing"} (it is the sweep axis); ${here} follows ${before}`,
      });
      break;
    }
  }
  if (errors.length) return { ok: false, errors };

  return {
    ok: true,
    measurement: {
      x: { ...axes[0], values: xs },
      series: axes.slice(1).map((a, j) => ({ ...a, values: columns[j + 1] })),
      rows: data.length,
    },
  };
}

/** "row 7, column 2 (i_out): …" — the one-line form used by the API and the upload form. */
export function formatCsvError(e: CsvError): string {
  const where =
    e.row === 0
      ? "file"
      : e.column === 0
        ? `row ${e.row}`
        : `row ${e.row}, column ${e.column}${e.columnName ? ` (${e.columnName})` : ""}`;
  return `${where}: ${e.message}`;
}

export interface SimulatedCurve {
  /** Sweep axis, strictly monotonic, SI units. */
  x: ArrayLike<number>;
  /** Simulated values at x, SI units. */
  y: ArrayLike<number>;
}

export interface Agreement {
  /** Points compared (measured x inside the simulated range). */
  n: number;
  /** Measured points outside the simulated x range, not compared. */
  outside: number;
  /** Points left out of the log ratio because measured and simulated values do not share a sign (or one is 0). */
  signMismatch: number;
  /** sqrt(mean(ln(measured/simulated)²)) over points with a positive ratio; NaN when there are none. */
  rmsLogRatio: number;
  /** max |measured − simulated| over compared points, in SI units; NaN when n = 0. */
  maxAbsError: number;
  /** x of the largest absolute error. */
  maxAbsErrorAt: number;
}

/**
 * Linear interpolation of the curve at `x`, or NaN outside its range. Assumes
 * `curve.x` strictly monotonic (either direction); O(log n) per call.
 */
export function interpolate(curve: SimulatedCurve, x: number): number {
  const n = curve.x.length;
  if (n === 0) return NaN;
  const inc = n === 1 || curve.x[n - 1] > curve.x[0];
  const lo = inc ? curve.x[0] : curve.x[n - 1];
  const hi = inc ? curve.x[n - 1] : curve.x[0];
  if (!(x >= lo && x <= hi)) return NaN;
  if (n === 1) return curve.y[0];
  let a = 0;
  let b = n - 1;
  while (b - a > 1) {
    const mid = (a + b) >> 1;
    if (curve.x[mid] <= x === inc) a = mid;
    else b = mid;
  }
  const x0 = curve.x[a];
  const x1 = curve.x[b];
  if (x1 === x0) return curve.y[a];
  const t = (x - x0) / (x1 - x0);
  return curve.y[a] + t * (curve.y[b] - curve.y[a]);
}

/**
 * Error between a measured series and the simulated curve, with the curve
 * linearly interpolated at each measured x. The log ratio is the natural
 * logarithm (a value of 0.1 means about 10 % off, either way).
 */
export function compareToSimulation(
  x: ArrayLike<number>,
  measured: ArrayLike<number>,
  curve: SimulatedCurve,
): Agreement {
  let n = 0;
  let outside = 0;
  let signMismatch = 0;
  let sumSq = 0;
  let nLog = 0;
  let maxAbs = NaN;
  let maxAt = NaN;
  for (let i = 0; i < x.length; i++) {
    const sim = interpolate(curve, x[i]);
    if (Number.isNaN(sim)) {
      outside++;
      continue;
    }
    n++;
    const m = measured[i];
    const err = Math.abs(m - sim);
    if (!(err <= maxAbs)) {
      maxAbs = err;
      maxAt = x[i];
    }
    const ratio = m / sim;
    if (ratio > 0 && Number.isFinite(ratio)) {
      const l = Math.log(ratio);
      sumSq += l * l;
      nLog++;
    } else signMismatch++;
  }
  return {
    n,
    outside,
    signMismatch,
    rmsLogRatio: nLog ? Math.sqrt(sumSq / nLog) : NaN,
    maxAbsError: maxAbs,
    maxAbsErrorAt: maxAt,
  };
}
