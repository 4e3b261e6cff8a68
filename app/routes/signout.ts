import { redirect } from "react-router";
import { recordAudit } from "~/server/audit.server";
import { clearSessionCookie } from "~/server/auth.server";
import { db } from "~/server/db.server";
import { getUser } from "~/server/guards.server";
import type { Route } from "./+types/signout";

export async function action({ request }: Route.ActionArgs) {
  const user = await getUser(request);
  if (user) {
    await recordAudit(db, {
      actor: { kind: "user", userId: user.id },
      organisationId: user.organisationId,
      action: "user.signed_out",
      entity: "user",
      entityId: user.id,
    });
  }
  return redirect("/signin?signedOut=1", { headers: { "Set-Cookie": clearSessionCookie() } });
}

export const loader = () => redirect("/");
