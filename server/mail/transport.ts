import nodemailer from 'nodemailer';
import type { Knex } from 'knex';
import type { Config } from '../config.js';

export interface MailMessage {
  to: string;
  subject: string;
  text: string;
  html?: string;
  /**
   * Secrets in the body (a one-time link's token). With a real transport (smtp) they are replaced by
   * "[redacted]" in the copy kept in the outbox, so a read of the database cannot reuse them; with
   * the outbox transport the stored copy is the delivery, so it is kept whole.
   */
  redact?: string[];
}

export type OutboxStatus = 'stored' | 'sending' | 'sent' | 'failed';

export interface SendResult {
  /** outbox row id; null only when even recording the message failed (logged) */
  id: number | null;
  status: OutboxStatus;
}

export interface Mailer {
  /** Compose, record and (for smtp) deliver one message. Never throws: a failure is logged and recorded. */
  send(message: MailMessage): Promise<SendResult>;
  /** Absolute link into the client, e.g. link('/batches/3') → `${publicUrl}/batches/3`. */
  link(path: string): string;
  readonly transport: Config['mail']['transport'];
  /** Resolves once every send started so far has finished (for shutdown and tests). */
  idle(): Promise<void>;
}

const errorText = (e: unknown) => (e instanceof Error ? e.message : String(e)).slice(0, 2000);

function redacted(s: string | undefined, secrets: string[] | undefined): string | undefined {
  if (s === undefined || !secrets?.length) return s;
  return secrets.filter(Boolean).reduce((acc, secret) => acc.split(secret).join('[redacted]'), s);
}

/**
 * The one way Starveil sends e-mail. Every message goes through nodemailer's JSON transport first,
 * so its composed form is kept in the `outbox` table; with MAIL_TRANSPORT=smtp it is then delivered
 * by nodemailer's SMTP transport and the row records sent or failed with the error.
 */
export function createMailer(db: Knex, config: Pick<Config, 'mail' | 'publicUrl'>): Mailer {
  const { transport, from, smtpUrl } = config.mail;
  const composer = nodemailer.createTransport({ jsonTransport: true });
  const smtp = transport === 'smtp' ? nodemailer.createTransport(smtpUrl) : null;
  const pending = new Set<Promise<unknown>>();

  async function deliver(message: MailMessage): Promise<SendResult> {
    const now = new Date().toISOString();
    const keep = transport === 'smtp' ? message.redact : undefined;
    const base = {
      to_address: message.to,
      from_address: from,
      subject: message.subject,
      text_body: redacted(message.text, keep)!,
      html_body: redacted(message.html, keep) ?? null,
      transport,
      created_at: now,
    };

    let messageJson: string | null = null;
    let messageId: string | null = null;
    try {
      const composed = await composer.sendMail({ from, to: message.to, subject: message.subject, text: message.text, html: message.html });
      if (!composed.envelope.to?.length) throw new Error(`"${message.to}" is not an e-mail address nodemailer can deliver to`);
      messageJson = redacted(composed.message, keep)!;
      messageId = composed.messageId;
    } catch (e) {
      console.error(`mail: could not compose "${message.subject}" to ${message.to}: ${errorText(e)}`);
      const [id] = await db('outbox').insert({ ...base, message_json: null, status: 'failed', error: errorText(e) });
      return { id, status: 'failed' };
    }

    if (!smtp) {
      const [id] = await db('outbox').insert({ ...base, message_json: messageJson, message_id: messageId, status: 'stored', sent_at: now });
      return { id, status: 'stored' };
    }

    // Recorded before delivery, so a message lost to a crash mid-send still shows as "sending".
    const [id] = await db('outbox').insert({ ...base, message_json: messageJson, message_id: messageId, status: 'sending' });
    try {
      const info = await smtp.sendMail({ from, to: message.to, subject: message.subject, text: message.text, html: message.html, messageId: messageId ?? undefined });
      await db('outbox').where({ id }).update({ status: 'sent', message_id: info.messageId ?? messageId, sent_at: new Date().toISOString() });
      return { id, status: 'sent' };
    } catch (e) {
      console.error(`mail: SMTP delivery of outbox message ${id} to ${message.to} failed: ${errorText(e)}`);
      await db('outbox').where({ id }).update({ status: 'failed', error: errorText(e) });
      return { id, status: 'failed' };
    }
  }

  return {
    transport,
    link: (p: string) => `${config.publicUrl.replace(/\/+$/, '')}${p.startsWith('/') ? p : `/${p}`}`,
    send(message) {
      const run = deliver(message).catch((e): SendResult => {
        console.error(`mail: could not record "${message.subject}" to ${message.to}: ${errorText(e)}`);
        return { id: null, status: 'failed' };
      });
      pending.add(run);
      void run.finally(() => pending.delete(run));
      return run;
    },
    async idle() {
      while (pending.size) await Promise.allSettled([...pending]);
    },
  };
}
