/**
 * Comments: Markdown → safe HTML, plus the two bits of Runnel syntax a comment may carry.
 *
 * Contract of `renderComment`
 * - Raw HTML in the source is never interpreted: marked's `html` tokens are
 *   escaped to text. The HTML marked produces then goes through js-xss with a
 *   strict allow-list (below), so even a bug in the Markdown step cannot emit a
 *   script, an event handler, a style or an iframe.
 * - Links and images keep only http:, https:, mailto: and relative URLs (after
 *   removing the control characters and blanks browsers ignore inside a scheme);
 *   anything else renders as plain text. Every link gets
 *   rel="noopener noreferrer nofollow".
 * - An image is loaded only from Runnel's own origin (a relative URL). An image
 *   on another server becomes a link to it: a reader's browser never fetches
 *   it unasked (which would tell that server who read the thread, and when).
 * - A run reference, written `[[run ID]]` or `[[ID]]` (ID: letters, digits,
 *   `_` and `-`), as a bare run id (`r_` and 16 characters) or as a pasted run
 *   URL (`https://…/runs/ID`), becomes
 *   `<span class="run-ref" data-run="ID">run ID</span>`; the thread page
 *   turns each such placeholder into a card with the run's state and probes.
 *   With a render context, a reference that does not resolve stays plain text.
 * - A mention, written `@handle` at the start of a word (handle: a letter or
 *   digit, then letters, digits, `.`, `_`, `-`; at most 40), becomes
 *   `<span class="mention" data-mention="handle">@handle</span>`. Handles are
 *   compared in lower case; with a render context, a handle that is no member
 *   stays plain text. Mentions and run references inside code are text.
 */
import { Marked, type Token, type Tokens, type TokenizerAndRendererExtension } from "marked";
import { FilterXSS } from "xss";

