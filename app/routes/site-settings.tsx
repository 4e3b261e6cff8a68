import { eq } from "drizzle-orm";
import { useTranslation } from "react-i18next";
import { data, Form, Link, useNavigation } from "react-router";
import { z } from "zod";
import { sites } from "~db/schema";
import { CheckboxField, SelectField } from "~/components/controls";
import { Field, Notice } from "~/components/frame";
import { fieldErrors, text } from "~/lib/forms";
import { ruleSetCodes, ruleSets } from "~/lib/rule-sets";
import { recordAudit } from "~/server/audit.server";
import { db } from "~/server/db.server";
import { can, requireRole } from "~/server/guards.server";
import type { Route } from "./+types/site-settings";

export const meta: Route.MetaFunction = () => [{ title: "Site settings · Chillwright" }];

const timeZones = new Set(Intl.supportedValuesOf("timeZone"));
const wholeNumber = (min: number, max: number) =>
  z.coerce.number({ error: "forms.number" }).int("forms.number").min(min, "forms.number").max(max, "forms.number");

const SiteSettingsSchema = z.object({
  name: text().min(1, "forms.required").max(120),
  temperatureUnit: z.enum(["F", "C"]),
  timeZone: z.string().refine((tz) => timeZones.has(tz), "settings.badTimeZone"),
  ruleSetCode: z.enum(ruleSetCodes),
  readingIntervalMinutes: wholeNumber(5, 240),
  overdueGraceMinutes: wholeNumber(0, 120),
  retentionDays: wholeNumber(365, 3650),
  allowSelfVerification: z.literal("true").optional().transform((v) => v === "true"),
  weeklyRecordsWeekday: z.coerce.number({ error: "weeklyRecords.badWeekday" }).int("weeklyRecords.badWeekday").min(1, "weeklyRecords.badWeekday").max(7, "weeklyRecords.badWeekday").optional(),
  weeklyRecordsHour: z.coerce.number({ error: "weeklyRecords.badHour" }).int("weeklyRecords.badHour").min(0, "weeklyRecords.badHour").max(23, "weeklyRecords.badHour").optional(),
});

const numberLimits = { readingIntervalMinutes: [5, 240], overdueGraceMinutes: [0, 120], retentionDays: [365, 3650] } as const;

export async function loader({ request, params }: Route.LoaderArgs) {
  const { site } = await requireRole(request, can.manageSite, params.siteId);
  return {
    site: {
      name: site.name,
      temperatureUnit: site.temperatureUnit,
      timeZone: site.timeZone,
      ruleSetCode: site.ruleSetCode,
      readingIntervalMinutes: site.readingIntervalMinutes,
      overdueGraceMinutes: site.overdueGraceMinutes,
      retentionDays: site.retentionDays,
      allowSelfVerification: site.allowSelfVerification,
      weeklyRecordsWeekday: site.weeklyRecordsWeekday,
      weeklyRecordsHour: site.weeklyRecordsHour,
    },
    timeZones: [...timeZones],
    ruleSets: ruleSets.map((r) => ({ value: r.code, label: r.name })),
  };
}

export async function action({ request, params }: Route.ActionArgs) {
  const { user, site } = await requireRole(request, can.manageSite, params.siteId);
  const parsed = SiteSettingsSchema.safeParse(Object.fromEntries(await request.formData()));
  if (!parsed.success) return data({ ok: false, errors: fieldErrors(parsed.error) }, { status: 400 });
  // A form without the weekly fields (an older page) leaves them as they are.
  const changes = Object.fromEntries(Object.entries(parsed.data).filter(([, v]) => v !== undefined)) as typeof parsed.data;
  const before = Object.fromEntries(Object.keys(changes).map((k) => [k, site[k as keyof typeof site]]));
  await db.transaction(async (tx) => {
    await tx.update(sites).set(changes).where(eq(sites.id, site.id));
    await recordAudit(tx, {
      actor: { kind: "user", userId: user.id },
      organisationId: site.organisationId,
      siteId: site.id,
      action: "site.updated",
      entity: "site",
      entityId: site.id,
      data: { before, after: changes },
    });
  });
  return data({ ok: true, errors: {} as Record<string, string> });
}

