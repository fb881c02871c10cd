/**
 * The sink's reader (mailparser) against messages written by nodemailer's own
 * MailComposer (the encoder Runnel sends with): quoted-printable soft breaks in
 * long links, encoded words in headers, multipart/alternative, base64.
 */
import MailComposer from "nodemailer/lib/mail-composer";
import { describe, expect, it } from "vitest";
import { parseMail } from "@/scripts/lib/mime";

function compose(options: ConstructorParameters<typeof MailComposer>[0]): Promise<Buffer> {
  return new Promise((resolve, reject) =>
    new MailComposer(options).compile().build((e, m) => (e ? reject(e) : resolve(m))),
  );
}

const longLink = `http://127.0.0.1:3000/invite/${"Ab_-9".repeat(12)}xyz`;

describe("parseMail", () => {
  it("recovers text and HTML of a multipart/alternative message with a long link", async () => {
    const raw = await compose({
      from: "Runnel <runnel@localhost>",
      to: "ruth@larkspur.example",
      subject: "Ada Marlow invited you to LM-64 edge row on Runnel",
      text: `Accept the invitation:\n${longLink}\n\nThe link works once = and only once.`,
      html: `<p><a href="${longLink}">Accept</a></p>`,
    });
    const m = await parseMail(raw);
    expect(m.from).toBe("Runnel <runnel@localhost>");
    expect(m.to).toBe("ruth@larkspur.example");
    expect(m.subject).toBe("Ada Marlow invited you to LM-64 edge row on Runnel");
    expect(m.text).toBe(`Accept the invitation:\n${longLink}\n\nThe link works once = and only once.`);
    expect(m.html).toContain(`href="${longLink}"`);
    expect(m.messageId).toMatch(/^<.+@.+>$/);
  });

  it("decodes non-ASCII subjects and bodies (encoded words, base64 or quoted-printable)", async () => {
    const text = "Grüße aus Zürich — ½ µA pro Zweig ".repeat(8);
    const raw = await compose({ from: "a@b.example", to: "c@d.example", subject: "Einladung für „Kanal“ — µA", text });
    const m = await parseMail(raw);
    expect(m.subject).toBe("Einladung für „Kanal“ — µA");
    expect(m.text).toBe(text);
  });

  it("skips attachments and keeps the body", async () => {
    const raw = await compose({
      from: "a@b.example",
      to: "c@d.example",
      subject: "with file",
      text: "see attached",
      attachments: [{ filename: "row.csv", content: "x,y\n1,2\n" }],
    });
    expect((await parseMail(raw)).text).toBe("see attached");
  });

  it("never throws on garbage", async () => {
    expect(await parseMail("no headers at all")).toMatchObject({ subject: "", text: "" });
    expect(await parseMail("Content-Type: multipart/mixed\r\n\r\nbody")).toMatchObject({ text: "" });
  });
});

describe("encoded words in headers", () => {
  it("joins adjacent encoded words and keeps plain text around them", async () => {
    const m = await parseMail("Subject: Re: =?UTF-8?Q?Gr=C3=BC?= =?UTF-8?B?w59l?= again\r\n\r\n");
    expect(m.subject).toBe("Re: Grüße again");
  });
});
