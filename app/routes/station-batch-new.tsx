import { and, asc, eq } from "drizzle-orm";
import { randomUUID } from "node:crypto";
import { useTranslation } from "react-i18next";
import { data, Form, Link, redirect, useNavigation } from "react-router";
import { equipment, panTypes, products } from "~db/schema";
import { CheckboxField, SelectField } from "~/components/controls";
import { Field, Notice } from "~/components/frame";
import { TemperatureKeypad } from "~/components/temp-keypad";
import { coolingMethods, panSizes } from "~/lib/engine/equipment";
import { StartBatchSchema, startBatch } from "~/server/batches.server";
import { db } from "~/server/db.server";
import { requireStationCook } from "~/server/station-entry.server";
import type { Route } from "./+types/station-batch-new";

export const meta: Route.MetaFunction = () => [{ title: "Start a batch · Chillwright" }];

export async function loader({ request }: Route.LoaderArgs) {
  const { site, cook } = await requireStationCook(request);
  const [library, kit, own] = await Promise.all([
    db.select().from(products).where(and(eq(products.siteId, site.id), eq(products.active, true))).orderBy(asc(products.name)),
    db.select().from(equipment).where(and(eq(equipment.siteId, site.id), eq(equipment.active, true))).orderBy(asc(equipment.name)),
    db.select().from(panTypes).where(and(eq(panTypes.siteId, site.id), eq(panTypes.active, true))).orderBy(asc(panTypes.name)),
  ]);
  return {
    cook: cook.name,
    unit: site.temperatureUnit,
    clientId: randomUUID(),
    products: library.map((p) => ({ id: p.id, name: p.name, panSize: p.defaultPanSize, panDepthMm: p.defaultPanDepthMm, fillDepthMm: p.defaultFillDepthMm, method: p.defaultMethod })),
    equipment: kit.map((e) => ({ id: e.id, name: e.name, method: e.method })),
    pans: [...panSizes.map((p) => ({ id: p.id, name: p.name, depths: p.depthsMm })), ...own.map((p) => ({ id: `custom:${p.id}`, name: `${p.name} (${p.lengthMm} × ${p.widthMm} mm)`, depths: [p.depthMm] }))],
    methods: coolingMethods.map((m) => ({ id: m.id, name: m.name })),
  };
}

const num = (v: FormDataEntryValue | null) => (v === null || v === "" ? undefined : Number(String(v).replace(",", ".")));

export async function action({ request }: Route.ActionArgs) {
  const { site, entrant } = await requireStationCook(request);
  const f = await request.formData();
  const equipmentId = f.get("equipmentId");
  const input = {
    clientId: f.get("clientId"),
    productId: f.get("productId"),
    lotCode: f.get("lotCode"),
    quantityKg: num(f.get("quantityKg")),
    pan: { size: f.get("panSize"), depthMm: num(f.get("panDepthMm")), count: num(f.get("panCount")), fillDepthMm: num(f.get("fillDepthMm")) },
    lid: f.get("lid") === "true",
    method: f.get("method"),
    equipmentId: equipmentId ? equipmentId : undefined,
    start: { value: num(f.get("startValue")), unit: site.temperatureUnit, takenAt: f.get("startTakenAtIso") || undefined },
  };
  const parsed = StartBatchSchema.safeParse(input);
  if (!parsed.success) {
    const errors: Record<string, string> = {};
    for (const i of parsed.error.issues) errors[i.path.join(".")] ??= i.message;
    return data({ errors }, { status: 400 });
  }
  const result = await startBatch(site, entrant, parsed.data);
  if (!result.ok) return data({ errors: result.errors }, { status: result.status });
  return redirect(`/station/batches/${result.value.id}${result.warnings.length ? `?warn=${result.warnings.join(",")}` : ""}`);
}

