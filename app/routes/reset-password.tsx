import { useTranslation } from "react-i18next";
import { data, Form, redirect } from "react-router";
import { Field, Notice, PublicFrame } from "~/components/frame";
import { fieldErrors } from "~/lib/forms";
import { NewPasswordSchema } from "~/lib/passwords";
import { findResetToken, resetPassword } from "~/server/accounts.server";
import type { Route } from "./+types/reset-password";

export const meta: Route.MetaFunction = () => [{ title: "Choose a new password · Chillwright" }];

export async function loader({ params }: Route.LoaderArgs) {
  return { valid: !!(await findResetToken(params.token)) };
}

export async function action({ request, params }: Route.ActionArgs) {
  const parsed = NewPasswordSchema.safeParse(Object.fromEntries(await request.formData()));
  if (!parsed.success) return data({ errors: fieldErrors(parsed.error), invalid: false }, { status: 400 });
  if (!(await resetPassword(params.token, parsed.data.password))) return data({ errors: {}, invalid: true }, { status: 400 });
  return redirect("/signin?passwordSet=1");
}

export default function ResetPassword({ loaderData, actionData }: Route.ComponentProps) {
  const { t } = useTranslation();
  const errors: Record<string, string> = actionData?.errors ?? {};
  if (!loaderData.valid || actionData?.invalid) {
    return (
      <PublicFrame title={t("reset.title")}>
        <Notice tone="error">{t("reset.invalid")}</Notice>
        <a href="/forgot-password" className="btn-primary w-full">
          {t("reset.again")}
        </a>
      </PublicFrame>
    );
  }
  return (
    <PublicFrame title={t("reset.title")}>
      <Form method="post">
        <Field label={t("reset.password")} name="password" type="password" autoComplete="new-password" required minLength={10} hint={t("password.rules")} error={errors.password && t(errors.password)} />
        <Field label={t("reset.confirm")} name="confirm" type="password" autoComplete="new-password" required error={errors.confirm && t(errors.confirm)} />
        <button type="submit" className="btn-primary w-full">
          {t("reset.submit")}
        </button>
      </Form>
    </PublicFrame>
  );
}
