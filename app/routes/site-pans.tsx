import { and, asc, eq } from "drizzle-orm";
import { useTranslation } from "react-i18next";
import { data, Form, Link, useNavigation } from "react-router";
import { z } from "zod";
import { panTypes } from "~db/schema";
import { SelectField } from "~/components/controls";
import { Field, Notice } from "~/components/frame";
import { panMaterialIds } from "~/lib/engine/equipment";
import { fieldErrors, text } from "~/lib/forms";
import { recordAudit } from "~/server/audit.server";
import { db } from "~/server/db.server";
import { can, isUuid, notFound, requireRole } from "~/server/guards.server";
import type { Route } from "./+types/site-pans";

export const meta: Route.MetaFunction = () => [{ title: "Pans · Chillwright" }];

const mm = (min: number, max: number) => z.coerce.number({ error: "forms.number" }).int("forms.number").min(min, "forms.number").max(max, "forms.number");
const limits = { lengthMm: [50, 1200], widthMm: [50, 1200], depthMm: [10, 400] } as const;

const PanActionSchema = z.discriminatedUnion("intent", [
  z.object({
    intent: z.literal("add"),
    name: text().min(1, "forms.required").max(80),
    lengthMm: mm(...limits.lengthMm),
    widthMm: mm(...limits.widthMm),
    depthMm: mm(...limits.depthMm),
    material: z.enum(panMaterialIds),
  }),
  z.object({ intent: z.literal("retire"), panTypeId: z.string().refine(isUuid) }),
]);

export async function loader({ request, params }: Route.LoaderArgs) {
  const { site } = await requireRole(request, can.manageSite, params.siteId);
  const pans = await db.select().from(panTypes).where(and(eq(panTypes.siteId, site.id), eq(panTypes.active, true))).orderBy(asc(panTypes.name));
  return { siteName: site.name, pans: pans.map(({ id, name, lengthMm, widthMm, depthMm, material }) => ({ id, name, lengthMm, widthMm, depthMm, material })) };
}

export async function action({ request, params }: Route.ActionArgs) {
  const { user, site } = await requireRole(request, can.manageSite, params.siteId);
  const parsed = PanActionSchema.safeParse(Object.fromEntries(await request.formData()));
  if (!parsed.success) return data({ ok: false, errors: fieldErrors(parsed.error) }, { status: 400 });
  const actor = { kind: "user" as const, userId: user.id };
  const input = parsed.data;
  if (input.intent === "retire") {
    const done = await db.transaction(async (tx) => {
      const [p] = await tx.update(panTypes).set({ active: false }).where(and(eq(panTypes.id, input.panTypeId), eq(panTypes.siteId, site.id), eq(panTypes.active, true))).returning({ id: panTypes.id });
      if (p) await recordAudit(tx, { actor, organisationId: site.organisationId, siteId: site.id, action: "pan_type.retired", entity: "pan_type", entityId: p.id });
      return !!p;
    });
    if (!done) notFound();
    return data({ ok: true, errors: {} as Record<string, string> });
  }
  const { intent: _i, ...fields } = input;
  await db.transaction(async (tx) => {
    const [p] = await tx.insert(panTypes).values({ siteId: site.id, ...fields }).returning({ id: panTypes.id });
    await recordAudit(tx, { actor, organisationId: site.organisationId, siteId: site.id, action: "pan_type.created", entity: "pan_type", entityId: p.id, data: fields });
  });
  return data({ ok: true, errors: {} as Record<string, string> });
}

export default function SitePans({ loaderData, actionData }: Route.ComponentProps) {
  const { t } = useTranslation();
  const { siteName, pans } = loaderData;
  const errors: Record<string, string> = actionData?.errors ?? {};
  const busy = useNavigation().state !== "idle";
  const num = (k: keyof typeof limits) => errors[k] && t(errors[k], { min: limits[k][0], max: limits[k][1] });
  return (
    <div className="grid max-w-3xl gap-6">
      <div>
        <h1 className="text-2xl font-extrabold tracking-tight">{t("pans.title", { site: siteName })}</h1>
        <p className="mt-1 text-lg text-ink-soft">{t("pans.intro")}</p>
        <Link to="../library" relative="path" className="font-bold text-glacier underline underline-offset-4">
          ← {t("nav.library")}
        </Link>
      </div>
      {actionData?.ok ? <Notice tone="ok">{t("settings.saved")}</Notice> : null}
      {pans.length ? (
        <ul className="grid gap-2">
          {pans.map((p) => (
            <li key={p.id} className="card flex flex-wrap items-center justify-between gap-3 py-4">
              <span>
                <span className="font-bold">{p.name}</span> · {p.lengthMm} × {p.widthMm} × {p.depthMm} mm
              </span>
              <Form method="post">
                <input type="hidden" name="intent" value="retire" />
                <input type="hidden" name="panTypeId" value={p.id} />
                <button type="submit" className="btn-quiet min-h-12 px-3 text-sm" disabled={busy}>
                  {t("pans.retire")}
                </button>
              </Form>
            </li>
          ))}
        </ul>
      ) : null}
      <Form method="post" className="card">
        <h2 className="mb-4 text-lg font-extrabold">{t("pans.add")}</h2>
        <input type="hidden" name="intent" value="add" />
        <Field label={t("pans.name")} name="name" required error={errors.name && t(errors.name)} />
        <div className="grid gap-x-4 sm:grid-cols-3">
          <Field label={t("pans.length")} name="lengthMm" inputMode="numeric" required error={num("lengthMm")} />
          <Field label={t("pans.width")} name="widthMm" inputMode="numeric" required error={num("widthMm")} />
          <Field label={t("pans.depth")} name="depthMm" inputMode="numeric" required error={num("depthMm")} />
        </div>
        <SelectField label={t("pans.material")} name="material" defaultValue="stainless-steel" options={panMaterialIds.map((m) => ({ value: m, label: t(`pans.materials.${m}`, { defaultValue: m }) }))} />
        <button type="submit" className="btn-primary" disabled={busy}>
          {t("pans.addSubmit")}
        </button>
      </Form>
    </div>
  );
}
