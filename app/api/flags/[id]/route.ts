// POST { action: "acknowledge" } or { action: "resolve", note, plan }: a consultant's decision on a flag, audited.
import { apiRoute, parseJson } from "@/lib/api";
import { db } from "@/db/knex";
import { acknowledgeFlag, resolveFlag } from "@/db/flags";
import { flagAction } from "@/lib/validation/flags";
import { uuid } from "@/lib/validation/common";

export const POST = apiRoute<{ id: string }>("flag.resolve", async ({ req, user, params }) => {
  const id = uuid.parse(params.id);
  const input = await parseJson(req, flagAction);
  const flag = await db().transaction((trx) =>
    input.action === "acknowledge" ? acknowledgeFlag(trx, user, id) : resolveFlag(trx, user, id, { note: input.note, plan: input.plan }),
  );
  return { flag };
});
