// Sends the messages of a committed change. Called after the transaction commits: a mail failure is
// logged and never rolls back the change it reports.
import { sendMessage, type Message } from './transport';

export type Outgoing = Message;

export async function notify(
  messages: Outgoing[],
  log: (s: string) => void = (s) => console.error(s)
): Promise<{ sent: number; failed: number }> {
  let sent = 0;
  let failed = 0;
  for (const m of messages) {
    try {
      await sendMessage(m);
      sent++;
    } catch (e) {
      failed++;
      log(`[isoledger] mail to ${m.to} ('${m.subject}') not sent: ${(e as Error).message}`);
    }
  }
  return { sent, failed };
}