/** `[[run ID]]` or `[[ID]]`: our run-reference syntax. */
export const RUN_REF = /^\[\[(?:run )?([A-Za-z0-9_-]{1,64})\]\]/;
/** A run id on its own (`r_` and 16 letters or digits 2–7, as the server makes them). */
const BARE_RUN = /^r_[a-z2-7]{16}(?![A-Za-z0-9_-])/;
/** A pasted run URL: any origin (the public URL may differ from the one a browser used), path /runs/ID. */
const RUN_URL = /^https?:\/\/[^\s/<>]+\/runs\/([A-Za-z0-9_-]{1,64})(?:[/?#][^\s<>]*)?/;
const MENTION = /^@([A-Za-z0-9][A-Za-z0-9._-]{0,39})/;

/**
 * What a comment is rendered against: the run ids that resolve in its
 * workspace and the handles of its members. A reference or mention outside
 * them renders as plain text (never a card or a styled mention). Without a
 * context every well-formed one is rendered (the form's own syntax check).
 */
export interface RenderContext {
  runs: ReadonlySet<string>;
  handles: ReadonlySet<string>;
}
let context: RenderContext | null = null;

interface RunRefToken extends Tokens.Generic {
  type: "runRef";
  runId: string;
}
interface MentionToken extends Tokens.Generic {
  type: "mention";
  handle: string;
}

/** Earliest index in `src` where a run reference of any form may start, or −1. */
function runRefStart(src: string): number {
  const found = [src.indexOf("[["), src.search(/https?:\/\/[^\s/<>]+\/runs\//)];
  const bare = /(^|[^A-Za-z0-9_-])r_[a-z2-7]{16}(?![A-Za-z0-9_-])/.exec(src);
  if (bare) found.push(bare.index + bare[1].length);
  const hits = found.filter((i) => i >= 0);
  return hits.length ? Math.min(...hits) : -1;
}

const runRef: TokenizerAndRendererExtension = {
  name: "runRef",
  level: "inline",
  start: runRefStart,
  tokenizer(src) {
    const m = RUN_REF.exec(src) ?? RUN_URL.exec(src);
    if (m) return { type: "runRef", raw: m[0], runId: m[1] } as RunRefToken;
    const b = BARE_RUN.exec(src);
    return b ? ({ type: "runRef", raw: b[0], runId: b[0] } as RunRefToken) : undefined;
  },
  renderer(token) {
    const t = token as RunRefToken;
    if (context && !context.runs.has(t.runId)) return escapeHtml(t.raw);
    return `<span class="run-ref" data-run="${t.runId}">run ${t.runId}</span>`;
  },
};

/** Index of the first `@` that starts a word (not inside an address such as a@b). */
function mentionStart(src: string): number {
  for (let i = src.indexOf("@"); i !== -1; i = src.indexOf("@", i + 1)) {
    if (i === 0 || !/[A-Za-z0-9._%+-]/.test(src[i - 1])) return i;
  }
  return -1;
}

const mention: TokenizerAndRendererExtension = {
  name: "mention",
  level: "inline",
  start: mentionStart,
  tokenizer(src) {
    const m = MENTION.exec(src);
    if (!m) return undefined;
    const handle = m[1].replace(/[._-]+$/, "");
    return { type: "mention", raw: `@${handle}`, handle: handle.toLowerCase() } as MentionToken;
  },
  renderer(token) {
    const t = token as MentionToken;
    if (context && !context.handles.has(t.handle)) return escapeHtml(t.raw);
    return `<span class="mention" data-mention="${t.handle}">@${t.handle}</span>`;
  },
};

const NAMED: Record<string, string> = {
  colon: ":",
  tab: "\t",
  newline: "\n",
  amp: "&",
  sol: "/",
  lpar: "(",
  rpar: ")",
  quot: '"',
  apos: "'",
  lt: "<",
  gt: ">",
  nbsp: "\u00a0",
};

/** Decodes HTML character references (as a browser would in an attribute) so a scheme cannot hide behind them. */
function decodeReferences(s: string): string {
  return s.replace(/&(#[0-9]+|#[xX][0-9a-fA-F]+|[A-Za-z]+);?/g, (m, ref: string) => {
    if (ref[0] !== "#") return NAMED[ref.toLowerCase()] ?? m;
    const code = ref[1] === "x" || ref[1] === "X" ? parseInt(ref.slice(2), 16) : parseInt(ref.slice(1), 10);
    return code > 0 && code <= 0x10ffff ? String.fromCodePoint(code) : "\ufffd";
  });
}

/**
 * The URL if a comment may link to it, else null: http(s), mailto, or relative
 * (no scheme at all). Browsers drop ASCII tab/newline anywhere in a URL and
 * leading C0 controls/blanks, so those are removed before the scheme is read.
 */
export function safeUrl(href: string): string | null {
  const url = decodeReferences(href)
    // eslint-disable-next-line no-control-regex -- matching the control characters browsers skip is the point
    .replace(/^[\u0000-\u0020]+/, "")
    .replace(/[\t\n\r]/g, "")
    .trimEnd();
  if (url === "") return null;
  // eslint-disable-next-line no-control-regex -- any other control character makes the URL suspect
  if (/[\u0000-\u001f\u007f]/.test(url)) return null;
  const scheme = /^([A-Za-z][A-Za-z0-9+.-]*):/.exec(url);
  if (scheme) return /^(https?|mailto)$/i.test(scheme[1]) ? url : null;
  // No scheme: a relative URL. Reject a leading "//" (protocol-relative, another host) and backslashes
  // (browsers read "\\" as "//"); a colon before the first / ? # would be read as a scheme.
  if (/^[\\/]{2}/.test(url) || url.includes("\\")) return null;
  const firstDelimiter = url.search(/[/?#]/);
  const colon = url.indexOf(":");
  if (colon !== -1 && (firstDelimiter === -1 || colon < firstDelimiter)) return null;
  return url;
}

/** True for a URL that `safeUrl` passed and that has no scheme: it stays on our own origin. */
const isRelative = (url: string) => !/^[A-Za-z][A-Za-z0-9+.-]*:/.test(url);

const escapeHtml = (s: string) =>
  s.replace(/&/g, "&amp;").replace(/</g, "&lt;").replace(/>/g, "&gt;").replace(/"/g, "&quot;").replace(/'/g, "&#39;");
const escapeAttr = (s: string) =>
  s.replace(/&/g, "&amp;").replace(/"/g, "&quot;").replace(/</g, "&lt;").replace(/>/g, "&gt;");
const REL = "noopener noreferrer nofollow";

const marked = new Marked({ gfm: true, breaks: true, async: false });
marked.use({
  extensions: [runRef, mention],
  renderer: {
    html({ text }) {
      return escapeHtml(text);
    },
    link({ href, title, tokens }) {
      const text = this.parser.parseInline(tokens);
      const url = safeUrl(href);
      if (url === null) return text;
      const t = title ? ` title="${escapeAttr(title)}"` : "";
      return `<a href="${escapeAttr(url)}"${t} rel="${REL}">${text}</a>`;
    },
    image({ href, title, text }) {
      const url = safeUrl(href);
      if (url === null || url.toLowerCase().startsWith("mailto:")) return escapeHtml(text);
      const t = title ? ` title="${escapeAttr(title)}"` : "";
      if (!isRelative(url)) {
        const label = `${text ? text + " " : ""}(image: ${url})`;
        return `<a href="${escapeAttr(url)}"${t} rel="${REL}">${escapeHtml(label)}</a>`;
      }
      return `<img src="${escapeAttr(url)}" alt="${escapeAttr(text)}"${t} loading="lazy">`;
    },
    checkbox({ checked }) {
      return checked ? "☑ " : "☐ ";
    },
  },
});

/** What a comment may contain after rendering; anything else is escaped to text. */
const ALLOW: Record<string, string[]> = {
  a: ["href", "title", "rel"],
  p: [],
  br: [],
  hr: [],
  strong: [],
  em: [],
  del: [],
  code: ["class"],
  pre: [],
  blockquote: [],
  ul: [],
  ol: ["start"],
  li: [],
  h1: [],
  h2: [],
  h3: [],
  h4: [],
  h5: [],
  h6: [],
  table: [],
  thead: [],
  tbody: [],
  tr: [],
  th: ["align"],
  td: ["align"],
  img: ["src", "alt", "title", "loading"],
  span: ["class", "data-run", "data-mention"],
};

const sanitizer = new FilterXSS({
  whiteList: ALLOW,
  stripIgnoreTag: false, // a tag outside the list is escaped (shown as text), never kept
  stripIgnoreTagBody: ["script", "style", "iframe", "object", "embed", "svg", "math", "template"],
  allowCommentTag: false,
  css: false,
  safeAttrValue(tag, name, value) {
    const v = value.trim();
    switch (name) {
      case "href":
      case "src": {
        const url = safeUrl(v.replace(/&amp;/g, "&"));
        if (url === null || (name === "src" && !isRelative(url))) return "";
        return escapeAttr(url);
      }
      case "rel":
        return REL;
      case "class":
        if (tag === "code") return /^language-[A-Za-z0-9_+-]{1,32}$/.test(v) ? v : "";
        return v === "run-ref" || v === "mention" ? v : "";
      case "data-run":
        return /^[A-Za-z0-9_-]{1,64}$/.test(v) ? v : "";
      case "data-mention":
        return /^[a-z0-9][a-z0-9._-]{0,39}$/.test(v) ? v : "";
      case "align":
        return /^(left|right|center)$/.test(v) ? v : "";
      case "start":
        return /^\d{1,6}$/.test(v) ? v : "";
      case "loading":
        return "lazy";
      default:
        // Values come from the renderer, already escaped; escape only what could end the attribute.
        return v.replace(/"/g, "&quot;").replace(/</g, "&lt;").replace(/>/g, "&gt;");
    }
  },
});

/**
 * Safe HTML for a comment's Markdown (see the contract at the top), references
 * and mentions resolved against `ctx` when given. Never throws on any input string.
 */
export function renderComment(markdown: string, ctx: RenderContext | null = null): string {
  context = ctx;
  try {
    return sanitizer.process(marked.parse(markdown, { async: false }));
  } finally {
    context = null;
  }
}

function walk(markdown: string, visit: (t: Token) => void): void {
  marked.walkTokens(marked.lexer(markdown), visit);
}

/** Handles mentioned in a comment, lower case, first occurrence order, without repeats. */
export function extractMentions(markdown: string): string[] {
  const seen = new Set<string>();
  walk(markdown, (t) => {
    if (t.type === "mention") seen.add((t as MentionToken).handle);
  });
  return [...seen];
}

/** Run ids referenced (`[[run ID]]`, `[[ID]]`, a bare run id or a run URL), first occurrence order, without repeats. */
export function extractRunRefs(markdown: string): string[] {
  const seen = new Set<string>();
  walk(markdown, (t) => {
    if (t.type === "runRef") seen.add((t as RunRefToken).runId);
  });
  return [...seen];
}

/** The text that writes a reference to a run in a comment. */
export function runRefText(runId: string): string {
  return `[[run ${runId}]]`;
}
