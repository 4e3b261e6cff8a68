import { useTranslation } from "react-i18next";
import { data, Form, redirect } from "react-router";
import { z } from "zod";
import { Field, Notice, PublicFrame } from "~/components/frame";
import { fieldErrors, text } from "~/lib/forms";
import { NewPasswordSchema } from "~/lib/passwords";
import { acceptInvitation, findInvitation } from "~/server/accounts.server";
import type { Route } from "./+types/invite";

export const meta: Route.MetaFunction = () => [{ title: "Invitation · Chillwright" }];

const AcceptSchema = NewPasswordSchema.and(z.object({ name: text().min(1, "forms.required").max(120) }));

export async function loader({ params }: Route.LoaderArgs) {
  const inv = await findInvitation(params.token);
  if (!inv) return { invitation: null };
  const { email, name, role, siteName, organisationName, inviterName } = inv;
  return { invitation: { email, name, role, siteName, organisationName, inviterName } };
}

export async function action({ request, params }: Route.ActionArgs) {
  const parsed = AcceptSchema.safeParse(Object.fromEntries(await request.formData()));
  if (!parsed.success) return data({ errors: fieldErrors(parsed.error), invalid: false }, { status: 400 });
  const accepted = await acceptInvitation(params.token, { name: parsed.data.name, password: parsed.data.password });
  if (!accepted) return data({ errors: {}, invalid: true }, { status: 400 });
  return redirect("/signin?passwordSet=1");
}

export default function Invite({ loaderData, actionData }: Route.ComponentProps) {
  const { t } = useTranslation();
  const inv = loaderData.invitation;
  const errors: Record<string, string> = actionData?.errors ?? {};
  if (!inv || actionData?.invalid) {
    return (
      <PublicFrame title={t("invite.title", { org: "Chillwright" })}>
        <Notice tone="error">{t("invite.invalid")}</Notice>
      </PublicFrame>
    );
  }
  return (
    <PublicFrame title={t("invite.title", { org: inv.organisationName })}>
      <p className="mb-5">{t("invite.intro", { inviter: inv.inviterName, role: t(`roles.${inv.role}`), site: inv.siteName })}</p>
      <Form method="post">
        <Field label={t("signin.email")} name="email-shown" value={inv.email} readOnly autoComplete="username" />
        <Field label={t("invite.name")} name="name" defaultValue={inv.name} required autoComplete="name" error={errors.name && t(errors.name)} />
        <Field label={t("reset.password")} name="password" type="password" autoComplete="new-password" required minLength={10} hint={t("password.rules")} error={errors.password && t(errors.password)} />
        <Field label={t("reset.confirm")} name="confirm" type="password" autoComplete="new-password" required error={errors.confirm && t(errors.confirm)} />
        <button type="submit" className="btn-primary w-full">
          {t("invite.submit")}
        </button>
      </Form>
    </PublicFrame>
  );
}
