import { useState } from "react";
import { useTranslation } from "react-i18next";
import { data, Form, useNavigation } from "react-router";
import { z } from "zod";
import { Field, Notice } from "~/components/frame";
import { fieldErrors } from "~/lib/forms";
import { lastWeek } from "~/lib/records-export";
import { expiryOf, localDateTimeOf, SHARE_DEFAULT_EXPIRY_DAYS, SHARE_MAX_EXPIRY_DAYS, ShareFormSchema, statusOf } from "~/lib/share-links";
import { siteTime } from "~/lib/site-time";
import { can, isUuid, notFound, requireRole } from "~/server/guards.server";
import { createShareLink, emailShareLink, listShareLinks, listShareUses, revokeShareLink, shareUrl } from "~/server/share-links.server";
import type { Route } from "./+types/site-sharing";

export const meta: Route.MetaFunction = () => [{ title: "Share records · Chillwright" }];

const USES_SHOWN = 50;
const RevokeSchema = z.object({ intent: z.literal("revoke"), linkId: z.string().refine(isUuid, "share.errors.unknownLink") });

export async function loader({ request, params }: Route.LoaderArgs) {
  const { site } = await requireRole(request, can.shareRecords, params.siteId);
  const now = Date.now();
  const links = await listShareLinks(site.id);
  const uses = await listShareUses(
    links.map((l) => l.id),
    USES_SHOWN,
  );
  const week = lastWeek(site.timeZone, now);
  return {
    siteName: site.name,
    timeZone: site.timeZone,
    defaults: { fromDate: week.from, toDate: week.to, expiresAt: localDateTimeOf(now + SHARE_DEFAULT_EXPIRY_DAYS * 86_400_000, site.timeZone), latest: localDateTimeOf(now + SHARE_MAX_EXPIRY_DAYS * 86_400_000, site.timeZone) },
    links: links.map((l) => {
      const times = { expiresAt: l.expiresAt.getTime(), revokedAt: l.revokedAt?.getTime() ?? null };
      return {
        id: l.id,
        label: l.label,
        fromDate: l.fromDate,
        toDate: l.toDate,
        ...times,
        status: statusOf(times, now),
        madeBy: l.madeBy,
        uses: l.uses,
        lastUseAt: l.lastUseAt?.getTime() ?? null,
        log: (uses.get(l.id) ?? []).map((u) => ({ id: u.id, at: u.at.getTime(), method: u.method, target: u.target, path: u.path, outcome: u.outcome, status: u.status, address: u.address })),
      };
    }),
  };
}

type Created = { url: string; emailedTo: string | null; emailFailed: boolean };

export async function action({ request, params }: Route.ActionArgs) {
  const { user, site } = await requireRole(request, can.shareRecords, params.siteId);
  const form = Object.fromEntries(await request.formData());
  const values = Object.fromEntries(Object.entries(form).map(([k, v]) => [k, String(v)]));
  if (form.intent === "revoke") {
    const parsed = RevokeSchema.safeParse(form);
    if (!parsed.success || !(await revokeShareLink(user, site, parsed.data.linkId))) notFound();
    return data({ created: null as Created | null, revoked: true, values: {} as Record<string, string>, errors: {} as Record<string, string> });
  }
  const parsed = ShareFormSchema.safeParse(form);
  if (!parsed.success) return data({ created: null, revoked: false, values, errors: fieldErrors(parsed.error) }, { status: 400 });
  const expiry = expiryOf(parsed.data, site.timeZone);
  if (!expiry.ok) return data({ created: null, revoked: false, values, errors: { [expiry.field]: expiry.message } as Record<string, string> }, { status: 400 });
  const { token, link } = await createShareLink(user, site, { label: parsed.data.label, fromDate: parsed.data.fromDate, toDate: parsed.data.toDate, expiresAt: expiry.at });
  const to = parsed.data.email ?? null;
  let emailFailed = false;
  if (to) {
    // The link exists whatever the mail server says: the page shows it, to copy and send by hand.
    await emailShareLink(user, site, link, token, to, user.language).catch((e) => {
      console.error("share link e-mail failed", e);
      emailFailed = true;
    });
  }
  // The full link is in this answer only; the database keeps its hash.
  return data({ created: { url: shareUrl(token), emailedTo: emailFailed ? null : to, emailFailed } as Created | null, revoked: false, values: {} as Record<string, string>, errors: {} as Record<string, string> });
}

function CopyLink({ url }: { url: string }) {
  const { t } = useTranslation();
  const [copied, setCopied] = useState(false);
  return (
    <div className="mt-3 grid gap-2 sm:grid-cols-[minmax(0,1fr)_auto]">
      <input readOnly value={url} aria-label={t("share.copy")} className="field font-mono text-sm" onFocus={(e) => e.currentTarget.select()} data-testid="new-share-link" />
      <button
        type="button"
        className="btn-primary min-h-12"
        onClick={(e) => {
          // Where the clipboard is refused (no permission, no secure context), the link is left selected to copy by hand.
          const field = e.currentTarget.previousElementSibling as HTMLInputElement | null;
          const selectIt = () => field?.select();
          if (!navigator.clipboard) return selectIt();
          navigator.clipboard.writeText(url).then(() => setCopied(true), selectIt);
        }}
      >
        {copied ? `✓ ${t("share.copied")}` : t("share.copy")}
      </button>
    </div>
  );
}

