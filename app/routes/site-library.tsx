import { useState } from "react";
import { useTranslation } from "react-i18next";
import { data, Form, Link, redirect, useNavigation } from "react-router";
import { z } from "zod";
import { CheckboxField, SelectField } from "~/components/controls";
import { Field, Notice } from "~/components/frame";
import { coolingMethodIds, coolingMethods, PanFillSchema, panSizes, type PanSize } from "~/lib/engine/equipment";
import { learnedFactor } from "~/lib/equipment-learning";
import { averageProperties, CompositionSchema, components, type Component } from "~/lib/engine/properties";
import { fieldErrors, text } from "~/lib/forms";
import { can, isUuid, notFound, requireRole } from "~/server/guards.server";
import {
  addEquipment,
  addProduct,
  editProduct,
  isNameTaken,
  listEquipment,
  listProducts,
  renameEquipment,
  setEquipmentActive,
  setProductActive,
} from "~/server/library.server";
import type { Route } from "./+types/site-library";

export const meta: Route.MetaFunction = () => [{ title: "Library · Chillwright" }];

// A whole cooling run, hot holding to cold holding. Each batch averages over its own start, so this
// shows what a typical batch gets.
const ENGINE_RANGE = { fromC: 60, toC: 5 };

const decimal = (v: unknown) => {
  if (typeof v !== "string") return v;
  const s = v.trim().replace(",", ".");
  return s === "" ? undefined : Number(s);
};
const percent = z
  .number({ error: (issue) => (issue.input === undefined ? "forms.required" : "library.errors.percent") })
  .min(0, "library.errors.percent")
  .max(100, "library.errors.percent");

const compositionShape = {
  water: z.preprocess(decimal, percent),
  protein: z.preprocess(decimal, percent.optional()),
  fat: z.preprocess(decimal, percent.optional()),
  carbohydrate: z.preprocess(decimal, percent.optional()),
  fibre: z.preprocess(decimal, percent.optional()),
  ash: z.preprocess(decimal, percent.optional()),
  carbohydrateIncludesFibre: z
    .literal("true")
    .optional()
    .transform((v) => v === "true"),
};
const CompositionFormSchema = z.object(compositionShape);
type CompositionForm = z.output<typeof CompositionFormSchema>;

const productShape = {
  name: text().min(1, "forms.required").max(120, "library.errors.tooLong"),
  ...compositionShape,
  defaultPanSize: z.string(),
  defaultPanDepthMm: z.preprocess(decimal, z.number({ error: "library.errors.panDepth" })),
  defaultFillDepthMm: z.preprocess(decimal, z.number({ error: "library.errors.fillDepth" }).int("library.errors.fillDepth").positive("library.errors.fillDepth")),
  defaultMethod: z.enum(coolingMethodIds, { error: "library.errors.method" }),
};

/** The engine's own checks, with the house's per-field messages. */
function checkProduct(p: z.output<z.ZodObject<typeof productShape>>, ctx: z.RefinementCtx) {
  const composition = CompositionSchema.safeParse(compositionInput(p));
  if (!composition.success) {
    for (const issue of composition.error.issues) {
      const field = issue.path[0];
      if (field === undefined) ctx.addIssue({ code: "custom", path: ["composition"], message: "library.errors.total" });
      else if (field === "fibre" && issue.code === "custom") ctx.addIssue({ code: "custom", path: ["fibre"], message: "library.errors.fibreOverCarbohydrate" });
      else ctx.addIssue({ code: "custom", path: [field], message: "library.errors.percent" });
    }
  }
  const pan = PanFillSchema.safeParse({ size: p.defaultPanSize, depthMm: p.defaultPanDepthMm, fillDepthMm: p.defaultFillDepthMm });
  if (!pan.success) {
    const fields = { size: ["defaultPanSize", "library.errors.panSize"], depthMm: ["defaultPanDepthMm", "library.errors.panDepth"], fillDepthMm: ["defaultFillDepthMm", "library.errors.fillDepth"] } as const;
    for (const issue of pan.error.issues) {
      const [path, message] = fields[issue.path[0] as keyof typeof fields] ?? ["defaultPanSize", "library.errors.panSize"];
      ctx.addIssue({ code: "custom", path: [path], message });
    }
  }
}

