import { useTranslation } from "react-i18next";
import { data, Form, useNavigation } from "react-router";
import { z } from "zod";
import { Field, Notice, PublicFrame } from "~/components/frame";
import { isLanguage } from "~/lib/i18n";
import { requestPasswordReset } from "~/server/accounts.server";
import { clientAddress, consumeAll, resetRequestsByAccount, resetRequestsByAddress } from "~/server/rate-limit.server";
import type { Route } from "./+types/forgot-password";

export const meta: Route.MetaFunction = () => [{ title: "Reset your password · Chillwright" }];

const ForgotSchema = z.object({ email: z.email().max(200) });

export async function action({ request }: Route.ActionArgs) {
  const parsed = ForgotSchema.safeParse(Object.fromEntries(await request.formData()));
  if (!parsed.success) return data({ sent: false, error: "email" as const }, { status: 400 });
  const email = parsed.data.email.toLowerCase();
  // The answer is the same whether or not the address has an account, and whether or not it was throttled.
  const allowed = await consumeAll([[resetRequestsByAddress, clientAddress(request)], [resetRequestsByAccount, email]]);
  if (allowed) {
    const lang = request.headers.get("accept-language")?.slice(0, 2);
    // Not awaited: the answer must take as long for an unknown address as for a real account.
    requestPasswordReset(email, isLanguage(lang) ? lang : "en").catch((e) => console.error("password reset e-mail failed", e));
  }
  return data({ sent: true, error: null });
}

export default function ForgotPassword({ actionData }: Route.ComponentProps) {
  const { t } = useTranslation();
  const busy = useNavigation().state !== "idle";
  return (
    <PublicFrame title={t("forgot.title")}>
      {actionData?.sent ? (
        <Notice tone="ok">{t("forgot.sent")}</Notice>
      ) : (
        <Form method="post">
          <p className="mb-5">{t("forgot.intro")}</p>
          <Field label={t("signin.email")} name="email" type="email" autoComplete="username" required error={actionData?.error ? t("forms.email") : undefined} />
          <button type="submit" className="btn-primary w-full" disabled={busy}>
            {t("forgot.submit")}
          </button>
        </Form>
      )}
      <p className="mt-6 text-center">
        <a href="/signin" className="font-bold text-glacier underline underline-offset-4">
          {t("forgot.back")}
        </a>
      </p>
    </PublicFrame>
  );
}
