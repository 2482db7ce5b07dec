// nodemailer over SMTP_URL: the local sink on loopback in development and tests, any relay in production.
import nodemailer, { type Transporter } from 'nodemailer';
import { config } from '../config';

let transporter: Transporter | null = null;
let transporterUrl: string | undefined;

/** The transport for SMTP_URL, or null when no SMTP_URL is configured (mail is then logged, not sent). */
export function mailTransport(): Transporter | null {
  const url = config().smtpUrl;
  if (!url) return null;
  if (!transporter || transporterUrl !== url) {
    transporter = nodemailer.createTransport(url);
    transporterUrl = url;
  }
  return transporter;
}

export interface Message {
  to: string;
  subject: string;
  text: string;
  html: string;
}

export async function sendMessage(message: Message): Promise<void> {
  const transport = mailTransport();
  if (!transport) throw new Error('SMTP_URL is not set: no mail transport is configured');
  await transport.sendMail({ from: config().mailFrom, ...message });
}
