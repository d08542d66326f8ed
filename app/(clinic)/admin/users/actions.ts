"use server";
// Server actions of the users screen. Each checks the session and the permission on the server.
import { revalidatePath } from "next/cache";
import { runAction } from "@/lib/action";
import { db } from "@/db/knex";
import { createUser, setPassword, updateUser } from "@/db/users";
import { userCreate, userPassword, userUpdate } from "@/lib/validation/users";
import { uuid } from "@/lib/validation/common";

export async function createUserAction(input: unknown) {
  return runAction("user.manage", async (user) => {
    const data = userCreate.parse(input);
    const created = await db().transaction((trx) => createUser(trx, user, data));
    revalidatePath("/admin/users");
    return { id: created.id };
  });
}

export async function updateUserAction(id: unknown, input: unknown) {
  return runAction("user.manage", async (user) => {
    const data = userUpdate.parse(input);
    await db().transaction((trx) => updateUser(trx, user, uuid.parse(id), data));
    revalidatePath("/admin/users");
    return null;
  });
}

export async function setPasswordAction(id: unknown, input: unknown) {
  return runAction("user.manage", async (user) => {
    const { password } = userPassword.parse(input);
    await db().transaction((trx) => setPassword(trx, user, uuid.parse(id), password));
    return null;
  });
}
