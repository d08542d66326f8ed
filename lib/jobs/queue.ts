// Putting messages on the mail.send queue. The messages table is the outbox: a message row is
// written in the same transaction as the change that causes it, and the queue job only says
// "send this one". If putting the job fails, the reminders sweep finds the untried row and queues
// it again, so nothing is lost; delivery checks the row's status, so a duplicate job sends nothing.
import "server-only";
import type { Knex } from "knex";
import type { Trx } from "@/db/knex";
import { getBoss } from "./boss";
import { QUEUES } from "./config";

export interface MailJob {
  messageId: string;
}

/** Best effort: logs and returns false when the queue is unreachable (the sweep retries later). */
export async function enqueueMail(messageIds: readonly string[], opts: { singletonHours?: number } = {}): Promise<boolean> {
  if (messageIds.length === 0) return true;
  try {
    const boss = await getBoss();
    for (const messageId of messageIds) {
      const data: MailJob = { messageId };
      await boss.send(QUEUES.mailSend, data, opts.singletonHours ? { singletonKey: messageId, singletonHours: opts.singletonHours } : {});
    }
    return true;
  } catch (err) {
    console.error("[jobs] could not queue mail:", err instanceof Error ? err.message : "unknown error");
    return false;
  }
}

function isTransaction(trx: Trx): trx is Knex.Transaction {
  return (trx as Knex.Transaction).isTransaction === true && "executionPromise" in trx;
}

/** Queues the messages once the caller's transaction has committed (at once when there is none). */
export function enqueueMailAfterCommit(trx: Trx, messageIds: readonly string[]): void {
  if (messageIds.length === 0) return;
  if (isTransaction(trx)) {
    trx.executionPromise.then(
      () => void enqueueMail(messageIds),
      () => undefined, // rolled back: the rows are gone, nothing to send
    );
  } else {
    void enqueueMail(messageIds);
  }
}
