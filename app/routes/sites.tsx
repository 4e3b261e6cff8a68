import { asc, eq } from "drizzle-orm";
import { useTranslation } from "react-i18next";
import { data, Form, redirect } from "react-router";
import { z } from "zod";
import { memberships, sites } from "~db/schema";
import { SelectField } from "~/components/controls";
import { Field, Notice } from "~/components/frame";
import { fieldErrors, text } from "~/lib/forms";
import { ruleSetCodes, ruleSets } from "~/lib/rule-sets";
import { recordAudit } from "~/server/audit.server";
import { db } from "~/server/db.server";
import { can, requireOrgRole, requireUser } from "~/server/guards.server";
import type { Route } from "./+types/sites";

export const meta: Route.MetaFunction = () => [{ title: "Sites · Chillwright" }];

const timeZones = new Set(Intl.supportedValuesOf("timeZone"));
const NewSiteSchema = z.object({
  name: text().min(1, "forms.required").max(120),
  temperatureUnit: z.enum(["F", "C"]),
  timeZone: z.string().refine((tz) => timeZones.has(tz), "settings.badTimeZone"),
  ruleSetCode: z.enum(ruleSetCodes),
});

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request);
  const isAdmin = user.memberships.some((m) => can.manageOrganisation.includes(m.role));
  const all = isAdmin
    ? await db.select({ id: sites.id, name: sites.name, unit: sites.temperatureUnit, timeZone: sites.timeZone }).from(sites).where(eq(sites.organisationId, user.organisationId)).orderBy(asc(sites.name))
    : [];
  return { mine: user.memberships, all, isAdmin, timeZones: isAdmin ? [...timeZones] : [], ruleSets: ruleSets.map((r) => ({ value: r.code, label: r.name })) };
}

export async function action({ request }: Route.ActionArgs) {
  const user = await requireOrgRole(request, can.manageOrganisation);
  const parsed = NewSiteSchema.safeParse(Object.fromEntries(await request.formData()));
  if (!parsed.success) return data({ errors: fieldErrors(parsed.error) }, { status: 400 });
  const site = await db.transaction(async (tx) => {
    const [s] = await tx.insert(sites).values({ organisationId: user.organisationId, ...parsed.data }).returning();
    // Whoever adds a site administers it, so it is never left without someone in charge.
    await tx.insert(memberships).values({ userId: user.id, siteId: s.id, role: "admin" });
    await recordAudit(tx, { actor: { kind: "user", userId: user.id }, organisationId: user.organisationId, siteId: s.id, action: "site.created", entity: "site", entityId: s.id, data: parsed.data });
    return s;
  });
  return redirect(`/sites/${site.id}/settings`);
}

export default function Sites({ loaderData, actionData }: Route.ComponentProps) {
  const { t } = useTranslation();
  const { mine, all, isAdmin, timeZones, ruleSets } = loaderData;
  const errors: Record<string, string> = actionData?.errors ?? {};
  const roleAt = new Map(mine.map((m) => [m.siteId, m.role]));
  const list = isAdmin ? all.map((s) => ({ id: s.id, name: s.name, detail: `°${s.unit} · ${s.timeZone}` })) : mine.map((m) => ({ id: m.siteId, name: m.siteName, detail: "" }));
  return (
    <div className="grid gap-6">
      <h1 className="text-2xl font-extrabold tracking-tight">{t("sites.title")}</h1>
      <ul className="grid gap-3 sm:grid-cols-2">
        {list.map((s) => (
          <li key={s.id} className="card flex items-center justify-between gap-3">
            <div>
              <p className="text-lg font-extrabold">{s.name}</p>
              <p className="text-sm text-ink-soft">
                {s.detail} {roleAt.get(s.id) ? `· ${t(`roles.${roleAt.get(s.id)}`)}` : ""}
              </p>
            </div>
            {roleAt.has(s.id) ? (
              <a className="btn-quiet" href={`/sites/${s.id}`}>
                {t("sites.open")}
              </a>
            ) : null}
          </li>
        ))}
      </ul>
      {isAdmin ? (
        <Form method="post" className="card max-w-2xl">
          <h2 className="mb-4 text-lg font-extrabold">{t("sites.create")}</h2>
          {Object.keys(errors).length ? <Notice tone="error">{t("forms.fixErrors")}</Notice> : null}
          <Field label={t("settings.name")} name="name" required error={errors.name && t(errors.name)} />
          <SelectField label={t("settings.unit")} name="temperatureUnit" defaultValue="F" options={[{ value: "F", label: t("settings.fahrenheit") }, { value: "C", label: t("settings.celsius") }]} />
          <SelectField label={t("settings.timeZone")} name="timeZone" defaultValue="America/Chicago" options={timeZones.map((z) => ({ value: z, label: z }))} error={errors.timeZone && t(errors.timeZone)} />
          <SelectField label={t("settings.ruleSet")} name="ruleSetCode" defaultValue={ruleSets[0].value} options={ruleSets} />
          <button type="submit" className="btn-primary">
            {t("sites.createSubmit")}
          </button>
        </Form>
      ) : null}
    </div>
  );
}
