import { useState } from "react";
import { useTranslation } from "react-i18next";

/** A big keypad for a temperature in the site's unit: digits, one decimal point, minus, delete. */
export function TemperatureKeypad({ name, unit, label, error, defaultValue = "" }: { name: string; unit: "F" | "C"; label: string; error?: string; defaultValue?: string }) {
  const { t } = useTranslation();
  const [value, setValue] = useState(defaultValue);
  const press = (k: string) =>
    setValue((v) => {
      if (k === "del") return v.slice(0, -1);
      if (k === "-") return v.startsWith("-") ? v.slice(1) : `-${v}`;
      if (k === "." && v.includes(".")) return v;
      if (v.replace("-", "").length >= 5) return v;
      return v + k;
    });
  const key = "flex h-18 items-center justify-center rounded-2xl border-2 border-line bg-white text-3xl font-extrabold active:bg-glacier-light";
  return (
    <div className="w-full max-w-sm">
      <label htmlFor={`f-${name}`} className="label">
        {label}
      </label>
      <div className="relative mb-3">
        <input
          id={`f-${name}`}
          name={name}
          inputMode="decimal"
          autoComplete="off"
          value={value}
          onChange={(e) => setValue(e.target.value.replace(/[^\d.-]/g, ""))}
          className="field h-20 pr-16 text-right text-4xl font-extrabold"
          aria-invalid={error ? true : undefined}
          aria-describedby={error ? `f-${name}-error` : undefined}
        />
        <span className="absolute top-1/2 right-4 -translate-y-1/2 text-2xl font-bold text-ink-soft">°{unit}</span>
      </div>
      {error ? (
        <p id={`f-${name}-error`} className="field-error mb-2" role="alert">
          {error}
        </p>
      ) : null}
      <div className="grid grid-cols-3 gap-3" role="group" aria-label={t("keypad.label")}>
        {["7", "8", "9", "4", "5", "6", "1", "2", "3", "-", "0", "."].map((k) => (
          <button key={k} type="button" className={key} onClick={() => press(k)} aria-label={k === "-" ? t("keypad.minus") : k === "." ? t("keypad.point") : k}>
            {k === "-" ? "±" : k}
          </button>
        ))}
        <button type="button" className={`${key} col-span-3 text-lg`} onClick={() => press("del")}>
          {t("keypad.delete")}
        </button>
      </div>
    </div>
  );
}