const productId = z.string().refine(isUuid);
const equipmentId = z.string().refine(isUuid);
const equipmentName = text().min(1, "forms.required").max(80, "library.errors.tooLong");

const LibraryActionSchema = z.discriminatedUnion("intent", [
  z.object({ intent: z.literal("addProduct"), ...productShape }).superRefine(checkProduct),
  z.object({ intent: z.literal("editProduct"), productId, ...productShape }).superRefine(checkProduct),
  z.object({ intent: z.literal("retireProduct"), productId }),
  z.object({ intent: z.literal("reactivateProduct"), productId }),
  z.object({ intent: z.literal("addEquipment"), name: equipmentName, method: z.enum(coolingMethodIds, { error: "library.errors.method" }) }),
  z.object({ intent: z.literal("renameEquipment"), equipmentId, name: equipmentName }),
  z.object({ intent: z.literal("retireEquipment"), equipmentId }),
  z.object({ intent: z.literal("reactivateEquipment"), equipmentId }),
]);

const doneMessages = ["productAdded", "productSaved", "productRetired", "productReactivated", "equipmentAdded", "equipmentRenamed", "equipmentRetired", "equipmentReactivated"] as const;
type Done = (typeof doneMessages)[number];

function compositionInput(c: CompositionForm) {
  return { water: c.water, protein: c.protein, fat: c.fat, carbohydrate: c.carbohydrate, fibre: c.fibre, ash: c.ash, carbohydrateIncludesFibre: c.carbohydrateIncludesFibre };
}

/** Kept as entered, carbohydrate net of fibre, so the stored record reads back through CompositionSchema as it is. */
function storedComposition(c: CompositionForm): Record<Component, number> {
  const carbohydrate = c.carbohydrate ?? 0;
  const fibre = c.fibre ?? 0;
  return {
    water: c.water,
    protein: c.protein ?? 0,
    fat: c.fat ?? 0,
    carbohydrate: c.carbohydrateIncludesFibre ? Math.round((carbohydrate - fibre) * 100) / 100 : carbohydrate,
    fibre,
    ash: c.ash ?? 0,
  };
}

function propertiesOf(input: unknown): Properties | null {
  const composition = CompositionSchema.safeParse(input);
  if (!composition.success) return null;
  const { k, rho, cp, alpha } = averageProperties(composition.data, ENGINE_RANGE);
  return { k, rho, cp, alpha };
}

/** What the engine makes of the figures in the form: their total, and the mean properties or why there are none. */
function assessComposition(values: Record<string, unknown>) {
  const form = CompositionFormSchema.safeParse(values);
  if (!form.success) return { total: null, problem: null, properties: null };
  const net = storedComposition(form.data);
  const total = components.reduce((sum, name) => sum + net[name], 0);
  const properties = propertiesOf(compositionInput(form.data));
  if (properties) return { total, problem: null, properties };
  const fibre = form.data.carbohydrateIncludesFibre && (form.data.fibre ?? 0) > (form.data.carbohydrate ?? 0);
  return { total, problem: fibre ? "library.errors.fibreOverCarbohydrate" : "library.errors.total", properties: null };
}

type Properties = { k: number; rho: number; cp: number; alpha: number };

export async function loader({ request, params }: Route.LoaderArgs) {
  const { site } = await requireRole(request, can.manageSite, params.siteId);
  const url = new URL(request.url);
  const [productRows, equipmentRows] = await Promise.all([listProducts(site.id), listEquipment(site.id)]);
  const library = productRows.map((p) => ({ ...p, properties: propertiesOf(p.composition) }));
  const editId = url.searchParams.get("edit");
  const editing = editId ? library.find((p) => p.id === editId) : null;
  if (editId && !editing) notFound();
  const done = url.searchParams.get("done");
  return {
    siteId: site.id,
    siteName: site.name,
    products: library,
    editing: editing ?? null,
    equipment: equipmentRows.map((e) => ({ id: e.id, name: e.name, method: e.method, active: e.active, learned: learnedFactor(e) })),
    done: doneMessages.includes(done as Done) ? (done as Done) : null,
    highlight: url.searchParams.get("id"),
  };
}

