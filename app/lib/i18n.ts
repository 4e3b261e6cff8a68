import i18next, { type i18n as I18n } from "i18next";
import { initReactI18next } from "react-i18next";
import { en } from "./locales/en";
import { es } from "./locales/es";

export const languages = ["en", "es"] as const;
export type Language = (typeof languages)[number];
export const languageNames: Record<Language, string> = { en: "English", es: "Español" };
export const LANGUAGE_COOKIE = "cw_lang";

export const isLanguage = (s: unknown): s is Language => languages.includes(s as Language);

const instances = new Map<Language, I18n>();

/** One ready i18next instance per language, built synchronously from bundled resources. */
export function getI18n(lang: Language): I18n {
  let instance = instances.get(lang);
  if (!instance) {
    instance = i18next.createInstance();
    instance.use(initReactI18next).init({
      lng: lang,
      fallbackLng: "en",
      resources: { en: { translation: en }, es: { translation: es } },
      initAsync: false,
      interpolation: { escapeValue: false },
      returnNull: false,
    });
    instances.set(lang, instance);
  }
  return instance;
}

/** Picks the language: explicit quick-switch cookie, then the user's setting, then the browser's. */
export function resolveLanguage(cookieValue: string | null, userLanguage: string | null | undefined, acceptLanguage: string | null): Language {
  if (isLanguage(cookieValue)) return cookieValue;
  if (isLanguage(userLanguage)) return userLanguage;
  const preferred = (acceptLanguage ?? "").split(",").map((p) => p.trim().slice(0, 2).toLowerCase());
  return preferred.find(isLanguage) ?? "en";
}
