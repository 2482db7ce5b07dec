// The local mail sink: an SMTP server on loopback that keeps every message it receives, and a
// loopback HTTP listing of them (GET /messages) that the server's outbox reads.
import { createServer as createHttpServer, type Server } from 'node:http';
import { appendFileSync, existsSync, mkdirSync, readFileSync } from 'node:fs';
import { dirname } from 'node:path';
import { SMTPServer } from 'smtp-server';
import { simpleParser, type AddressObject } from 'mailparser';

export interface StoredMessage {
  to: string[];
  from: string;
  subject: string;
  text: string;
  html: string | null;
  sentAt: string;
}

export interface RunningMailSink {
  smtpUrl: string;
  listUrl: string;
  messages: StoredMessage[];
  stop(): Promise<void>;
}

function addresses(a: AddressObject | AddressObject[] | undefined): string[] {
  if (!a) return [];
  const list = Array.isArray(a) ? a : [a];
  return list.flatMap((x) => x.value.map((v) => v.address ?? '').filter(Boolean));
}

/** file: a JSON-lines file that keeps the messages across restarts (omit for a throwaway sink) */
export async function startMailSink(opts: {
  smtpPort: number;
  httpPort: number;
  file?: string;
}): Promise<RunningMailSink> {
  const messages: StoredMessage[] = [];
  if (opts.file && existsSync(opts.file)) {
    for (const line of readFileSync(opts.file, 'utf8').split('\n'))
      if (line.trim()) messages.push(JSON.parse(line));
  }
  if (opts.file) mkdirSync(dirname(opts.file), { recursive: true });

  const smtp = new SMTPServer({
    authOptional: true,
    disabledCommands: ['STARTTLS', 'AUTH'],
    logger: false,
    size: 5 * 1024 * 1024,
    onData(stream, session, callback) {
      simpleParser(stream)
        .then((parsed) => {
          const envelopeTo = session.envelope.rcptTo.map((r) => r.address);
          const msg: StoredMessage = {
            to: envelopeTo.length ? envelopeTo : addresses(parsed.to),
            from:
              addresses(parsed.from)[0] ??
              (session.envelope.mailFrom ? session.envelope.mailFrom.address : ''),
            subject: parsed.subject ?? '',
            text: parsed.text ?? '',
            html: typeof parsed.html === 'string' ? parsed.html : null,
            sentAt: (parsed.date ?? new Date()).toISOString()
          };
          messages.push(msg);
          if (opts.file) appendFileSync(opts.file, JSON.stringify(msg) + '\n');
          callback();
        })
        .catch((e: Error) => callback(e));
    }
  });
  await new Promise<void>((res, rej) => {
    smtp.on('error', rej);
    smtp.listen(opts.smtpPort, '127.0.0.1', () => res());
  });

  const http: Server = createHttpServer((req, res) => {
    if (req.method === 'GET' && req.url?.startsWith('/messages')) {
      res.writeHead(200, { 'content-type': 'application/json' });
      res.end(JSON.stringify([...messages].reverse()));
      return;
    }
    res.writeHead(404).end();
  });
  await new Promise<void>((res) => http.listen(opts.httpPort, '127.0.0.1', () => res()));

  return {
    smtpUrl: `smtp://127.0.0.1:${opts.smtpPort}`,
    listUrl: `http://127.0.0.1:${opts.httpPort}/messages`,
    messages,
    stop: async () => {
      await new Promise<void>((r) => smtp.close(() => r()));
      await new Promise<void>((r) => http.close(() => r()));
    }
  };
}