type ActionResult = { intent: string; target?: string; values: Record<string, string>; errors: Record<string, string> };
const fail = (r: ActionResult) => data(r, { status: 400 });

export async function action({ request, params }: Route.ActionArgs) {
  const { user, site } = await requireRole(request, can.manageSite, params.siteId);
  const form = Object.fromEntries(await request.formData()) as Record<string, string>;
  const parsed = LibraryActionSchema.safeParse(form);
  const target = form.productId ?? form.equipmentId;
  if (!parsed.success) return fail({ intent: form.intent ?? "", target, values: form, errors: fieldErrors(parsed.error) });
  const input = parsed.data;
  const back = (done: Done, id?: string) => redirect(`/sites/${site.id}/library?done=${done}${id ? `&id=${id}` : ""}`);
  const nameTaken = { intent: input.intent, target, values: form, errors: { name: "library.errors.nameTaken" } };

  switch (input.intent) {
    case "addProduct":
    case "editProduct": {
      const editing = input.intent === "editProduct" ? input.productId : undefined;
      if (await isNameTaken("product", site.id, input.name, editing)) return fail(nameTaken);
      const fields = {
        name: input.name,
        composition: storedComposition(input),
        defaultPanSize: input.defaultPanSize,
        // Depth columns hold whole millimetres; US depths (2½ in = 63.5 mm) round within the engine's tolerance.
        defaultPanDepthMm: Math.round(input.defaultPanDepthMm),
        defaultFillDepthMm: input.defaultFillDepthMm,
        defaultMethod: input.defaultMethod,
      };
      if (!editing) return back("productAdded", await addProduct(user, site, fields));
      if (!(await editProduct(user, site, editing, fields))) notFound();
      return back("productSaved", editing);
    }
    case "retireProduct":
    case "reactivateProduct": {
      const active = input.intent === "reactivateProduct";
      if (!(await setProductActive(user, site, input.productId, active))) notFound();
      return back(active ? "productReactivated" : "productRetired", input.productId);
    }
    case "addEquipment": {
      if (await isNameTaken("equipment", site.id, input.name)) return fail(nameTaken);
      return back("equipmentAdded", await addEquipment(user, site, { name: input.name, method: input.method }));
    }
    case "renameEquipment": {
      if (await isNameTaken("equipment", site.id, input.name, input.equipmentId)) return fail(nameTaken);
      if (!(await renameEquipment(user, site, input.equipmentId, input.name))) notFound();
      return back("equipmentRenamed", input.equipmentId);
    }
    case "retireEquipment":
    case "reactivateEquipment": {
      const active = input.intent === "reactivateEquipment";
      if (!(await setEquipmentActive(user, site, input.equipmentId, active))) notFound();
      return back(active ? "equipmentReactivated" : "equipmentRetired", input.equipmentId);
    }
  }
}

const MM_PER_INCH = 25.4;
const nearestDepth = (pan: PanSize | undefined, mm: number) => pan?.depthsMm.find((d) => Math.abs(d - mm) <= 0.5) ?? pan?.depthsMm[0];

/** Numbers in the reader's language: `digits` decimals, or up to `digits` with `upTo`. */
function useFormat() {
  const { i18n } = useTranslation();
  return (value: number, digits: number, upTo = false) =>
    new Intl.NumberFormat(i18n.language, { minimumFractionDigits: upTo ? 0 : digits, maximumFractionDigits: digits }).format(value);
}

