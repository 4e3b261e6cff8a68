import { useTranslation } from "react-i18next";
import { LanguageSwitch } from "./language-switch";
import { Wordmark } from "./logo";

/** The frame of the pages people see before signing in. */
export function PublicFrame({ title, children }: { title: string; children: React.ReactNode }) {
  const { t } = useTranslation();
  return (
    <div className="flex min-h-screen flex-col">
      <header className="flex items-center justify-between gap-4 px-6 py-4">
        <Wordmark />
        <LanguageSwitch />
      </header>
      <main id="main" className="flex flex-1 items-start justify-center px-4 pt-6 pb-16 sm:pt-16">
        <div className="card w-full max-w-md">
          <h1 className="mb-6 text-2xl font-extrabold tracking-tight">{title}</h1>
          {children}
        </div>
      </main>
      <footer className="px-6 pb-6 text-center text-sm text-ink-soft">{t("app.tagline")}</footer>
    </div>
  );
}

/** A labelled input with its error message tied to it for screen readers. */
export function Field({
  label,
  name,
  error,
  hint,
  ...input
}: { label: string; name: string; error?: string; hint?: string } & React.InputHTMLAttributes<HTMLInputElement>) {
  const id = `f-${name}`;
  const described = [error ? `${id}-error` : null, hint ? `${id}-hint` : null].filter(Boolean).join(" ") || undefined;
  return (
    <div className="mb-5">
      <label htmlFor={id} className="label">
        {label}
      </label>
      <input id={id} name={name} className="field" aria-invalid={error ? true : undefined} aria-describedby={described} {...input} />
      {hint ? (
        <p id={`${id}-hint`} className="mt-1 text-sm text-ink-soft">
          {hint}
        </p>
      ) : null}
      {error ? (
        <p id={`${id}-error`} className="field-error" role="alert">
          {error}
        </p>
      ) : null}
    </div>
  );
}

export function Notice({ tone = "info", children }: { tone?: "info" | "ok" | "warn" | "error"; children: React.ReactNode }) {
  const tones = {
    info: "border-glacier bg-glacier-light text-ink",
    ok: "border-pine bg-pine-light text-ink",
    warn: "border-amber bg-amber-light text-ink",
    error: "border-ember bg-ember-light text-ink",
  };
  return (
    <div role={tone === "error" ? "alert" : "status"} className={`mb-5 rounded-xl border-l-8 px-4 py-3 text-base font-semibold ${tones[tone]}`}>
      {children}
    </div>
  );
}

/** One figure of a summary, inside a <dl>: its name, the number large, a line of detail. */
export function Figure({ label, value, detail, testId }: { label: string; value: string; detail: string; testId: string }) {
  return (
    <div className="rounded-xl bg-frost p-4" data-testid={testId}>
      <dt className="text-sm font-bold text-ink-soft">{label}</dt>
      <dd>
        <span className="text-3xl font-extrabold">{value}</span>
        <span className="mt-1 block text-base text-ink-soft">{detail}</span>
      </dd>
    </div>
  );
}
