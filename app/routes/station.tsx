import { eq } from "drizzle-orm";
import { useMemo, useState } from "react";
import { useTranslation } from "react-i18next";
import { data, Form, Link, redirect } from "react-router";
import { z } from "zod";
import { sites, stationDevices } from "~db/schema";
import { BatchCards, FIRST_CARDS, useHydrated } from "~/components/batch-card";
import { useLiveNow } from "~/components/use-live-now";
import { PendingNotice, usePending } from "~/components/reading-form";
import { listActive } from "~/server/batches.server";
import { cardFor, type CardData } from "~/server/station-entry.server";
import { Notice } from "~/components/frame";
import { LanguageSwitch } from "~/components/language-switch";
import { Wordmark } from "~/components/logo";
import { PinPad } from "~/components/pin-pad";
import { recordAudit } from "~/server/audit.server";
import { db } from "~/server/db.server";
import { isUuid } from "~/server/guards.server";
import {
  clearStationCookies,
  getStationCookId,
  getStationDevice,
  listStationPeople,
  STATION_COOK_COOKIE,
  stationCookCookie,
  verifyStationPin,
} from "~/server/station.server";
import type { Route } from "./+types/station";

export const meta: Route.MetaFunction = () => [{ title: "Station · Chillwright" }];

const StationActionSchema = z.discriminatedUnion("intent", [
  z.object({ intent: z.literal("pin"), userId: z.string().refine(isUuid), pin: z.string().regex(/^\d{4,6}$/), next: z.string().regex(/^\/station(\/[\w/-]*)?$/).optional().catch(undefined) }),
  z.object({ intent: z.literal("done") }),
  z.object({ intent: z.literal("retire"), userId: z.string().refine(isUuid), pin: z.string().regex(/^\d{4,6}$/) }),
]);

export async function loader({ request }: Route.LoaderArgs) {
  const device = await getStationDevice(request);
  if (!device) return { station: null, people: [], cook: null, cards: "[]", moreCards: "[]", cardCount: 0, now: Date.now(), timeZone: "UTC", next: null };
  const [people, [site]] = await Promise.all([listStationPeople(device.siteId), db.select().from(sites).where(eq(sites.id, device.siteId))]);
  const cookId = getStationCookId(request, device);
  const cook = people.find((p) => p.id === cookId) ?? null;
  const now = Date.now();
  const active = await listActive([site], now);
  const next = new URL(request.url).searchParams.get("next");
  return {
    station: { name: device.name, siteName: device.siteName },
    people: people.map((p) => ({ id: p.id, name: p.name, role: p.role, locked: p.locked, hasPin: p.hasPin })),
    cook: cook ? { id: cook.id, name: cook.name } : null,
    // JSON strings: the router's own encoding of 200 cards' few thousand values was a sixth of a
    // poll's work in a CPU profile (17 %); JSON.stringify here and JSON.parse in the browser replace it.
    // The cards the server renders apart from the rest, so it parses only those back: this
    // component fell from 5.1 % to 2.7 % of a saturated page's CPU profile.
    ...cardStrings(active.map((b) => cardFor(b.batch, b.product.name, b.readings, b.assessment, site.readingIntervalMinutes))),
    now,
    timeZone: site.timeZone,
    next: next && /^\/station(\/|$)/.test(next) ? next : null,
  };
}

function cardStrings(all: CardData[]) {
  return { cards: JSON.stringify(all.slice(0, FIRST_CARDS)), moreCards: JSON.stringify(all.slice(FIRST_CARDS)), cardCount: all.length };
}

export async function action({ request }: Route.ActionArgs) {
  const device = await getStationDevice(request);
  if (!device) throw data("Not a station", { status: 401 });
  const form = Object.fromEntries(await request.formData());
  const parsed = StationActionSchema.safeParse(form);
  if (!parsed.success) return data({ error: "wrong" as const, attemptsLeft: undefined, userId: String(form.userId ?? ""), intent: String(form.intent ?? "") }, { status: 400 });
  const input = parsed.data;
  if (input.intent === "done") {
    return redirect("/station", { headers: { "Set-Cookie": `${STATION_COOK_COOKIE}=; Path=/; HttpOnly; SameSite=Lax; Max-Age=0` } });
  }
  const result = await verifyStationPin(device, input.userId, input.pin);
  if (!result.ok) {
    return data({ error: result.reason, attemptsLeft: result.attemptsLeft, userId: input.userId, intent: input.intent }, { status: result.reason === "unknown" ? 404 : 400 });
  }
  if (input.intent === "retire") {
    const people = await listStationPeople(device.siteId);
    const role = people.find((p) => p.id === result.userId)?.role;
    if (role !== "manager" && role !== "admin") throw data("Forbidden", { status: 403 });
    await db.transaction(async (tx) => {
      await tx.update(stationDevices).set({ revokedAt: new Date() }).where(eq(stationDevices.id, device.id));
      await recordAudit(tx, {
        actor: { kind: "station", userId: result.userId, deviceId: device.id },
        organisationId: device.organisationId,
        siteId: device.siteId,
        action: "station.retired",
        entity: "station_device",
        entityId: device.id,
      });
    });
    const headers = new Headers();
    for (const c of clearStationCookies()) headers.append("Set-Cookie", c);
    return redirect("/signin", { headers });
  }
  const to = input.intent === "pin" && input.next ? input.next : "/station";
  return redirect(to, { headers: { "Set-Cookie": stationCookCookie(device.id, result.userId) } });
}