export default function StartBatch({ loaderData, actionData }: Route.ComponentProps) {
  const { t } = useTranslation();
  const { cook, unit, clientId, products: library, equipment: kit, pans, methods } = loaderData;
  const errors: Record<string, string> = actionData?.errors ?? {};
  const busy = useNavigation().state !== "idle";
  const first = library[0];
  const depthOptions = [...new Set(pans.flatMap((p) => p.depths))].sort((a, b) => a - b);
  return (
    <main className="mx-auto w-full max-w-5xl px-4 py-6">
      <div className="mb-4 flex items-center justify-between gap-3">
        <h1 className="text-2xl font-extrabold">{t("batch.startTitle")}</h1>
        <Link to="/station" className="btn-quiet">
          ← {t("station.back")}
        </Link>
      </div>
      <p className="mb-4 text-ink-soft">{t("station.loggedInAs", { name: cook })}</p>
      {Object.keys(errors).length ? <Notice tone="error">{t("forms.fixErrors")}</Notice> : null}
      <Form
        method="post"
        className="grid gap-6 lg:grid-cols-[minmax(0,1fr)_26rem]"
        onSubmit={(e) => {
          // The tablet's clock and zone are the kitchen's: send the time as an instant.
          const form = e.currentTarget;
          const local = (form.elements.namedItem("startTakenAt") as HTMLInputElement | null)?.value;
          (form.elements.namedItem("startTakenAtIso") as HTMLInputElement).value = local ? new Date(local).toISOString() : "";
        }}
      >
        <input type="hidden" name="clientId" value={clientId} />
        <div className="card">
          <SelectField label={t("batch.product")} name="productId" defaultValue={first?.id} options={library.map((p) => ({ value: p.id, label: p.name }))} error={errors.productId} />
          <div className="grid gap-x-4 sm:grid-cols-2">
            <Field label={t("batch.lotCode")} name="lotCode" required error={errors.lotCode} autoComplete="off" />
            <Field label={t("batch.quantityKg")} name="quantityKg" inputMode="decimal" error={errors.quantityKg} />
          </div>
          <div className="grid gap-x-4 sm:grid-cols-2">
            <SelectField label={t("batch.panSize")} name="panSize" defaultValue={first?.panSize ?? "gn-1/1"} options={pans.map((p) => ({ value: p.id, label: p.name }))} error={errors["pan.size"]} />
            <SelectField label={t("batch.panDepth")} name="panDepthMm" defaultValue={String(first?.panDepthMm ?? 65)} options={depthOptions.map((d) => ({ value: String(d), label: `${d} mm` }))} error={errors["pan.depthMm"]} />
            <Field label={t("batch.fillDepth")} name="fillDepthMm" inputMode="numeric" defaultValue={first?.fillDepthMm ?? 50} error={errors["pan.fillDepthMm"]} />
            <Field label={t("batch.panCount")} name="panCount" inputMode="numeric" defaultValue={1} error={errors["pan.count"]} />
          </div>
          <div className="grid gap-x-4 sm:grid-cols-2">
            <SelectField label={t("batch.method")} name="method" defaultValue={first?.method ?? "walk-in"} options={methods.map((m) => ({ value: m.id, label: t(`library.methods.${m.id}`, { defaultValue: m.name }) }))} error={errors.method} />
            <SelectField label={t("batch.equipment")} name="equipmentId" defaultValue="" options={[{ value: "", label: "—" }, ...kit.map((e) => ({ value: e.id, label: e.name }))]} error={errors.equipmentId} />
          </div>
          <CheckboxField label={t("batch.lid")} name="lid" />
        </div>
        <div className="card flex flex-col items-center gap-4">
          <TemperatureKeypad name="startValue" unit={unit} label={t("batch.startTemperature")} error={errors["start.value"]} />
          <Field label={t("batch.takenAt")} name="startTakenAt" type="datetime-local" error={errors["start.takenAt"]} hint={t("batch.takenAtHint")} />
          <input type="hidden" name="startTakenAtIso" />
          <button type="submit" className="btn-primary min-h-16 w-full max-w-sm text-lg" disabled={busy}>
            {t("batch.startSubmit")}
          </button>
        </div>
      </Form>
    </main>
  );
}