function useNames() {
  const { t } = useTranslation();
  return {
    method: (id: string) => t(`library.methods.${id}`, { defaultValue: coolingMethods.find((m) => m.id === id)?.name ?? id }),
    pan: (id: string) => t(`library.panNames.${id}`, { defaultValue: panSizes.find((p) => p.id === id)?.name ?? id }),
  };
}

/** k, ρ, cp and α as the engine will use them. */
function PropertyList({ properties, testId }: { properties: Properties; testId?: string }) {
  const { t } = useTranslation();
  const format = useFormat();
  const items = [
    { label: t("library.k"), value: format(properties.k, 3), unit: "W/m·K" },
    { label: t("library.rho"), value: format(properties.rho, 0), unit: "kg/m³" },
    { label: t("library.cp"), value: format(properties.cp, 0), unit: "J/kg·K" },
    { label: t("library.alpha"), value: format(properties.alpha / 1e-7, 2), unit: "× 10⁻⁷ m²/s" },
  ];
  return (
    <dl className="grid grid-cols-2 gap-2 md:grid-cols-4" data-testid={testId}>
      {items.map((item) => (
        <div key={item.label} className="rounded-xl bg-frost px-3 py-2">
          <dt className="text-sm font-bold text-ink-soft">{item.label}</dt>
          <dd className="tabular-nums">
            <span className="text-lg font-extrabold">{item.value}</span> <span className="text-sm font-semibold whitespace-nowrap text-ink-soft">{item.unit}</span>
          </dd>
        </div>
      ))}
    </dl>
  );
}

function StatusBadge({ active }: { active: boolean }) {
  const { t } = useTranslation();
  return (
    <span className={`rounded-lg px-2 py-1 text-sm font-bold ${active ? "bg-pine-light text-pine" : "bg-frost-deep text-ink-soft"}`}>
      {active ? t("library.active") : t("library.retired")}
    </span>
  );
}

type ProductRow = Route.ComponentProps["loaderData"]["products"][number];

