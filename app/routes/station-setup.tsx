import { and, desc, eq, isNull } from "drizzle-orm";
import { useTranslation } from "react-i18next";
import { data, Form, redirect } from "react-router";
import { z } from "zod";
import { stationDevices } from "~db/schema";
import { Field } from "~/components/frame";
import { RetireList } from "~/components/retire-list";
import { fieldErrors, text } from "~/lib/forms";
import { recordAudit } from "~/server/audit.server";
import { clearSessionCookie } from "~/server/auth.server";
import { hashToken, makeToken } from "~/server/crypto.server";
import { db } from "~/server/db.server";
import { can, isUuid, notFound, requireRole } from "~/server/guards.server";
import { stationCookie } from "~/server/station.server";
import type { Route } from "./+types/station-setup";

export const meta: Route.MetaFunction = () => [{ title: "Set up station · Chillwright" }];

const StationSchema = z.discriminatedUnion("intent", [
  z.object({ intent: z.literal("create"), name: text().min(1, "forms.required").max(80) }),
  z.object({ intent: z.literal("retire"), deviceId: z.string().refine(isUuid) }),
]);

export async function loader({ request, params }: Route.LoaderArgs) {
  const { site } = await requireRole(request, can.setUpStation, params.siteId);
  const devices = await db
    .select({ id: stationDevices.id, name: stationDevices.name, lastSeenAt: stationDevices.lastSeenAt, createdAt: stationDevices.createdAt })
    .from(stationDevices)
    .where(and(eq(stationDevices.siteId, site.id), isNull(stationDevices.revokedAt)))
    .orderBy(desc(stationDevices.createdAt));
  return { siteName: site.name, devices };
}

export async function action({ request, params }: Route.ActionArgs) {
  const { user, site } = await requireRole(request, can.setUpStation, params.siteId);
  const parsed = StationSchema.safeParse(Object.fromEntries(await request.formData()));
  if (!parsed.success) return data({ errors: fieldErrors(parsed.error) }, { status: 400 });
  const actor = { kind: "user" as const, userId: user.id };
  if (parsed.data.intent === "retire") {
    const { deviceId } = parsed.data;
    const retired = await db.transaction(async (tx) => {
      const [d] = await tx
        .update(stationDevices)
        .set({ revokedAt: new Date() })
        .where(and(eq(stationDevices.id, deviceId), eq(stationDevices.siteId, site.id), isNull(stationDevices.revokedAt)))
        .returning({ id: stationDevices.id });
      if (d) await recordAudit(tx, { actor, organisationId: site.organisationId, siteId: site.id, action: "station.retired", entity: "station_device", entityId: d.id });
      return !!d;
    });
    if (!retired) notFound();
    return data({ errors: {} as Record<string, string> });
  }
  const token = makeToken();
  const name = parsed.data.name;
  await db.transaction(async (tx) => {
    const [d] = await tx.insert(stationDevices).values({ siteId: site.id, name, tokenHash: hashToken(token), createdBy: user.id }).returning({ id: stationDevices.id });
    await recordAudit(tx, { actor, organisationId: site.organisationId, siteId: site.id, action: "station.created", entity: "station_device", entityId: d.id, data: { name } });
  });
  // The manager's own session ends on this shared device: from now on entries are made by PIN.
  const headers = new Headers();
  headers.append("Set-Cookie", stationCookie(token));
  headers.append("Set-Cookie", clearSessionCookie());
  return redirect("/station", { headers });
}

export default function StationSetup({ loaderData, actionData }: Route.ComponentProps) {
  const { t } = useTranslation();
  const { siteName, devices } = loaderData;
  const errors: Record<string, string> = actionData?.errors ?? {};
  return (
    <div className="grid max-w-2xl gap-6">
      <h1 className="text-2xl font-extrabold tracking-tight">{t("station.setupTitle")}</h1>
      <Form method="post" reloadDocument className="card">
        <p className="mb-5">{t("station.setupIntro", { site: siteName })}</p>
        <input type="hidden" name="intent" value="create" />
        <Field label={t("station.deviceName")} name="name" required placeholder={t("station.deviceNamePlaceholder")} error={errors.name && t(errors.name)} />
        <button type="submit" className="btn-primary">
          {t("station.setupSubmit")}
        </button>
      </Form>
      {devices.length > 0 ? (
        <section className="card" aria-labelledby="devices">
          <h2 id="devices" className="mb-3 text-lg font-extrabold">
            {t("station.devices")}
          </h2>
          <RetireList items={devices.map((d) => ({ id: d.id, name: d.name, lastUsedAt: d.lastSeenAt }))} intent="retire" idField="deviceId" buttonLabel={t("station.revoke")} />
        </section>
      ) : null}
    </div>
  );
}
