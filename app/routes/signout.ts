import { eq, sql } from "drizzle-orm";
import { redirect } from "react-router";
import { users } from "~db/schema";
import { recordAudit } from "~/server/audit.server";
import { clearSessionCookie } from "~/server/auth.server";
import { db } from "~/server/db.server";
import { getUser } from "~/server/guards.server";
import type { Route } from "./+types/signout";

export async function action({ request }: Route.ActionArgs) {
  const user = await getUser(request);
  if (user) {
    // Signing out ends every session of this account: a JWT cannot be recalled one by one.
    await db.transaction(async (tx) => {
      await tx.update(users).set({ sessionVersion: sql`${users.sessionVersion} + 1` }).where(eq(users.id, user.id));
      await recordAudit(tx, {
        actor: { kind: "user", userId: user.id },
        organisationId: user.organisationId,
        action: "user.signed_out",
        entity: "user",
        entityId: user.id,
      });
    });
  }
  return redirect("/signin?signedOut=1", { headers: { "Set-Cookie": clearSessionCookie() } });
}

export const loader = () => redirect("/");