function ProductForm({ editing, result }: { editing: ProductRow | null; result: ActionResult | undefined }) {
  const { t } = useTranslation();
  const names = useNames();
  const format = useFormat();
  const busy = useNavigation().state !== "idle";
  const intent = editing ? "editProduct" : "addProduct";
  const own = result && result.intent === intent && (!editing || result.target === editing.id) ? result : undefined;
  const errors = own?.errors ?? {};
  const echoed = own?.values;
  const initial: Record<string, string> = echoed ?? {
    name: editing?.name ?? "",
    ...Object.fromEntries(components.map((c) => [c, editing ? String(editing.composition[c] ?? 0) : ""])),
    defaultPanSize: editing?.defaultPanSize ?? "gn-1/1",
    defaultPanDepthMm: String(editing?.defaultPanDepthMm ?? 65),
    defaultFillDepthMm: String(editing?.defaultFillDepthMm ?? 50),
    defaultMethod: editing?.defaultMethod ?? "walk-in",
  };
  const [values, setValues] = useState(initial);
  const [panId, setPanId] = useState(initial.defaultPanSize);
  const pan = panSizes.find((p) => p.id === panId) ?? panSizes[0];
  const [depth, setDepth] = useState(String(nearestDepth(pan, Number(initial.defaultPanDepthMm)) ?? ""));
  const preview = assessComposition(values);
  const error = (name: string) => errors[name] && t(errors[name]);

  return (
    <section className="card scroll-mt-6" aria-labelledby="product-form" id="product-form-card">
      <h2 id="product-form" className="mb-4 text-lg font-extrabold">
        {editing ? t("library.editProduct", { name: editing.name }) : t("library.addProduct")}
      </h2>
      <Form method="post" onChange={(e) => setValues(Object.fromEntries(new FormData(e.currentTarget)) as Record<string, string>)}>
        <input type="hidden" name="intent" value={intent} />
        {editing ? <input type="hidden" name="productId" value={editing.id} /> : null}
        <Field label={t("library.productName")} name="name" required maxLength={120} autoComplete="off" defaultValue={initial.name} error={error("name")} />

        <fieldset className="mb-5" aria-describedby="composition-hint">
          <legend className="mb-1 text-base font-extrabold">{t("library.composition")}</legend>
          <p id="composition-hint" className="mb-3 text-sm text-ink-soft">
            {t("library.compositionHint")}
          </p>
          <div className="grid grid-cols-2 gap-x-4 sm:grid-cols-3">
            {components.map((c) => (
              <Field
                key={c}
                label={t(`library.components.${c}`)}
                name={c}
                inputMode="decimal"
                autoComplete="off"
                required={c === "water"}
                defaultValue={initial[c]}
                error={error(c)}
              />
            ))}
          </div>
          <CheckboxField label={t("library.carbohydrateIncludesFibre")} name="carbohydrateIncludesFibre" defaultChecked={initial.carbohydrateIncludesFibre === "true"} />
          <div
            className={`rounded-xl border-2 p-4 ${preview.problem ? (errors.composition || errors.fibre ? "border-ember" : "border-amber") : "border-line"}`}
            aria-live="polite"
            data-testid="composition-check"
          >
            {preview.total === null ? (
              <p className="text-ink-soft">{t("library.previewWaiting")}</p>
            ) : preview.problem ? (
              <p className={`font-bold ${errors.composition || errors.fibre ? "text-ember" : "text-amber"}`} role={errors.composition ? "alert" : undefined}>
                {t(preview.problem, { total: format(preview.total, 1, true) })}
              </p>
            ) : (
              <>
                <p className="mb-1 font-bold">{t("library.total", { total: format(preview.total, 1, true) })}</p>
                <p className="mb-2 text-sm text-ink-soft">{t("library.engineUses")}</p>
                {preview.properties ? <PropertyList properties={preview.properties} testId="property-preview" /> : null}
              </>
            )}
          </div>
        </fieldset>

        <fieldset className="mb-5">
          <legend className="mb-3 text-base font-extrabold">{t("library.defaults")}</legend>
          <div className="grid gap-x-4 sm:grid-cols-2">
            <SelectField
              label={t("library.panSize")}
              name="defaultPanSize"
              value={panId}
              onChange={(e) => {
                const next = panSizes.find((p) => p.id === e.target.value);
                setPanId(e.target.value);
                setDepth(String(nearestDepth(next, Number(depth)) ?? ""));
              }}
              options={panSizes.map((p) => ({ value: p.id, label: names.pan(p.id) }))}
              error={error("defaultPanSize")}
            />
            <SelectField
              label={t("library.panDepth")}
              name="defaultPanDepthMm"
              value={depth}
              onChange={(e) => setDepth(e.target.value)}
              options={pan.depthsMm.map((d) => ({ value: String(d), label: `${format(d, 1, true)} mm` }))}
              error={error("defaultPanDepthMm")}
            />
            <Field label={t("library.fillDepth")} name="defaultFillDepthMm" inputMode="numeric" autoComplete="off" defaultValue={initial.defaultFillDepthMm} error={error("defaultFillDepthMm")} />
            <SelectField
              label={t("library.method")}
              name="defaultMethod"
              defaultValue={initial.defaultMethod}
              options={coolingMethods.map((m) => ({ value: m.id, label: names.method(m.id) }))}
              error={error("defaultMethod")}
            />
          </div>
        </fieldset>

        <div className="flex flex-wrap gap-3">
          <button type="submit" className="btn-primary" disabled={busy}>
            {editing ? t("library.saveProduct") : t("library.submitProduct")}
          </button>
          {editing ? (
            <Link to="." className="btn-quiet">
              {t("library.cancel")}
            </Link>
          ) : null}
        </div>
      </Form>
    </section>
  );
}