const statusStyle = { active: "bg-pine-light text-pine", expired: "bg-frost text-ink-soft", revoked: "bg-ember-light text-ember" } as const;

export default function SiteSharing({ loaderData, actionData }: Route.ComponentProps) {
  const { t, i18n } = useTranslation();
  const { siteName, timeZone, defaults, links } = loaderData;
  const errors: Record<string, string> = actionData?.errors ?? {};
  const values: Record<string, string> = actionData?.values ?? {};
  const busy = useNavigation().state !== "idle";
  const when = (ms: number) => siteTime(ms, timeZone, i18n.language);
  // The log reads to the second: several uses often fall in one minute.
  const logTime = (ms: number) => new Intl.DateTimeFormat(i18n.language, { timeZone, day: "numeric", month: "short", hour: "2-digit", minute: "2-digit", second: "2-digit", timeZoneName: "short" }).format(ms);
  const err = (name: string) => (errors[name] ? t(errors[name]) : undefined);
  const [mode, setMode] = useState(values.expiry === "at" ? "at" : "days");
  return (
    <div className="grid gap-6">
      <div>
        <h1 className="text-2xl font-extrabold tracking-tight">{t("share.title", { site: siteName })}</h1>
        <p className="mt-1 max-w-3xl text-lg text-ink-soft">{t("share.intro")}</p>
      </div>
      {actionData?.created ? (
        <Notice tone={actionData.created.emailFailed ? "warn" : "ok"}>
          <p>{t("share.created")}</p>
          <CopyLink url={actionData.created.url} />
          {actionData.created.emailedTo ? <p className="mt-2">{t("share.emailed", { email: actionData.created.emailedTo })}</p> : null}
          {actionData.created.emailFailed ? <p className="mt-2">{t("share.emailFailed")}</p> : null}
        </Notice>
      ) : null}
      {actionData?.revoked ? <Notice tone="ok">{t("share.revokedNotice")}</Notice> : null}
      {errors.form ? <Notice tone="error">{t(errors.form)}</Notice> : null}

      {/* A new key after each link made: the form starts empty again. */}
      <Form key={actionData?.created?.url ?? "new"} method="post" className="card max-w-3xl" noValidate>
        <h2 className="mb-4 text-lg font-extrabold">{t("share.newLink")}</h2>
        <input type="hidden" name="intent" value="create" />
        <Field label={t("share.label")} name="label" required maxLength={120} placeholder={t("share.labelPlaceholder")} defaultValue={values.label} error={err("label")} />
        <div className="grid gap-x-4 sm:grid-cols-2">
          <Field label={t("share.from")} name="fromDate" type="date" required defaultValue={values.fromDate ?? defaults.fromDate} error={err("fromDate")} />
          <Field label={t("share.to")} name="toDate" type="date" required defaultValue={values.toDate ?? defaults.toDate} error={err("toDate")} />
        </div>
        <p className="-mt-3 mb-5 text-sm text-ink-soft">{t("share.rangeHint", { zone: timeZone })}</p>
        <fieldset className="mb-5">
          <legend className="label">{t("share.expiry")}</legend>
          <div className="grid gap-3 sm:grid-cols-2">
            <label className={`rounded-xl border-2 p-3 ${mode === "days" ? "border-glacier bg-glacier-light" : "border-line bg-white"}`}>
              <span className="flex items-center gap-3 font-bold">
                <input type="radio" name="expiry" value="days" checked={mode === "days"} onChange={() => setMode("days")} className="h-6 w-6 accent-glacier" />
                {t("share.expiryDays")}
              </span>
              <input name="expiresInDays" type="number" inputMode="numeric" min={1} max={SHARE_MAX_EXPIRY_DAYS} defaultValue={values.expiresInDays ?? SHARE_DEFAULT_EXPIRY_DAYS} aria-label={t("share.expiryDays")} aria-invalid={errors.expiresInDays ? true : undefined} aria-describedby={errors.expiresInDays ? "f-expiresInDays-error" : undefined} className="field mt-2" onFocus={() => setMode("days")} />
            </label>
            <label className={`rounded-xl border-2 p-3 ${mode === "at" ? "border-glacier bg-glacier-light" : "border-line bg-white"}`}>
              <span className="flex items-center gap-3 font-bold">
                <input type="radio" name="expiry" value="at" checked={mode === "at"} onChange={() => setMode("at")} className="h-6 w-6 accent-glacier" />
                {t("share.expiryAt")}
              </span>
              <input name="expiresAt" type="datetime-local" max={defaults.latest} defaultValue={values.expiresAt ?? defaults.expiresAt} aria-label={t("share.expiryAt")} aria-invalid={errors.expiresAt ? true : undefined} aria-describedby={errors.expiresAt ? "f-expiresAt-error" : undefined} className="field mt-2" onFocus={() => setMode("at")} />
            </label>
          </div>
          <p className="mt-1 text-sm text-ink-soft">{t("share.expiryHint", { days: SHARE_MAX_EXPIRY_DAYS })}</p>
          {(["expiry", "expiresInDays", "expiresAt"] as const).map((k) =>
            errors[k] ? (
              <p key={k} id={`f-${k}-error`} className="field-error" role="alert">
                {t(errors[k])}
              </p>
            ) : null,
          )}
        </fieldset>
        <Field label={t("share.email")} name="email" type="email" autoComplete="off" defaultValue={values.email} hint={t("share.emailHint")} error={err("email")} />
        <button type="submit" className="btn-primary" disabled={busy}>
          {t("share.create")}
        </button>
      </Form>

      <section className="card" aria-labelledby="share-links">
        <h2 id="share-links" className="mb-3 text-lg font-extrabold">
          {t("share.list")}
        </h2>
        {links.length === 0 ? <p className="text-ink-soft">{t("share.none")}</p> : null}
        <ul className="grid gap-4">
          {links.map((l) => (
            <li key={l.id} className="rounded-xl border-2 border-line p-4" data-testid="share-link">
              <div className="flex flex-wrap items-start justify-between gap-3">
                <div>
                  <p className="text-lg font-extrabold">
                    {l.label}{" "}
                    <span className={`ml-1 rounded-lg px-2 py-0.5 text-sm font-bold ${statusStyle[l.status]}`} data-testid="share-status">
                      {t(`share.statuses.${l.status}`)}
                    </span>
                  </p>
                  <dl className="mt-2 grid gap-x-6 gap-y-1 text-base sm:grid-cols-2">
                    <div>
                      <dt className="inline text-ink-soft">{t("share.range")}: </dt>
                      <dd className="inline font-bold">{t("share.rangeValue", { from: l.fromDate, to: l.toDate })}</dd>
                    </div>
                    <div>
                      <dt className="inline text-ink-soft">{t("share.expires")}: </dt>
                      <dd className="inline">
                        {when(l.expiresAt)}
                        {l.revokedAt ? ` · ${t("share.revokedOn", { time: when(l.revokedAt) })}` : ""}
                      </dd>
                    </div>
                    <div>
                      <dt className="inline text-ink-soft">{t("share.madeBy")}: </dt>
                      <dd className="inline">{l.madeBy}</dd>
                    </div>
                    <div>
                      <dt className="inline text-ink-soft">{t("share.uses")}: </dt>
                      <dd className="inline" data-testid="share-uses">
                        {l.uses} · {t("share.lastUse")}: {l.lastUseAt ? when(l.lastUseAt) : t("share.never")}
                      </dd>
                    </div>
                  </dl>
                </div>
                {l.status === "active" ? (
                  <Form method="post">
                    <input type="hidden" name="intent" value="revoke" />
                    <input type="hidden" name="linkId" value={l.id} />
                    <button type="submit" className="btn-quiet min-h-12 border-ember text-ember" disabled={busy}>
                      {t("share.revoke")}
                    </button>
                  </Form>
                ) : null}
              </div>
              <details className="mt-3">
                <summary className="cursor-pointer font-bold text-glacier-dark">{t("share.usesLog", { label: l.label, count: l.uses })}</summary>
                {l.log.length === 0 ? (
                  <p className="mt-2 text-ink-soft">{t("share.noUses")}</p>
                ) : (
                  <div className="mt-2 overflow-x-auto">
                    <table className="w-full min-w-[560px] text-left text-sm">
                      <thead>
                        <tr className="border-b border-line text-ink-soft">
                          <th className="py-2 pr-3">{t("share.when")}</th>
                          <th className="py-2 pr-3">{t("share.what")}</th>
                          <th className="py-2 pr-3">{t("share.outcome")}</th>
                          <th className="py-2">{t("share.address")}</th>
                        </tr>
                      </thead>
                      <tbody>
                        {l.log.map((u) => (
                          <tr key={u.id} className="border-b border-line last:border-0" data-testid="share-use">
                            <td className="py-2 pr-3 whitespace-nowrap">{logTime(u.at)}</td>
                            <td className="py-2 pr-3">
                              {t(`share.targets.${u.target}`, { defaultValue: u.target })}
                              <span className="block break-all text-ink-soft">
                                {u.method} {u.path}
                              </span>
                            </td>
                            <td className={`py-2 pr-3 font-bold ${u.outcome === "ok" ? "text-pine" : "text-ember"}`}>
                              {t(`share.outcomes.${u.outcome}`, { defaultValue: u.outcome })} ({u.status})
                            </td>
                            <td className="py-2">{u.address ?? t("share.noAddress")}</td>
                          </tr>
                        ))}
                      </tbody>
                    </table>
                    {l.uses > l.log.length ? <p className="mt-2 text-ink-soft">{t("share.usesLogLimit", { count: l.log.length })}</p> : null}
                  </div>
                )}
              </details>
            </li>
          ))}
        </ul>
      </section>
    </div>
  );
}
