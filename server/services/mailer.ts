import nodemailer, { type Transporter } from 'nodemailer';
import { SMTPServer } from 'smtp-server';
import type { AddressInfo } from 'node:net';

export interface MailMessage {
  readonly to: string;
  readonly subject: string;
  readonly text: string;
}

/** Sends e-mail; `close()` releases the transport (and the local fake server, when there is one). */
export interface Mailer {
  readonly from: string;
  send(msg: MailMessage): Promise<{ messageId: string }>;
  /** Raw messages received by the local fake SMTP server (empty when a real server is used). */
  readonly received: ReadonlyArray<{ to: string[]; raw: string }>;
  close(): Promise<void>;
}

/**
 * nodemailer into SMTP. With no `smtpUrl`, an in-process SMTP server (smtp-server) starts on
 * 127.0.0.1 at a free port and keeps what it receives, so invitations and notices work on a
 * fresh machine with no mail server.
 */
export async function createMailer(opts: { smtpUrl?: string; from?: string } = {}): Promise<Mailer> {
  const from = opts.from ?? 'Keelson <no-reply@keelson.test>';
  const received: { to: string[]; raw: string }[] = [];
  let fake: SMTPServer | undefined;
  let transport: Transporter;
  if (opts.smtpUrl) {
    transport = nodemailer.createTransport(opts.smtpUrl);
  } else {
    fake = new SMTPServer({
      disabledCommands: ['STARTTLS'],
      authOptional: true,
      logger: false,
      onData(stream, sessionInfo, callback) {
        const chunks: Buffer[] = [];
        stream.on('data', (c: Buffer) => chunks.push(c));
        stream.on('end', () => {
          received.push({
            to: sessionInfo.envelope.rcptTo.map((r) => r.address),
            raw: Buffer.concat(chunks).toString('utf8'),
          });
          callback();
        });
      },
    });
    const server = fake;
    await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', () => resolve()));
    const port = (server.server.address() as AddressInfo).port;
    transport = nodemailer.createTransport({ host: '127.0.0.1', port, secure: false, ignoreTLS: true });
  }
  return {
    from,
    received,
    async send(msg) {
      const info = await transport.sendMail({ from, to: msg.to, subject: msg.subject, text: msg.text });
      return { messageId: String(info.messageId ?? '') };
    },
    async close() {
      transport.close();
      if (fake) {
        const server = fake;
        await new Promise<void>((resolve) => server.close(() => resolve()));
      }
    },
  };
}
