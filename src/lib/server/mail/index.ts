// Outgoing e-mail over SMTP (nodemailer); locally the mail lands in maildev's inbox.
import nodemailer, { type Transporter } from 'nodemailer';
import { z } from 'zod';
import { config } from '../config';

export const mailMessage = z.object({
	to: z.string().email(),
	subject: z.string().min(1).max(200),
	text: z.string().min(1),
	html: z.string().optional()
});
export type MailMessage = z.infer<typeof mailMessage>;

let transport: Transporter | null = null;

function transporter(): Transporter {
	if (!transport) transport = nodemailer.createTransport(config().SMTP_URL);
	return transport;
}

/** Sends one message now; resolves with the SMTP message id. */
export async function sendMail(message: MailMessage): Promise<string> {
	const m = mailMessage.parse(message);
	const info = await transporter().sendMail({ from: config().MAIL_FROM, ...m });
	return info.messageId;
}

export function closeMail(): void {
	transport?.close();
	transport = null;
}
