import { describe, expect, it } from "vitest";
import { renderComment } from "@/app/lib/review/markdown";

/**
 * Hostile comments. Each payload is a well-known class of injection (OWASP XSS
 * Filter Evasion Cheat Sheet classes, common practice). The check reads the
 * rendered HTML as a browser would see its tags: every `<` must start a tag of
 * the comment allow-list, no attribute may be an event handler, a style or an
 * unsafe URL. Escaped text such as "&lt;script&gt;" is inert and allowed.
 */
const PAYLOADS = [
  "<script>alert(1)</script>",
  "<SCRIPT SRC=//evil.example/x.js></SCRIPT>",
  "<img src=x onerror=alert(1)>",
  '<img src="x" onerror="alert(1)">',
  "<svg onload=alert(1)>",
  "<svg><script>alert(1)</script></svg>",
  '<iframe src="javascript:alert(1)"></iframe>',
  '<iframe srcdoc="<script>alert(1)</script>"></iframe>',
  '<a href="javascript:alert(1)">x</a>',
  '<div style="background:url(javascript:alert(1))">x</div>',
  "<style>body{background:red}</style>",
  "<body onload=alert(1)>",
  "<input autofocus onfocus=alert(1)>",
  "<details open ontoggle=alert(1)>",
  "<math><mtext><table><mglyph><style><img src=x onerror=alert(1)>",
  '<object data="javascript:alert(1)"></object>',
  '<embed src="javascript:alert(1)">',
  '<form action="javascript:alert(1)"><button>x</button></form>',
  '<meta http-equiv="refresh" content="0;url=javascript:alert(1)">',
  '<base href="javascript:alert(1)//">',
  "<template><script>alert(1)</script></template>",
  "[x](javascript:alert(1))",
  "[x](JAVASCRIPT:alert(1))",
  "[x](  javascript:alert(1))",
  "[x](&#106;&#97;&#118;&#97;&#115;&#99;&#114;&#105;&#112;&#116;&#58;alert(1))",
  "[x](javascript&#58;alert(1))",
  "[x](java%0ascript:alert(1))",
  "[x](<javascript:alert(1)>)",
  "[x](data:text/html;base64,PHNjcmlwdD5hbGVydCgxKTwvc2NyaXB0Pg==)",
  "[x](vbscript:msgbox(1))",
  "![x](javascript:alert(1))",
  "![x](data:image/svg+xml;base64,PHN2ZyBvbmxvYWQ9YWxlcnQoMSk+)",
  '![x" onerror="alert(1)](https://example.com/a.png)',
  '[x](https://example.com/" onmouseover="alert(1))',
  '[x](https://example.com "title\\" onmouseover=alert(1) x=\\"")',
  "[ref]\n\n[ref]: javascript:alert(1)",
  "<javascript:alert(1)>",
  '<a href="https://ok.example" onclick="alert(1)">x</a>',
  "&lt;script&gt;alert(1)&lt;/script&gt;",
  "<scr<script>ipt>alert(1)</scr</script>ipt>",
  "<<script>script>alert(1)<</script>/script>",
  "`<script>` and ```\n<script>alert(1)</script>\n```",
  "<!-- --><script>alert(1)</script><!-- -->",
  "<img src=`x` onerror=alert(1)>",
  '<a href="jav&#x09;ascript:alert(1)">x</a>',
  '[[run x" onmouseover="alert(1)]] and [[run <img src=x onerror=alert(1)>]]',
  "@<img/src/onerror=alert(1)>",
  '<span class="run-ref" data-run="x" onclick="alert(1)">fake</span>',
  '<noscript><p title="</noscript><img src=x onerror=alert(1)>">',
];

const ALLOWED_TAGS = new Set([
  "a",
  "p",
  "br",
  "hr",
  "strong",
  "em",
  "del",
  "code",
  "pre",
  "blockquote",
  "ul",
  "ol",
  "li",
  "h1",
  "h2",
  "h3",
  "h4",
  "h5",
  "h6",
  "table",
  "thead",
  "tbody",
  "tr",
  "th",
  "td",
  "img",
  "span",
]);
const SAFE_URL = /^(https?:\/\/|mailto:|\/(?!\/)|#|\.{0,2}\/|[A-Za-z0-9_~.%-]+(?:[/?#]|$))/;

/** Problems with one rendered string, from a browser's point of view. */
function vectors(html: string): string[] {
  const problems: string[] = [];
  for (let i = html.indexOf("<"); i !== -1; i = html.indexOf("<", i + 1)) {
    const m = /^<\/?([a-zA-Z][a-zA-Z0-9]*)((?:\s+[a-zA-Z-]+(?:="[^"]*")?)*)\s*\/?>/.exec(html.slice(i));
    if (!m) {
      problems.push(`a "<" that is not a well-formed tag at ${i}: ${html.slice(i, i + 30)}`);
      continue;
    }
    const tag = m[1].toLowerCase();
    if (!ALLOWED_TAGS.has(tag)) problems.push(`tag <${tag}>`);
    for (const a of m[2].matchAll(/([a-zA-Z-]+)(?:="([^"]*)")?/g)) {
      const [, name, value = ""] = a;
      const decoded = value.replace(/&amp;/g, "&").replace(/&quot;/g, '"');
      if (/^on/i.test(name)) problems.push(`event handler ${name}`);
      if (/^(style|srcdoc|formaction|action|xlink:href)$/i.test(name)) problems.push(`attribute ${name}`);
      if ((name === "href" || name === "src") && !SAFE_URL.test(decoded))
        problems.push(`unsafe URL ${name}="${value}"`);
      if (/javascript:|vbscript:|data:/i.test(decoded)) problems.push(`script URL in ${name}`);
    }
  }
  return problems;
}

describe("comments render hostile input inert", () => {
  it("has a checker that finds vectors (so the test can fail)", () => {
    expect(vectors('<img src=x onerror="a">')).not.toEqual([]);
    expect(vectors('<a href="javascript:x">')).not.toEqual([]);
    expect(vectors("<script>")).not.toEqual([]);
    expect(vectors('<p style="x">')).not.toEqual([]);
    expect(vectors('<p>ok <a href="https://a.example" rel="x">y</a></p>')).toEqual([]);
  });

  it.each(PAYLOADS.map((p) => [p]))("%s", (payload) => {
    const html = renderComment(payload);
    expect(vectors(html)).toEqual([]);
    expect(html).not.toMatch(/<script/i);
    expect(html).not.toMatch(
      /<(iframe|svg|style|object|embed|form|meta|base|math|template|input|button|body|details|noscript)\b/i,
    );
    // an on… attribute in attribute position (not text inside another attribute's quoted value)
    expect(html).not.toMatch(/<[a-z0-9]+(\s+[a-z-]+(="[^"]*")?)*\s+on\w+\s*=/i);
    expect(html).not.toMatch(/(href|src)="\s*(javascript|vbscript|data):/i);
  });

  it("there are at least 25 payloads", () => {
    expect(PAYLOADS.length).toBeGreaterThanOrEqual(25);
  });
});
