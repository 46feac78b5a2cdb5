import nodemailer from 'nodemailer';
import type { Db } from '../db/client';
import { mailMessages } from '../db/schema';

export interface OutgoingMail {
  to: string;
  subject: string;
  text: string;
  html?: string;
}

export interface Mailer {
  /** true when messages land in the database mailbox instead of going out over SMTP */
  readonly isFake: boolean;
  send(mail: OutgoingMail): Promise<void>;
}

const FROM = process.env.FLAGLINE_MAIL_FROM || 'Flagline <no-reply@flagline.invalid>';

interface JsonTransportMessage {
  to?: { address: string }[];
  subject?: string;
  text?: string;
  html?: string;
}

/**
 * With an SMTP URL, real SMTP. Without, nodemailer's JSON transport builds the message and it is
 * stored in mail_messages, where the development mailbox (GET /api/dev/mailbox) shows it.
 */
export function createMailer(db: Db, smtpUrl: string | undefined = process.env.FLAGLINE_SMTP_URL): Mailer {
  if (smtpUrl) {
    const transport = nodemailer.createTransport(smtpUrl);
    return {
      isFake: false,
      send: async (mail) => {
        await transport.sendMail({ from: FROM, ...mail });
      },
    };
  }
  const transport = nodemailer.createTransport({ jsonTransport: true });
  return {
    isFake: true,
    send: async (mail) => {
      const info = await transport.sendMail({ from: FROM, ...mail });
      const built = JSON.parse(info.message) as JsonTransportMessage;
      db.insert(mailMessages)
        .values({
          to: built.to?.map((a) => a.address).join(', ') ?? mail.to,
          subject: built.subject ?? mail.subject,
          text: built.text ?? mail.text,
          html: built.html ?? null,
        })
        .run();
    },
  };
}
