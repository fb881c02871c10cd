/**
 * A small reader for the messages the local mail sink receives: enough MIME
 * (RFC 2045–2047) for what nodemailer writes — folded headers, encoded words
 * in headers, multipart bodies, quoted-printable and base64 transfer
 * encodings, charsets — to recover the sender, recipients, subject, plain text
 * and HTML of a message. Attachments are skipped. Never throws on odd input:
 * what it cannot read stays as raw text.
 */

export interface ParsedMail {
  messageId: string;
  from: string;
  to: string;
  subject: string;
  text: string;
  html: string | null;
}

interface Part {
  headers: Map<string, string>;
  /** The body as a binary string (one char per byte). */
  body: string;
}

function splitPart(raw: string): Part {
  const m = /\r?\n\r?\n/.exec(raw);
  const head = m ? raw.slice(0, m.index) : raw;
  const body = m ? raw.slice(m.index + m[0].length) : "";
  const headers = new Map<string, string>();
  for (const line of head.replace(/\r?\n[ \t]+/g, " ").split(/\r?\n/)) {
    const colon = line.indexOf(":");
    if (colon <= 0) continue;
    const name = line.slice(0, colon).trim().toLowerCase();
    if (!headers.has(name)) headers.set(name, line.slice(colon + 1).trim());
  }
  return { headers, body };
}

/** Bytes (binary string) → text in `charset`, UTF-8 when the charset is unknown. */
function decodeBytes(binary: string, charset = "utf-8"): string {
  const bytes = Buffer.from(binary, "latin1");
  try {
    return new TextDecoder(charset).decode(bytes);
  } catch {
    return new TextDecoder("utf-8").decode(bytes);
  }
}

function quotedPrintable(s: string): string {
  return s.replace(/=\r?\n/g, "").replace(/=([0-9A-Fa-f]{2})/g, (_, h: string) => String.fromCharCode(parseInt(h, 16)));
}

/** Header text (a binary string) with RFC 2047 encoded words decoded; the rest is read as UTF-8. */
export function decodeHeader(value: string): string {
  const joined = value.replace(/(\?=)\s+(=\?)/g, "$1$2");
  const word = /=\?([^?\s]+)\?([QqBb])\?([^?\s]*)\?=/g;
  let out = "";
  let last = 0;
  for (const m of joined.matchAll(word)) {
    out += decodeBytes(joined.slice(last, m.index));
    const [, charset, enc, text] = m;
    const binary =
      enc.toUpperCase() === "B"
        ? Buffer.from(text, "base64").toString("latin1")
        : quotedPrintable(text.replace(/_/g, " "));
    out += decodeBytes(binary, charset.split("*")[0]);
    last = m.index + m[0].length;
  }
  return (out + decodeBytes(joined.slice(last))).trim();
}

function param(value: string, name: string): string | undefined {
  const m = new RegExp(`;\\s*${name}\\s*=\\s*(?:"([^"]*)"|([^;\\s]+))`, "i").exec(value);
  return m ? (m[1] ?? m[2]) : undefined;
}

function bodyText(part: Part): string {
  const cte = (part.headers.get("content-transfer-encoding") ?? "7bit").toLowerCase();
  const charset = param(part.headers.get("content-type") ?? "", "charset") ?? "utf-8";
  const binary =
    cte === "base64"
      ? Buffer.from(part.body.replace(/[^A-Za-z0-9+/=]/g, ""), "base64").toString("latin1")
      : cte === "quoted-printable"
        ? quotedPrintable(part.body)
        : part.body;
  return decodeBytes(binary, charset).replace(/\r\n/g, "\n");
}

function walk(part: Part, found: { text: string | null; html: string | null }, depth: number): void {
  const type = (part.headers.get("content-type") ?? "text/plain").toLowerCase();
  const disposition = (part.headers.get("content-disposition") ?? "").toLowerCase();
  if (type.startsWith("multipart/") && depth < 8) {
    const boundary = param(part.headers.get("content-type") ?? "", "boundary");
    if (!boundary) return;
    const pieces = part.body.split(new RegExp(`\\r?\\n?--${boundary.replace(/[.*+?^${}()|[\]\\]/g, "\\$&")}`));
    // pieces[0] is the preamble; a piece starting with "--" is the epilogue after the closing boundary.
    for (const piece of pieces.slice(1)) {
      if (piece.startsWith("--")) break;
      walk(splitPart(piece.replace(/^[ \t]*\r?\n/, "")), found, depth + 1);
    }
    return;
  }
  if (disposition.startsWith("attachment")) return;
  if (type.startsWith("text/html")) found.html ??= bodyText(part);
  else if (type.startsWith("text/")) found.text ??= bodyText(part);
}

/** The parts of one raw RFC 5322 message that the development mailbox shows. */
export function parseMail(raw: Buffer | string): ParsedMail {
  const top = splitPart(typeof raw === "string" ? Buffer.from(raw, "utf8").toString("latin1") : raw.toString("latin1"));
  const found: { text: string | null; html: string | null } = { text: null, html: null };
  walk(top, found, 0);
  const h = (name: string) => decodeHeader(top.headers.get(name) ?? "");
  return {
    messageId: h("message-id"),
    from: h("from"),
    to: h("to"),
    subject: h("subject"),
    text: (found.text ?? "").replace(/\n+$/, ""),
    html: found.html,
  };
}
