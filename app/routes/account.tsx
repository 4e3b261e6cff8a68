import { eq, sql } from "drizzle-orm";
import { useTranslation } from "react-i18next";
import { data, Form, redirect } from "react-router";
import { z } from "zod";
import { users } from "~db/schema";
import { SelectField } from "~/components/controls";
import { Field, Notice } from "~/components/frame";
import { fieldErrors } from "~/lib/forms";
import { languageNames, languages, LANGUAGE_COOKIE } from "~/lib/i18n";
import { NewPasswordSchema, PinSchema } from "~/lib/passwords";
import { recordAudit } from "~/server/audit.server";
import { hashSecret, verifySecret } from "~/server/crypto.server";
import { db } from "~/server/db.server";
import { clearSessionCookie } from "~/server/auth.server";
import { requireUser } from "~/server/guards.server";
import type { Route } from "./+types/account";

export const meta: Route.MetaFunction = () => [{ title: "My account · Chillwright" }];

const AccountSchema = z.discriminatedUnion("intent", [
  z.object({ intent: z.literal("language"), language: z.enum(languages) }),
  NewPasswordSchema.safeExtend({ intent: z.literal("password"), current: z.string().min(1, "forms.required") }),
  z.object({ intent: z.literal("pin"), pin: PinSchema }),
]);

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request);
  return { name: user.name, email: user.email, language: user.language, memberships: user.memberships };
}

export async function action({ request }: Route.ActionArgs) {
  const user = await requireUser(request);
  const form = Object.fromEntries(await request.formData());
  const parsed = AccountSchema.safeParse(form);
  if (!parsed.success) return data({ ok: false, intent: String(form.intent ?? ""), errors: fieldErrors(parsed.error) }, { status: 400 });
  const input = parsed.data;
  const audit = (action: string, extra?: Record<string, unknown>) => ({
    actor: { kind: "user" as const, userId: user.id },
    organisationId: user.organisationId,
    action,
    entity: "user",
    entityId: user.id,
    data: extra,
  });
  const headers = new Headers();
  if (input.intent === "language") {
    await db.transaction(async (tx) => {
      await tx.update(users).set({ language: input.language }).where(eq(users.id, user.id));
      await recordAudit(tx, audit("user.language_changed", { language: input.language }));
    });
    headers.append("Set-Cookie", `${LANGUAGE_COOKIE}=${input.language}; Path=/; SameSite=Lax; Max-Age=31536000`);
  } else if (input.intent === "password") {
    const [row] = await db.select({ hash: users.passwordHash }).from(users).where(eq(users.id, user.id));
    if (!(await verifySecret(row?.hash, input.current))) {
      return data({ ok: false, intent: input.intent, errors: { current: "account.wrongCurrent" } as Record<string, string> }, { status: 400 });
    }
    const passwordHash = await hashSecret(input.password);
    await db.transaction(async (tx) => {
      // Every session ends, this one too: the person signs in again with the new password.
      await tx.update(users).set({ passwordHash, sessionVersion: sql`${users.sessionVersion} + 1` }).where(eq(users.id, user.id));
      await recordAudit(tx, audit("user.password_changed"));
    });
    return redirect("/signin?passwordSet=1", { headers: { "Set-Cookie": clearSessionCookie() } });
  } else {
    const pinHash = await hashSecret(input.pin);
    await db.transaction(async (tx) => {
      await tx.update(users).set({ pinHash, pinFailedAttempts: 0, pinLockedAt: null }).where(eq(users.id, user.id));
      await recordAudit(tx, audit("user.pin_set"));
    });
  }
  return data({ ok: true, intent: input.intent, errors: {} as Record<string, string> }, { headers });
}

export default function Account({ loaderData, actionData }: Route.ComponentProps) {
  const { t } = useTranslation();
  const { name, email, language, memberships } = loaderData;
  const errorsFor = (intent: string): Record<string, string> => (actionData?.intent === intent ? actionData.errors : {});
  const saved = (intent: string) => (actionData?.ok && actionData.intent === intent ? <Notice tone="ok">{t("account.saved")}</Notice> : null);
  const pw = errorsFor("password");
  return (
    <div className="grid max-w-2xl gap-6">
      <div>
        <h1 className="text-2xl font-extrabold tracking-tight">{t("account.title")}</h1>
        <p className="text-lg text-ink-soft">
          {name} · {email}
        </p>
      </div>
      <section className="card">
        <h2 className="mb-3 text-lg font-extrabold">{t("account.memberships")}</h2>
        <ul className="grid gap-2">
          {memberships.map((m) => (
            <li key={m.siteId} className="rounded-xl bg-frost px-4 py-2">
              <span className="font-bold">{m.siteName}</span> · {t(`roles.${m.role}`)}
            </li>
          ))}
        </ul>
      </section>
      <Form method="post" className="card">
        {saved("language")}
        <input type="hidden" name="intent" value="language" />
        <SelectField label={t("account.language")} name="language" defaultValue={language} options={languages.map((l) => ({ value: l, label: languageNames[l] }))} />
        <button type="submit" className="btn-primary">
          {t("account.saveLanguage")}
        </button>
      </Form>
      <Form method="post" className="card">
        <h2 className="mb-4 text-lg font-extrabold">{t("account.changePassword")}</h2>
        {saved("password")}
        <input type="hidden" name="intent" value="password" />
        <Field label={t("account.current")} name="current" type="password" autoComplete="current-password" required error={pw.current && t(pw.current)} />
        <Field label={t("reset.password")} name="password" type="password" autoComplete="new-password" required minLength={10} hint={t("password.rules")} error={pw.password && t(pw.password)} />
        <Field label={t("reset.confirm")} name="confirm" type="password" autoComplete="new-password" required error={pw.confirm && t(pw.confirm)} />
        <button type="submit" className="btn-primary">
          {t("account.changePassword")}
        </button>
      </Form>
      <Form method="post" className="card">
        <h2 className="mb-4 text-lg font-extrabold">{t("account.myPin")}</h2>
        {saved("pin")}
        <input type="hidden" name="intent" value="pin" />
        <Field label={t("team.newPin")} name="pin" type="password" inputMode="numeric" autoComplete="off" required error={errorsFor("pin").pin && t(errorsFor("pin").pin)} />
        <button type="submit" className="btn-primary">
          {t("team.setPin")}
        </button>
      </Form>
    </div>
  );
}
