// The fate of a booking's latest message, in a few words (the send log has the detail).
import { Tag } from "@/components/ui/card";

const LABELS: Record<string, string> = {
  "booking-confirmation": "Confirmation",
  "booking-moved": "New-time note",
  "booking-cancelled": "Cancellation note",
  "booking-reminder": "Reminder",
  "flag-notice": "Flag notice",
};

export function MessageTag({ message }: { message: { template: string; status: string; lastError: string | null } | null }) {
  if (!message) return <span className="text-xs text-ink-soft">No e-mail yet</span>;
  const what = LABELS[message.template] ?? message.template;
  switch (message.status) {
    case "sent":
      return <Tag tone="good">{what} e-mailed</Tag>;
    case "queued":
      return <Tag tone="info">{what} waiting to send</Tag>;
    case "failed":
      return (
        <span className="inline-flex flex-col gap-0.5">
          <Tag tone="alarm">{what} failed</Tag>
          {message.lastError ? <span className="text-xs text-rust-ink">{message.lastError}</span> : null}
        </span>
      );
    default:
      return (
        <span className="inline-flex flex-col gap-0.5">
          <Tag tone="watch">{what} not e-mailed</Tag>
          {message.lastError ? <span className="text-xs text-ink-soft">{message.lastError} Tell the patient by phone or letter.</span> : null}
        </span>
      );
  }
}
