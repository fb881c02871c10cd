import { describe, expect, it } from "vitest";
import { extractMentions, extractRunRefs, renderComment, runRefText, safeUrl } from "@/app/lib/review/markdown";

describe("comment Markdown", () => {
  it("renders ordinary Markdown: emphasis, code, lists, tables, links", () => {
    const html = renderComment(
      "**bold** _it_ `code`\n\n- one\n- two\n\n| a | b |\n|:-|-:|\n| 1 | 2 |\n\n[spec](https://example.com/x?a=1&b=2)",
    );
    expect(html).toContain("<strong>bold</strong>");
    expect(html).toContain("<em>it</em>");
    expect(html).toContain("<code>code</code>");
    expect(html).toContain("<li>two</li>");
    expect(html).toContain('<th align="left">a</th>');
    expect(html).toContain('<a href="https://example.com/x?a=1&amp;b=2" rel="noopener noreferrer nofollow">spec</a>');
  });

  it("keeps fenced code and its language class", () => {
    expect(renderComment("```runnel\nnfet m1 gate=vg source=x drain=vdd\n```")).toContain(
      '<pre><code class="language-runnel">nfet m1',
    );
  });

  it("turns [[run ID]] into a run placeholder, not inside code", () => {
    const html = renderComment("see [[run r_7Xq-2]] and `[[run nope]]`");
    expect(html).toContain('<span class="run-ref" data-run="r_7Xq-2">run r_7Xq-2</span>');
    expect(html).toContain("<code>[[run nope]]</code>");
    expect(extractRunRefs("[[run a]] then [[run b]], again [[run a]]; `[[run c]]`")).toEqual(["a", "b"]);
    expect(runRefText("r1")).toBe("[[run r1]]");
    expect(extractRunRefs(runRefText("r1"))).toEqual(["r1"]);
  });

  it("parses @mentions at the start of a word, lower case, without repeats, and not in addresses or code", () => {
    expect(extractMentions("@Ruth please check; cc @teo.brandt. Thanks @ruth")).toEqual(["ruth", "teo.brandt"]);
    expect(extractMentions("mail ruth@larkspur.example or `@teo`")).toEqual([]);
    expect(extractMentions("```\n@nobody\n```")).toEqual([]);
    expect(renderComment("hi @Ruth")).toContain('<span class="mention" data-mention="ruth">@ruth</span>');
  });

  it("accepts only http, https, mailto and relative URLs", () => {
    expect(safeUrl("https://a.example/")).toBe("https://a.example/");
    expect(safeUrl("mailto:ruth@larkspur.example")).toBe("mailto:ruth@larkspur.example");
    expect(safeUrl("/runs/r1")).toBe("/runs/r1");
    expect(safeUrl("#top")).toBe("#top");
    expect(safeUrl("runs/r1?x=a:b")).toBe("runs/r1?x=a:b");
    for (const bad of [
      "javascript:alert(1)",
      "JaVaScRiPt:alert(1)",
      " javascript:x",
      "java\tscript:x",
      "java\nscript:x",
      "\u0001javascript:x",
      "data:text/html,x",
      "vbscript:x",
      "//evil.example",
      "\\\\evil.example",
      "file:///etc/passwd",
      "a:b",
    ]) {
      expect(safeUrl(bad), bad).toBeNull();
    }
  });

  it("never throws, whatever the input", () => {
    for (const s of [
      "",
      "[",
      "[[run ",
      "@",
      "`",
      "<",
      "&",
      "\u0000",
      "*".repeat(5000),
      "[".repeat(2000) + "]".repeat(2000),
    ]) {
      expect(typeof renderComment(s)).toBe("string");
    }
  });
});

describe("images in comments", () => {
  it("loads an image from our own origin", () => {
    expect(renderComment("![plot](/runs/r_1/plot.png)")).toContain('<img src="/runs/r_1/plot.png" alt="plot"');
  });

  it("shows an image on another server as a link, never as an image", () => {
    for (const src of [
      "http://127.0.0.1:9/pixel.png",
      "https://images.example.org/a.png",
      "HTTPS://images.example.org/a.png",
    ]) {
      const html = renderComment(`![bench photo](${src})`);
      expect(html, src).not.toContain("<img");
      expect(html, src).toContain(
        `<a href="${src}" rel="noopener noreferrer nofollow">bench photo (image: ${src})</a>`,
      );
    }
  });
});

describe("run references in every form, resolved against the workspace", () => {
  const id = "r_abcdefghijklmn23";
  it("accepts the bare id, [[id]], [[run id]] and a pasted run URL", () => {
    for (const body of [
      `see ${id} please`,
      `see [[${id}]] please`,
      `see [[run ${id}]] please`,
      `see https://runnel.example.org/runs/${id} please`,
      `see http://127.0.0.1:3000/runs/${id}?tab=probes please`,
    ]) {
      expect(extractRunRefs(body)).toEqual([id]);
      expect(renderComment(body)).toContain(`data-run="${id}"`);
    }
  });

  it("leaves an id in code, a longer id-like word, or a link target alone", () => {
    expect(extractRunRefs(`\`${id}\` ${id}xyz`)).toEqual([]);
    expect(extractRunRefs(`[the run](https://elsewhere.example/docs)`)).toEqual([]);
  });

  it("with a context, a reference that does not resolve and a handle that is no member stay plain text", () => {
    const ctx = { runs: new Set([id]), handles: new Set(["ruth"]) };
    const html = renderComment(`[[run ${id}]] r_zzzzzzzzzzzzzzzz @ruth @teo`, ctx);
    expect(html).toContain(`data-run="${id}"`);
    expect(html).not.toContain('data-run="r_zzzzzzzzzzzzzzzz"');
    expect(html).toContain("r_zzzzzzzzzzzzzzzz");
    expect(html).toContain('data-mention="ruth"');
    expect(html).not.toContain('data-mention="teo"');
    expect(html).toContain("@teo");
  });
});
