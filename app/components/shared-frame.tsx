import { useTranslation } from "react-i18next";
import { isRouteErrorResponse, Link, useParams } from "react-router";
import { siteTime } from "~/lib/site-time";
import { ErrorPage } from "./error-page";
import { LanguageSwitch } from "./language-switch";
import { Wordmark } from "./logo";

// The frame of the read-only pages a share link opens: no menu, no account, no forms that change
// anything; who shared what, for which days, until when; and the caution.

export type SharedHeader = { organisation: string; site: string; timeZone: string; label: string; from: string; to: string; expiresAt: number };

export function SharedFrame({ header, children }: { header: SharedHeader; children: React.ReactNode }) {
  const { t, i18n } = useTranslation();
  return (
    <div className="flex min-h-screen flex-col">
      <header className="border-b border-line bg-white print:border-b-2">
        <div className="mx-auto flex w-full max-w-6xl flex-wrap items-start gap-x-6 gap-y-3 px-4 py-4 sm:px-6">
          <div className="flex flex-1 flex-wrap items-center gap-3">
            <Wordmark />
            <span className="rounded-lg bg-ink px-2 py-1 text-sm font-extrabold tracking-wide text-white uppercase print:border print:border-ink print:bg-white print:text-ink" data-testid="read-only">
              {t("share.view.readOnly")}
            </span>
          </div>
          <div className="flex items-center gap-2 print:hidden">
            <button type="button" className="btn-quiet min-h-12 px-4 text-sm" onClick={() => window.print()}>
              {t("share.view.print")}
            </button>
            <LanguageSwitch />
          </div>
          <dl className="grid w-full gap-x-6 gap-y-1 text-base sm:grid-cols-2" data-testid="share-header">
            <div>
              <dt className="sr-only">{t("recordsSheet.organisation")}</dt>
              <dd className="text-xl font-extrabold">
                {header.organisation} · {header.site}
              </dd>
            </div>
            <div className="sm:text-right">
              <dt className="sr-only">{t("share.label")}</dt>
              <dd className="text-ink-soft">{t("share.view.sharedFor", { label: header.label })}</dd>
            </div>
            <div>
              <dt className="sr-only">{t("share.range")}</dt>
              <dd className="font-bold">{t("share.view.period", { from: header.from, to: header.to, zone: header.timeZone })}</dd>
            </div>
            <div className="sm:text-right">
              <dt className="sr-only">{t("share.expires")}</dt>
              <dd className="text-ink-soft">{t("share.view.expires", { time: siteTime(header.expiresAt, header.timeZone, i18n.language) })}</dd>
            </div>
          </dl>
        </div>
      </header>
      <main id="main" className="mx-auto w-full max-w-6xl flex-1 px-4 py-6 sm:px-6">
        <p className="mb-6 rounded-xl border-l-8 border-amber bg-amber-light px-4 py-3 text-base font-semibold" data-testid="caution">
          <span className="font-extrabold">{t("share.view.cautionTitle")}: </span>
          {t("app.caution")}
        </p>
        {children}
      </main>
    </div>
  );
}

/** A shared page's answer keeps the headers of a refusal it threw (the 405's Allow). */
export const sharedPageHeaders = ({ errorHeaders, loaderHeaders }: { errorHeaders?: Headers; loaderHeaders: Headers }) => errorHeaders ?? loaderHeaders;

type Refusal = { reason?: string; expiresAt?: number; timeZone?: string };

/**
 * What a shared page shows when the link cannot be used (unknown, expired, withdrawn), when a write
 * is attempted, or when a record is not part of what was shared. The gone pages say only that.
 */
export function SharedErrorBoundary({ error }: { error: unknown }) {
  const { t, i18n } = useTranslation();
  const { token } = useParams();
  if (!isRouteErrorResponse(error)) return <ErrorPage status={500} />;
  const body = (typeof error.data === "object" && error.data ? error.data : {}) as Refusal;
  const reason = body.reason ?? (error.status === 404 ? "notInScope" : "");
  const page = (title: string, detail?: string, back = false) => (
    <main className="mx-auto flex max-w-xl flex-col gap-6 p-8">
      <Wordmark />
      <div className="card" data-testid="share-refusal">
        <p className="text-sm font-bold text-ink-soft">{error.status}</p>
        <h1 className="mt-1 text-xl font-extrabold">{title}</h1>
        {detail ? <p className="mt-3 text-base">{detail}</p> : null}
        {back && token ? (
          <Link to={`/shared/${token}`} className="btn-quiet mt-6">
            ← {t("share.view.back")}
          </Link>
        ) : null}
      </div>
    </main>
  );
  if (reason === "unknown") return page(t("share.gone.unknown"), t("share.gone.unknownBody"));
  if (reason === "expired" && body.expiresAt && body.timeZone) return page(t("share.gone.expired"), t("share.gone.expiredAt", { time: siteTime(body.expiresAt, body.timeZone, i18n.language) }));
  if (reason === "revoked") return page(t("share.gone.revoked"), t("share.gone.revokedBody"));
  if (reason === "readOnly") return page(t("share.gone.readOnly"), undefined, true);
  if (reason === "notInScope") return page(t("share.gone.notInScope"), undefined, true);
  return <ErrorPage status={error.status} />;
}
