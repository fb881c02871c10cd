/**
 * The local SMTP sink used by `npm run demo` and the tests: an smtp-server on
 * 127.0.0.1 that accepts every message (no TLS, no authentication), reads it
 * with ./mime (mailparser) and hands it to `onMessage`. `storeInMailbox(db)` is the
 * onMessage that writes into the `dev_mail` table, which /dev/mailbox lists.
 * Nothing here is used in production (RUNNEL_SMTP_URL set).
 */
import { SMTPServer } from "smtp-server";
import type { DB } from "../../db";
import { devMail } from "../../db/schema";
import { parseMail, type ParsedMail } from "./mime";

export interface ReceivedMail extends ParsedMail {
  /** Envelope recipients (RCPT TO). */
  recipients: string[];
}

export interface MailSink {
  host: string;
  port: number;
  close(): Promise<void>;
}

/** Largest message accepted (bytes). */
const MAX_MESSAGE = 2 * 1024 * 1024;

export function startMailSink(options: {
  port?: number;
  host?: string;
  onMessage: (mail: ReceivedMail) => void | Promise<void>;
}): Promise<MailSink> {
  const host = options.host ?? "127.0.0.1";
  const server = new SMTPServer({
    authOptional: true,
    disabledCommands: ["STARTTLS", "AUTH"],
    size: MAX_MESSAGE,
    logger: false,
    onData(stream, session, callback) {
      const chunks: Buffer[] = [];
      stream.on("data", (c: Buffer) => chunks.push(c));
      stream.on("end", () => {
        if ((stream as { sizeExceeded?: boolean }).sizeExceeded) {
          callback(Object.assign(new Error("message too large"), { responseCode: 552 }));
          return;
        }
        const recipients = session.envelope.rcptTo.map((r) => r.address);
        parseMail(Buffer.concat(chunks))
          .then((parsed) => options.onMessage({ ...parsed, recipients }))
          .then(
            () => callback(),
            (e: Error) =>
              callback(
                Object.assign(new Error(`sink could not store the message: ${e.message}`), { responseCode: 451 }),
              ),
          );
      });
    },
  });
  return new Promise((resolve, reject) => {
    server.on("error", reject);
    const listener = server.listen(options.port ?? 0, host, () => {
      const address = listener.address();
      const port = typeof address === "object" && address ? address.port : 0;
      resolve({ host, port, close: () => new Promise<void>((done) => server.close(() => done())) });
    });
  });
}

/** An onMessage that stores each message in the dev mailbox table of `db`. */
export function storeInMailbox(db: DB): (mail: ReceivedMail) => void {
  return (mail) => {
    db.insert(devMail)
      .values({
        messageId: mail.messageId,
        from: mail.from,
        to: mail.recipients.join(", ") || mail.to,
        subject: mail.subject,
        text: mail.text,
        html: mail.html,
      })
      .run();
  };
}
