import { useState } from "react";
import { useTranslation } from "react-i18next";

/** A big numeric keypad for wet or gloved hands; a hardware keyboard works in the field too. */
export function PinPad({ name = "pin", label, maxLength = 6, error }: { name?: string; label: string; maxLength?: number; error?: string }) {
  const { t } = useTranslation();
  const [value, setValue] = useState("");
  const press = (d: string) => setValue((v) => (v.length < maxLength ? v + d : v));
  const key = "flex h-20 items-center justify-center rounded-2xl border-2 border-line bg-white text-3xl font-extrabold active:bg-glacier-light";
  return (
    <div className="mx-auto w-full max-w-sm">
      <label htmlFor={`f-${name}`} className="label text-center">
        {label}
      </label>
      <input
        id={`f-${name}`}
        name={name}
        type="password"
        inputMode="numeric"
        autoComplete="off"
        pattern="\d{4,6}"
        maxLength={maxLength}
        value={value}
        onChange={(e) => setValue(e.target.value.replace(/\D/g, "").slice(0, maxLength))}
        className="field mb-2 h-16 text-center text-3xl tracking-[0.5em]"
        aria-invalid={error ? true : undefined}
        aria-describedby={error ? `f-${name}-error` : undefined}
        autoFocus
      />
      {error ? (
        <p id={`f-${name}-error`} className="field-error mb-2 text-center" role="alert">
          {error}
        </p>
      ) : null}
      <div className="grid grid-cols-3 gap-3" role="group" aria-label={t("station.pin")}>
        {["1", "2", "3", "4", "5", "6", "7", "8", "9"].map((d) => (
          <button key={d} type="button" className={key} onClick={() => press(d)}>
            {d}
          </button>
        ))}
        <button type="button" className={`${key} text-lg`} onClick={() => setValue("")}>
          {t("station.clear")}
        </button>
        <button type="button" className={key} onClick={() => press("0")}>
          0
        </button>
        <button type="submit" className="flex h-20 items-center justify-center rounded-2xl bg-glacier text-2xl font-extrabold text-white active:bg-glacier-dark">
          {t("station.ok")}
        </button>
      </div>
    </div>
  );
}