export default function SiteLibrary({ loaderData, actionData }: Route.ComponentProps) {
  const { t } = useTranslation();
  const names = useNames();
  const format = useFormat();
  const { siteId, siteName, products, editing, equipment, done, highlight } = loaderData;
  const result = actionData as ActionResult | undefined;
  const busy = useNavigation().state !== "idle";
  const equipmentErrors = result?.intent === "addEquipment" ? result.errors : {};
  const gastronorm = panSizes.filter((p) => p.system === "gastronorm");
  const steamTable = panSizes.filter((p) => p.system === "us-steam-table");
  const inches = (mm: number) => format(mm / MM_PER_INCH, 2, true);
  const mm = (value: number) => format(value, 1, true);

  return (
    <div className="grid gap-6">
      <div>
        <h1 className="text-2xl font-extrabold tracking-tight">{t("library.title", { site: siteName })}</h1>
        <p className="mt-1 max-w-3xl text-lg text-ink-soft">{t("library.intro")}</p>
      </div>
      <nav aria-label={t("library.sections")} className="flex flex-wrap gap-2">
        {[
          ["#products", t("library.products")],
          ["#product-form-card", editing ? t("library.editProduct", { name: editing.name }) : t("library.addProduct")],
          ["#equipment", t("library.equipment")],
          ["#pans", t("library.pans")],
        ].map(([href, label]) => (
          <a key={href} href={href} className="flex min-h-12 items-center rounded-full border-2 border-line bg-white px-4 font-bold hover:border-glacier">
            {label}
          </a>
        ))}
      </nav>
      {done ? <Notice tone="ok">{t(`library.done.${done}`)}</Notice> : null}
      {result && Object.keys(result.errors).length ? <Notice tone="error">{t("forms.fixErrors")}</Notice> : null}

      <section className="card" aria-labelledby="products">
        <h2 id="products" className="mb-1 scroll-mt-6 text-lg font-extrabold">
          {t("library.products")}
        </h2>
        <p className="mb-4 text-sm text-ink-soft">{t("library.productsHint")}</p>
        {products.length === 0 ? <p className="text-ink-soft">{t("library.noProducts")}</p> : null}
        <ul className="grid gap-4">
          {products.map((p) => (
            <li
              key={p.id}
              aria-label={p.name}
              className={`rounded-2xl border-2 p-4 ${p.id === highlight ? "border-glacier" : "border-line"} ${p.active ? "" : "bg-frost"}`}
            >
              <div className="mb-2 flex flex-wrap items-center justify-between gap-3">
                <h3 className="text-lg font-extrabold">{p.name}</h3>
                <StatusBadge active={p.active} />
              </div>
              <p className="mb-3 text-base">
                {components.map((c) => `${t(`library.components.${c}`)} ${format(p.composition[c] ?? 0, 2, true)}`).join(" · ")} %
              </p>
              {p.properties ? (
                <>
                  <p className="mb-1 text-sm text-ink-soft">{t("library.engineUses")}</p>
                  <PropertyList properties={p.properties} testId={`properties-${p.id}`} />
                </>
              ) : (
                <p className="font-semibold text-ember">{t("library.noProperties")}</p>
              )}
              <p className="mt-3 text-base">
                <span className="font-bold">{t("library.defaults")}:</span>{" "}
                {t("library.defaultsSummary", { pan: names.pan(p.defaultPanSize), depth: p.defaultPanDepthMm, fill: p.defaultFillDepthMm, method: names.method(p.defaultMethod) })}
              </p>
              <div className="mt-3 flex flex-wrap gap-3">
                <Link to={`?edit=${p.id}#product-form-card`} className="btn-quiet" aria-label={`${t("library.edit")}: ${p.name}`}>
                  {t("library.edit")}
                </Link>
                <Form method="post">
                  <input type="hidden" name="intent" value={p.active ? "retireProduct" : "reactivateProduct"} />
                  <input type="hidden" name="productId" value={p.id} />
                  <button type="submit" className={`btn-quiet ${p.active ? "text-ember" : ""}`} disabled={busy} aria-label={`${p.active ? t("library.retire") : t("library.reactivate")}: ${p.name}`}>
                    {p.active ? t("library.retire") : t("library.reactivate")}
                  </button>
                </Form>
              </div>
            </li>
          ))}
        </ul>
      </section>

      {/* A new key after each saved change empties the form. */}
      <ProductForm key={`${editing?.id ?? "new"}-${done}-${highlight}`} editing={editing} result={result} />

      <section className="card" aria-labelledby="equipment">
        <h2 id="equipment" className="mb-1 scroll-mt-6 text-lg font-extrabold">
          {t("library.equipment")}
        </h2>
        <p className="mb-4 text-sm text-ink-soft">{t("library.equipmentHint")}</p>
        {equipment.length === 0 ? <p className="mb-4 text-ink-soft">{t("library.noEquipment")}</p> : null}
        <ul className="mb-6 grid gap-4">
          {equipment.map((e) => {
            const renameError = result?.intent === "renameEquipment" && result.target === e.id ? result.errors.name : undefined;
            return (
              <li key={e.id} aria-label={e.name} className={`rounded-2xl border-2 p-4 ${e.id === highlight ? "border-glacier" : "border-line"} ${e.active ? "" : "bg-frost"}`}>
                <div className="flex flex-wrap items-start justify-between gap-3">
                  <div>
                    <h3 className="text-lg font-extrabold">
                      <Link to={`/sites/${siteId}/equipment/${e.id}`} className="text-glacier-dark underline underline-offset-4">
                        {e.name}
                      </Link>
                    </h3>
                    <p className="text-base text-ink-soft">{names.method(e.method)}</p>
                  </div>
                  <StatusBadge active={e.active} />
                </div>
                <p className="mt-2 text-base" data-testid={`learned-${e.id}`}>
                  <span className="font-bold">{t("library.learned")}:</span>{" "}
                  {e.learned ? (
                    <>
                      <span className="font-extrabold tabular-nums">
                        ×{format(e.learned.factor, 2)}
                        {e.learned.spread === null ? "" : ` ± ${format(e.learned.spread, 2)}`}
                      </span>{" "}
                      · {t("library.restsOn", { count: e.learned.batches })}
                    </>
                  ) : (
                    <span className="text-ink-soft">{t("library.notLearned")}</span>
                  )}
                </p>
                <div className="mt-3 flex flex-wrap items-start gap-3">
                  <details className="grow" open={!!renameError}>
                    <summary className="btn-quiet inline-flex cursor-pointer list-none">{t("library.rename")}</summary>
                    <Form method="post" className="mt-3 flex flex-wrap items-start gap-3">
                      <input type="hidden" name="intent" value="renameEquipment" />
                      <input type="hidden" name="equipmentId" value={e.id} />
                      <div className="min-w-64 grow">
                        <label htmlFor={`equipment-name-${e.id}`} className="label">
                          {t("library.newName", { name: e.name })}
                        </label>
                        <input
                          id={`equipment-name-${e.id}`}
                          name="name"
                          className="field"
                          required
                          maxLength={80}
                          autoComplete="off"
                          defaultValue={result?.target === e.id ? result.values.name : e.name}
                          aria-invalid={renameError ? true : undefined}
                          aria-describedby={renameError ? `equipment-name-${e.id}-error` : undefined}
                        />
                        {renameError ? (
                          <p id={`equipment-name-${e.id}-error`} className="field-error" role="alert">
                            {t(renameError)}
                          </p>
                        ) : null}
                      </div>
                      <button type="submit" className="btn-primary mt-7" disabled={busy}>
                        {t("library.saveName")}
                      </button>
                    </Form>
                  </details>
                  <Form method="post">
                    <input type="hidden" name="intent" value={e.active ? "retireEquipment" : "reactivateEquipment"} />
                    <input type="hidden" name="equipmentId" value={e.id} />
                    <button type="submit" className={`btn-quiet ${e.active ? "text-ember" : ""}`} disabled={busy} aria-label={`${e.active ? t("library.retire") : t("library.reactivate")}: ${e.name}`}>
                      {e.active ? t("library.retire") : t("library.reactivate")}
                    </button>
                  </Form>
                </div>
              </li>
            );
          })}
        </ul>

        <h3 className="mb-3 border-t border-line pt-5 text-lg font-extrabold">{t("library.addEquipment")}</h3>
        <Form method="post" className="grid items-start gap-x-4 sm:grid-cols-[1fr_1fr_auto]">
          <input type="hidden" name="intent" value="addEquipment" />
          <div className="mb-5">
            <label htmlFor="new-equipment-name" className="label">
              {t("library.equipmentName")}
            </label>
            <input
              id="new-equipment-name"
              name="name"
              className="field"
              required
              maxLength={80}
              autoComplete="off"
              defaultValue={result?.intent === "addEquipment" ? result.values.name : undefined}
              aria-invalid={equipmentErrors.name ? true : undefined}
              aria-describedby={equipmentErrors.name ? "new-equipment-name-error" : undefined}
            />
            {equipmentErrors.name ? (
              <p id="new-equipment-name-error" className="field-error" role="alert">
                {t(equipmentErrors.name)}
              </p>
            ) : null}
          </div>
          <SelectField
            label={t("library.equipmentMethod")}
            name="method"
            defaultValue={result?.intent === "addEquipment" ? result.values.method : "walk-in"}
            options={coolingMethods.map((m) => ({ value: m.id, label: names.method(m.id) }))}
            error={equipmentErrors.method && t(equipmentErrors.method)}
          />
          <button type="submit" className="btn-primary sm:mt-7" disabled={busy}>
            {t("library.submitEquipment")}
          </button>
        </Form>
      </section>

      <section className="card" aria-labelledby="pans">
        <h2 id="pans" className="mb-1 scroll-mt-6 text-lg font-extrabold">
          {t("library.pans")}
        </h2>
        <p className="mb-4 text-sm text-ink-soft">{t("library.pansHint")}</p>
        <p className="mb-4">
          <Link to="../pans" relative="path" className="font-bold text-glacier underline underline-offset-4">
            {t("pans.link")}
          </Link>
        </p>
        <div className="grid gap-6 lg:grid-cols-2">
          {[
            { key: "gastronorm", sizes: gastronorm, us: false },
            { key: "usSteamTable", sizes: steamTable, us: true },
          ].map((group) => (
            <div key={group.key} className="overflow-x-auto">
              <table className="w-full text-left">
                <caption className="mb-2 text-left font-extrabold">{t(`library.${group.key}`)}</caption>
                <thead>
                  <tr className="border-b border-line text-sm text-ink-soft">
                    <th className="py-2 pr-3">{t("library.pan")}</th>
                    <th className="py-2 pr-3">{t("library.dimensions")}</th>
                    <th className="py-2">{t("library.depths")}</th>
                  </tr>
                </thead>
                <tbody>
                  {group.sizes.map((p) => (
                    <tr key={p.id} className="border-b border-line align-top last:border-0">
                      <td className="py-2 pr-3 font-bold">{names.pan(p.id)}</td>
                      <td className="py-2 pr-3 tabular-nums">
                        {group.us ? (
                          <>
                            {inches(p.lengthMm)} × {inches(p.widthMm)} in
                            <span className="block text-sm text-ink-soft">
                              {mm(p.lengthMm)} × {mm(p.widthMm)} mm
                            </span>
                          </>
                        ) : (
                          `${mm(p.lengthMm)} × ${mm(p.widthMm)} mm`
                        )}
                      </td>
                      <td className="py-2 tabular-nums">
                        {group.us ? (
                          <>
                            {p.depthsMm.map(inches).join(", ")} in
                            <span className="block text-sm text-ink-soft">{p.depthsMm.map(mm).join(", ")} mm</span>
                          </>
                        ) : (
                          `${p.depthsMm.map(mm).join(", ")} mm`
                        )}
                      </td>
                    </tr>
                  ))}
                </tbody>
              </table>
            </div>
          ))}
        </div>
      </section>
    </div>
  );
}