export default function SiteSettings({ loaderData, actionData }: Route.ComponentProps) {
  const { t } = useTranslation();
  const { site, timeZones, ruleSets } = loaderData;
  const errors: Record<string, string> = actionData?.errors ?? {};
  const busy = useNavigation().state !== "idle";
  const num = (name: keyof typeof numberLimits) =>
    errors[name] && t(errors[name], { min: numberLimits[name][0], max: numberLimits[name][1] });
  return (
    <div className="max-w-2xl">
      <h1 className="mb-6 text-2xl font-extrabold tracking-tight">{t("settings.title")}</h1>
      {actionData?.ok ? <Notice tone="ok">{t("settings.saved")}</Notice> : null}
      {actionData && !actionData.ok ? <Notice tone="error">{t("forms.fixErrors")}</Notice> : null}
      <Form method="post" className="card">
        <Field label={t("settings.name")} name="name" defaultValue={site.name} required error={errors.name && t(errors.name)} />
        <SelectField
          label={t("settings.unit")}
          name="temperatureUnit"
          defaultValue={site.temperatureUnit}
          options={[
            { value: "F", label: t("settings.fahrenheit") },
            { value: "C", label: t("settings.celsius") },
          ]}
        />
        <SelectField label={t("settings.timeZone")} name="timeZone" defaultValue={site.timeZone} options={timeZones.map((z) => ({ value: z, label: z }))} error={errors.timeZone && t(errors.timeZone)} />
        <SelectField label={t("settings.ruleSet")} name="ruleSetCode" defaultValue={site.ruleSetCode} options={ruleSets} />
        <div className="grid gap-x-4 sm:grid-cols-3">
          <Field label={t("settings.interval")} name="readingIntervalMinutes" type="number" inputMode="numeric" defaultValue={site.readingIntervalMinutes} error={num("readingIntervalMinutes")} />
          <Field label={t("settings.grace")} name="overdueGraceMinutes" type="number" inputMode="numeric" defaultValue={site.overdueGraceMinutes} error={num("overdueGraceMinutes")} />
          <Field label={t("settings.retention")} name="retentionDays" type="number" inputMode="numeric" defaultValue={site.retentionDays} error={num("retentionDays")} />
        </div>
        <CheckboxField label={t("settings.selfVerification")} name="allowSelfVerification" defaultChecked={site.allowSelfVerification} />
        <fieldset className="mb-4">
          <legend className="mb-1 font-extrabold">{t("weeklyRecords.settingsTitle")}</legend>
          <p className="mb-3 text-sm text-ink-soft">{t("weeklyRecords.help")}</p>
          <div className="grid gap-x-4 sm:grid-cols-2">
            <SelectField
              label={t("weeklyRecords.weekday")}
              name="weeklyRecordsWeekday"
              defaultValue={String(site.weeklyRecordsWeekday)}
              options={["1", "2", "3", "4", "5", "6", "7"].map((d) => ({ value: d, label: t(`weeklyRecords.weekdays.${d}`) }))}
              error={errors.weeklyRecordsWeekday && t(errors.weeklyRecordsWeekday)}
            />
            <Field label={t("weeklyRecords.hour")} name="weeklyRecordsHour" type="number" inputMode="numeric" defaultValue={site.weeklyRecordsHour} error={errors.weeklyRecordsHour && t(errors.weeklyRecordsHour)} />
          </div>
        </fieldset>
        <button type="submit" className="btn-primary" disabled={busy}>
          {t("settings.save")}
        </button>
      </Form>
      <p className="mt-6">
        <Link to="../api-tokens" relative="path" className="font-bold text-glacier underline underline-offset-4">
          {t("apiTokens.link")}
        </Link>
      </p>
    </div>
  );
}
