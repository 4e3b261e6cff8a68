import { and, eq } from "drizzle-orm";
import { randomUUID } from "node:crypto";
import { useState } from "react";
import { useTranslation } from "react-i18next";
import { data, Form, Link, redirect, useNavigation } from "react-router";
import { batches } from "~db/schema";
import { clock } from "~/components/batch-card";
import { BatchHeading, BatchNotices, ChartSection, HistoryTable, StagesPanel } from "~/components/batch-view";
import { Field, Notice } from "~/components/frame";
import { ReadingForm } from "~/components/reading-form";
import { useLiveNow } from "~/components/use-live-now";
import { CorrectiveActionSchema, ReadingSchema, recordReading, takeCorrectiveAction } from "~/server/batches.server";
import { loadBatchView } from "~/server/batch-view.server";
import { db } from "~/server/db.server";
import { isUuid, notFound } from "~/server/guards.server";
import { requireStationCook } from "~/server/station-entry.server";
import { getStationCookId, getStationDevice, stationAttribution } from "~/server/station.server";
import type { Route } from "./+types/station-batch";

export const meta: Route.MetaFunction = () => [{ title: "Batch · Chillwright" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const device = await getStationDevice(request);
  if (!device) throw redirect("/station");
  if (!isUuid(params.batchId)) notFound();
  const view = await loadBatchView(device.siteId, params.batchId);
  if (!view) notFound();
  const url = new URL(request.url);
  return {
    ...view,
    cookActive: !!getStationCookId(request, device),
    attribution: getStationCookId(request, device) ? stationAttribution(request) : null,
    clientId: randomUUID(),
    warnings: (url.searchParams.get("warn") ?? "").split(",").filter(Boolean),
  };
}

const num = (v: FormDataEntryValue | null) => (v === null || v === "" ? undefined : Number(String(v).replace(",", ".")));
const issues = (error: { issues: { path: PropertyKey[]; message: string }[] }) => {
  const errors: Record<string, string> = {};
  for (const i of error.issues) errors[i.path.join(".")] ??= i.message;
  return errors;
};

export async function action({ request, params }: Route.ActionArgs) {
  const { site, entrant } = await requireStationCook(request);
  if (!isUuid(params.batchId)) notFound();
  const f = await request.formData();
  const intent = String(f.get("intent") ?? "reading");
  const fail = (errors: Record<string, string>, status = 400) => data({ intent, errors, warnings: [] as string[] }, { status });
  if (intent === "change" || intent === "discard") {
    const [batch] = await db.select({ method: batches.method }).from(batches).where(and(eq(batches.id, params.batchId), eq(batches.siteId, site.id)));
    if (!batch) notFound();
    const whatIf = String(f.get("whatIf") ?? "");
    const parsed = CorrectiveActionSchema.safeParse(
      intent === "change"
        ? { kind: "change_method", clientId: f.get("clientId"), method: whatIf === "lid-off" ? batch.method : whatIf, lid: false }
        : { kind: "discard", clientId: f.get("clientId"), quantityKg: num(f.get("quantityKg")), reason: f.get("reason") },
    );
    if (!parsed.success) return fail(issues(parsed.error));
    const result = await takeCorrectiveAction(site, entrant, params.batchId, parsed.data);
    if (!result.ok) return fail(result.errors, result.status);
    return data({ intent, errors: {} as Record<string, string>, warnings: [] as string[] });
  }
  const takenAt = f.get("takenAt");
  const parsed = ReadingSchema.safeParse({
    clientId: f.get("clientId"),
    value: num(f.get("value")),
    unit: site.temperatureUnit,
    takenAt: takenAt ? new Date(String(takenAt)).toISOString() : undefined,
    probe: f.get("probe") || undefined,
    kind: intent === "reheat" ? "reheat" : "reading",
  });
  if (!parsed.success) return fail(issues(parsed.error));
  const result = await recordReading(site, entrant, params.batchId, parsed.data);
  if (!result.ok) {
    if (result.status === 404) notFound();
    return fail(result.errors, result.status);
  }
  return data({ intent, errors: {} as Record<string, string>, warnings: result.warnings });
}

export default function StationBatch({ loaderData, actionData }: Route.ComponentProps) {
  const { t, i18n } = useTranslation();
  const { batch, record, readings: list, unit, timeZone, cookActive, clientId, attribution } = loaderData;
  const now = useLiveNow(loaderData.now);
  const [correcting, setCorrecting] = useState<{ readingId: string; takenAt: number; label: string } | null>(null);
  const busy = useNavigation().state !== "idle";
  const errors: Record<string, string> = actionData?.errors ?? {};
  const warnings = [...loaderData.warnings, ...(actionData?.warnings ?? [])];
  return (
    <main className="mx-auto w-full max-w-6xl px-4 py-6">
      <BatchHeading batch={batch}>
        <Link to="/station" className="btn-quiet">
          ← {t("station.back")}
        </Link>
      </BatchHeading>
      <BatchNotices batch={batch} record={record} warnings={warnings} />

      <div className="grid gap-6 lg:grid-cols-[minmax(0,1fr)_26rem]">
        <StagesPanel
          view={loaderData}
          now={now}
          whatIfAction={(w) =>
            cookActive && batch.state === "cooling" && w.id !== "shallower-pans" ? (
              <Form method="post">
                <input type="hidden" name="intent" value="change" />
                <input type="hidden" name="whatIf" value={w.id} />
                <input type="hidden" name="clientId" value={`${clientId}-${w.id}`} />
                <button type="submit" className="btn-quiet min-h-12 px-4 text-sm" disabled={busy}>
                  {t("batch.doThisNow")}
                </button>
              </Form>
            ) : null
          }
        />
        <section className="card" aria-labelledby="log">
          <h2 id="log" className="mb-3 text-lg font-extrabold">
            {t("batch.logReading")}
          </h2>
          {batch.state !== "cooling" ? <p>{t("batch.ended")}</p> : null}
          {batch.state === "cooling" && cookActive && attribution && record.nextStep !== "discard" ? (
            <>
              {record.nextStep === "reheat" ? <Notice tone="warn">{t("batch.reheatHint")}</Notice> : null}
              <ReadingForm batchId={batch.id} unit={unit} attribution={attribution} kind={record.nextStep === "reheat" ? "reheat" : "reading"} />
            </>
          ) : null}
          {batch.state === "cooling" && cookActive && record.nextStep ? (
            <Form method="post" className="mt-6 w-full border-t border-line pt-4">
              <h3 className="mb-2 font-extrabold">{t("batch.discard")}</h3>
              <input type="hidden" name="intent" value="discard" />
              <input type="hidden" name="clientId" value={`${clientId}-discard`} />
              <Field label={t("batch.quantityKg")} name="quantityKg" inputMode="decimal" error={errors.quantityKg} />
              <Field label={t("batch.discardReason")} name="reason" required error={errors.reason} />
              <button type="submit" className="btn-danger w-full" disabled={busy}>
                {t("batch.discardSubmit")}
              </button>
            </Form>
          ) : null}
          {batch.state !== "cooling" || cookActive ? null : (
            <Link to={`/station?next=${encodeURIComponent(`/station/batches/${batch.id}`)}`} className="btn-primary">
              {t("batch.pinToLog")}
            </Link>
          )}
        </section>
      </div>

      {correcting && attribution ? (
        <section className="card mt-6 max-w-md" aria-label={t("batch.correct")}>
          <ReadingForm key={correcting.readingId} batchId={batch.id} unit={unit} attribution={attribution} kind="reading" corrects={correcting} />
          <button type="button" className="btn-quiet mt-3 w-full" onClick={() => setCorrecting(null)}>
            {t("station.back")}
          </button>
        </section>
      ) : null}

      <ChartSection view={loaderData} now={now} />
      <HistoryTable
        readings={list}
        timeZone={timeZone}
        rowAction={(r) =>
          cookActive && attribution && !r.corrects ? (
            <button
              type="button"
              className="btn-quiet min-h-12 px-3 text-sm"
              onClick={() => setCorrecting({ readingId: r.id, takenAt: r.takenAt, label: `${r.value} °${r.unit} · ${clock(r.takenAt, timeZone, i18n.language)}` })}
            >
              {t("batch.correct")}
            </button>
          ) : null
        }
      />
    </main>
  );
}
