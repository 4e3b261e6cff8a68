import { useTranslation } from "react-i18next";
import { Wordmark } from "./logo";

/** The one error screen: a message per status, a way home, and a stack only in development. */
export function ErrorPage({ status, stack }: { status: number; stack?: string }) {
  const { t } = useTranslation();
  const message = status === 404 ? t("errors.notFound") : status === 403 ? t("errors.forbidden") : t("errors.generic");
  return (
    <main className="mx-auto flex max-w-xl flex-col gap-6 p-8">
      <Wordmark />
      <div className="card">
        <p className="text-sm font-bold text-ink-soft">{status}</p>
        <h1 className="mt-1 text-xl font-extrabold">{message}</h1>
        <a href="/" className="btn-primary mt-6">
          {t("errors.back")}
        </a>
      </div>
      {stack ? <pre className="overflow-auto rounded-xl bg-white p-4 text-sm">{stack}</pre> : null}
    </main>
  );
}
