import { useTranslation } from "react-i18next";
import { data, Form, useNavigation } from "react-router";
import { z } from "zod";
import { Field, Notice } from "~/components/frame";
import { RetireList } from "~/components/retire-list";
import { fieldErrors, text } from "~/lib/forms";
import { createApiToken, listApiTokens, revokeApiToken } from "~/server/api-tokens.server";
import { can, isUuid, notFound, requireRole } from "~/server/guards.server";
import type { Route } from "./+types/site-api-tokens";

export const meta: Route.MetaFunction = () => [{ title: "API tokens · Chillwright" }];

const TokenSchema = z.discriminatedUnion("intent", [
  z.object({ intent: z.literal("create"), name: text().min(1, "forms.required").max(80) }),
  z.object({ intent: z.literal("revoke"), tokenId: z.string().refine(isUuid) }),
]);

export async function loader({ request, params }: Route.LoaderArgs) {
  const { site } = await requireRole(request, can.manageSite, params.siteId);
  return { siteName: site.name, tokens: await listApiTokens(site.id) };
}

export async function action({ request, params }: Route.ActionArgs) {
  const { user, site } = await requireRole(request, can.manageSite, params.siteId);
  const parsed = TokenSchema.safeParse(Object.fromEntries(await request.formData()));
  if (!parsed.success) return data({ token: null, errors: fieldErrors(parsed.error) }, { status: 400 });
  if (parsed.data.intent === "revoke") {
    if (!(await revokeApiToken(user, site, parsed.data.tokenId))) notFound();
    return data({ token: null, errors: {} as Record<string, string> });
  }
  // The token is shown once, in this answer; only its hash is kept.
  return data({ token: await createApiToken(user, site, parsed.data.name), errors: {} as Record<string, string> });
}

export default function SiteApiTokens({ loaderData, actionData }: Route.ComponentProps) {
  const { t } = useTranslation();
  const { siteName, tokens } = loaderData;
  const errors: Record<string, string> = actionData?.errors ?? {};
  const busy = useNavigation().state !== "idle";
  return (
    <div className="grid max-w-3xl gap-6">
      <div>
        <h1 className="text-2xl font-extrabold tracking-tight">{t("apiTokens.title", { site: siteName })}</h1>
        <p className="mt-1 text-lg text-ink-soft">{t("apiTokens.intro")}</p>
      </div>
      {actionData?.token ? (
        <Notice tone="ok">
          <p>{t("apiTokens.created")}</p>
          <code className="mt-2 block rounded-lg bg-white p-3 text-base break-all" data-testid="new-token">
            {actionData.token}
          </code>
        </Notice>
      ) : null}
      <Form method="post" className="card">
        <input type="hidden" name="intent" value="create" />
        <Field label={t("apiTokens.name")} name="name" required placeholder={t("apiTokens.namePlaceholder")} error={errors.name && t(errors.name)} />
        <button type="submit" className="btn-primary" disabled={busy}>
          {t("apiTokens.create")}
        </button>
      </Form>
      {tokens.length > 0 ? (
        <section className="card" aria-labelledby="tokens">
          <h2 id="tokens" className="mb-3 text-lg font-extrabold">
            {t("apiTokens.list")}
          </h2>
          <RetireList items={tokens.map((tk) => ({ id: tk.id, name: tk.name, detail: `cw_${tk.prefix}_…`, lastUsedAt: tk.lastUsedAt }))} intent="revoke" idField="tokenId" buttonLabel={t("apiTokens.revoke")} />
        </section>
      ) : null}
    </div>
  );
}
