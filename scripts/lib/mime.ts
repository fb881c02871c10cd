/**
 * Reads the messages the local mail sink receives with mailparser (from the
 * maintainers of nodemailer, which Runnel sends with): the sender, recipients,
 * subject, plain text and HTML of a message. Attachments are left out. Never
 * throws on odd input: what cannot be read is empty.
 */
import { simpleParser, type AddressObject } from "mailparser";

export interface ParsedMail {
  messageId: string;
  from: string;
  to: string;
  subject: string;
  text: string;
  html: string | null;
}

/** Addresses as a header shows them: `Name <address>`, or the bare address, joined by ", ". */
function addresses(field: AddressObject | AddressObject[] | undefined): string {
  const list = field === undefined ? [] : Array.isArray(field) ? field : [field];
  return list
    .flatMap((a) => a.value)
    .map((a) => (a.name ? `${a.name} <${a.address ?? ""}>` : (a.address ?? "")))
    .join(", ");
}

export async function parseMail(raw: Buffer | string): Promise<ParsedMail> {
  try {
    const m = await simpleParser(raw, { skipImageLinks: true, skipTextToHtml: true });
    return {
      messageId: m.messageId ?? "",
      from: addresses(m.from),
      to: addresses(m.to),
      subject: m.subject ?? "",
      // The line break that ends a message body is the transport's, not the text's.
      text: (m.text ?? "").replace(/\r?\n$/, ""),
      html: typeof m.html === "string" ? m.html : null,
    };
  } catch {
    return { messageId: "", from: "", to: "", subject: "", text: "", html: null };
  }
}
