import { useTranslation } from "react-i18next";
import { Form, useLocation } from "react-router";

/** One tap switches between English and Spanish; the choice sticks to this device. */
export function LanguageSwitch({ className = "" }: { className?: string }) {
  const { t, i18n } = useTranslation();
  const location = useLocation();
  const other = i18n.language === "es" ? "en" : "es";
  return (
    <Form method="post" action="/language" reloadDocument className={className}>
      <input type="hidden" name="lang" value={other} />
      <input type="hidden" name="back" value={location.pathname + location.search} />
      <button type="submit" className="btn-quiet min-h-12 px-4 text-sm" lang={other} aria-label={`${t("app.language")}: ${t("app.switchTo")}`}>
        <svg viewBox="0 0 24 24" className="h-5 w-5" aria-hidden="true" fill="none" stroke="currentColor" strokeWidth="2">
          <circle cx="12" cy="12" r="9" />
          <path d="M3 12h18M12 3c3 3.5 3 14.5 0 18M12 3c-3 3.5-3 14.5 0 18" />
        </svg>
        {t("app.switchTo")}
      </button>
    </Form>
  );
}
