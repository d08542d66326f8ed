import type { Metadata } from "next";
import { requireUser } from "@/lib/auth/session";
import { can } from "@/lib/auth/permissions";
import { BOOKING_RULES, ENGINE_RULES, RULE_LABELS } from "@/lib/followup/rules";
import { PageTitle } from "@/components/ui/card";
import { BoardClient } from "./board-client";

export const metadata: Metadata = { title: "Deviation board" };

export default async function BoardPage({ searchParams }: { searchParams: Promise<Record<string, string | string[] | undefined>> }) {
  const user = await requireUser("flag.read");
  const sp = await searchParams;
  const nurse = user.role === "nurse";
  const rules = nurse ? [...BOOKING_RULES] : [...ENGINE_RULES, ...Object.keys(RULE_LABELS).filter((r) => !(ENGINE_RULES as readonly string[]).includes(r))];
  const wanted = typeof sp.rule === "string" && rules.includes(sp.rule) ? sp.rule : "";
  return (
    <>
      <PageTitle
        title="Deviation board"
        subtitle={
          nurse
            ? "Flags that need a repeat film booked: overdue films, slower-than-expected shrinking, and episodes still open after their predicted resolution."
            : user.role === "consultant"
              ? "Open flags across your team's episodes. Acknowledge what you have seen; resolve with a note and a plan."
              : "Open flags on your team's episodes. A consultant acknowledges and resolves them."
        }
      />
      <BoardClient
        canResolve={can(user.role, "flag.resolve")}
        showDiaryLink={can(user.role, "booking.write")}
        rules={rules.map((r) => ({ value: r, label: RULE_LABELS[r] ?? r }))}
        initialRule={wanted}
      />
    </>
  );
}