export default function Station({ loaderData, actionData }: Route.ComponentProps) {
  const { t } = useTranslation();
  const { station, people, cook, timeZone, next } = loaderData;
  // The first cards are on the page as it arrives; the rest are read once it is live.
  const hydrated = useHydrated();
  const first = useMemo(() => JSON.parse(loaderData.cards) as CardData[], [loaderData.cards]);
  const cards = useMemo(() => (hydrated ? first.concat(JSON.parse(loaderData.moreCards) as CardData[]) : first), [hydrated, first, loaderData.moreCards]);
  const cardCount = loaderData.cardCount;
  const now = useLiveNow(loaderData.now);
  const pending = usePending();
  const pendingByBatch = new Map<string, number>();
  for (const e of pending) pendingByBatch.set(e.batchId, (pendingByBatch.get(e.batchId) ?? 0) + 1);
  const [chosen, setChosen] = useState<string | null>(actionData?.userId || null);
  const [retiring, setRetiring] = useState(actionData?.intent === "retire");

  if (!station) {
    return (
      <main className="mx-auto grid max-w-xl gap-6 p-8">
        <Wordmark />
        <Notice tone="info">{t("station.notStation")}</Notice>
        <a href="/signin" className="btn-primary">
          {t("signin.title")}
        </a>
      </main>
    );
  }
  const person = people.find((p) => p.id === chosen);
  const errorText =
    actionData?.error === "wrong"
      ? t("station.wrongPin", { count: actionData.attemptsLeft ?? 0 })
      : actionData?.error === "locked"
        ? t("station.locked")
        : actionData?.error === "device_limited"
          ? t("station.deviceLimited")
          : undefined;
  const managers = people.filter((p) => p.role === "manager" || p.role === "admin");

  return (
    <div className="flex min-h-screen flex-col">
      <header className="flex flex-wrap items-center gap-3 border-b border-line bg-white px-4 py-3">
        <Wordmark />
        <span className="rounded-xl bg-frost px-3 py-2 font-bold" data-testid="station-name">
          {station.siteName} · {station.name}
        </span>
        <LanguageSwitch className="ml-auto" />
      </header>
      <main id="main" className="mx-auto w-full max-w-4xl flex-1 px-4 py-6">
        {cook ? (
          <section className="card text-center">
            <h1 className="text-2xl font-extrabold">{t("station.loggedInAs", { name: cook.name })}</h1>
            <p className="mt-2 text-lg text-ink-soft">{t("station.readyFor", { name: cook.name.split(" ")[0] })}</p>
            <div className="mt-6 flex flex-wrap justify-center gap-3">
              <Link to="/station/batches/new" className="btn-primary min-h-16 px-8 text-lg">
                {t("batch.start")}
              </Link>
              <Form method="post">
                <input type="hidden" name="intent" value="done" />
                <button type="submit" className="btn-quiet min-h-16 px-8 text-lg">
                  {t("station.done")}
                </button>
              </Form>
            </div>
          </section>
        ) : person ? (
          <Form method="post" className="card" key={`${person.id}-${retiring}`}>
            <input type="hidden" name="intent" value={retiring ? "retire" : "pin"} />
            <input type="hidden" name="userId" value={person.id} />
            {next ? <input type="hidden" name="next" value={next} /> : null}
            <button type="button" className="btn-quiet mb-4" onClick={() => setChosen(null)}>
              ← {t("station.back")}
            </button>
            {person.locked ? <Notice tone="error">{t("station.locked")}</Notice> : !person.hasPin ? <Notice tone="warn">{t("station.noPin")}</Notice> : null}
            <PinPad label={t("station.enterPin", { name: person.name })} error={errorText} />
          </Form>
        ) : (
          <section>
            <h1 className="text-2xl font-extrabold">{retiring ? t("station.exit") : t("station.title")}</h1>
            <p className="mt-1 mb-5 text-lg text-ink-soft">{retiring ? t("station.exitHint") : t("station.tapName")}</p>
            <ul className="grid grid-cols-2 gap-4 md:grid-cols-3">
              {(retiring ? managers : people).map((p) => (
                <li key={p.id}>
                  <button
                    type="button"
                    onClick={() => setChosen(p.id)}
                    className="flex min-h-24 w-full flex-col items-start justify-center rounded-2xl border-2 border-line bg-white px-5 py-4 text-left hover:border-glacier"
                  >
                    <span className="text-lg font-extrabold">{p.name}</span>
                    <span className="text-sm text-ink-soft">
                      {t(`roles.${p.role}`)}
                      {p.locked ? ` · ${t("team.pinLocked")}` : ""}
                    </span>
                  </button>
                </li>
              ))}
            </ul>
            <button type="button" className="btn-quiet mt-8 text-sm" onClick={() => setRetiring((r) => !r)}>
              {retiring ? t("station.back") : t("station.exit")}
            </button>
          </section>
        )}
        <div className="mt-6">
          <PendingNotice count={pending.length} />
        </div>
        {cardCount > 0 ? (
          <section className="mt-8" aria-labelledby="active">
            <h2 id="active" className="mb-3 text-xl font-extrabold">
              {t("batch.active", { count: cardCount })}
            </h2>
            <BatchCards cards={cards} total={cardCount} now={now} timeZone={timeZone} hrefOf={(id) => `/station/batches/${id}`} pendingOf={(id) => pendingByBatch.get(id) ?? 0} />
          </section>
        ) : null}
      </main>
      <footer className="border-t border-line px-6 py-4 text-sm text-ink-soft">{t("app.caution")}</footer>
    </div>
  );
}
