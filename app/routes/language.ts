import { eq } from "drizzle-orm";
import { redirect } from "react-router";
import { z } from "zod";
import { users } from "~db/schema";
import { languages, LANGUAGE_COOKIE } from "~/lib/i18n";
import { recordAudit } from "~/server/audit.server";
import { db } from "~/server/db.server";
import { getUser } from "~/server/guards.server";
import type { Route } from "./+types/language";

const LanguageSchema = z.object({
  lang: z.enum(languages),
  // Only paths on this site: never an open redirect.
  back: z.string().regex(/^\/(?![\/\\])[\x20-\x7e]*$/).catch("/"),
});

// The quick switch: remembered on this device, and saved as the signed-in user's setting.
export async function action({ request }: Route.ActionArgs) {
  const parsed = LanguageSchema.safeParse(Object.fromEntries(await request.formData()));
  if (!parsed.success) return new Response("Unknown language", { status: 400 });
  const { lang, back } = parsed.data;
  const user = await getUser(request);
  if (user && user.language !== lang) {
    await db.transaction(async (tx) => {
      await tx.update(users).set({ language: lang }).where(eq(users.id, user.id));
      await recordAudit(tx, {
        actor: { kind: "user", userId: user.id },
        organisationId: user.organisationId,
        action: "user.language_changed",
        entity: "user",
        entityId: user.id,
        data: { language: lang },
      });
    });
  }
  return redirect(back, { headers: { "Set-Cookie": `${LANGUAGE_COOKIE}=${lang}; Path=/; SameSite=Lax; Max-Age=31536000` } });
}

export const loader = () => redirect("/");
