import { useTranslation } from "react-i18next";
import type { RuleSet } from "~/lib/rule-sets";
import { formatTemperature, type TemperatureUnit } from "~/lib/temperature";

const hours = (minutes: number) => (minutes % 60 === 0 ? `${minutes / 60} h` : `${(minutes / 60).toFixed(1)} h`);

/** The critical limits a site cools to, in its own unit, with the rule's source. */
export function RuleSetCard({ ruleSet, unit }: { ruleSet: RuleSet; unit: TemperatureUnit }) {
  const { t } = useTranslation();
  return (
    <section className="card" aria-labelledby="rule-title">
      <h2 id="rule-title" className="text-sm font-bold tracking-wide text-ink-soft uppercase">
        {t("home.ruleInForce")}
      </h2>
      <p className="mt-1 text-lg font-extrabold">{ruleSet.name}</p>
      <ol className="mt-4 grid gap-3 sm:grid-cols-2">
        {ruleSet.stages.map((s, i) => (
          <li key={i} className="rounded-xl bg-frost p-4">
            <p className="text-sm font-bold text-glacier-dark">{t("home.stage", { n: i + 1 })}</p>
            <p className="text-lg font-bold">
              {t("home.stageLine", { from: formatTemperature(s.fromC, unit), to: formatTemperature(s.toC, unit), hours: hours(s.withinMinutes) })}
            </p>
            <p className="text-sm text-ink-soft">
              {s.clockFrom === "start" ? t("home.clockStart", { from: formatTemperature(ruleSet.stages[0].fromC, unit) }) : t("home.clockPrevious", { n: i })}
            </p>
          </li>
        ))}
      </ol>
      <p className="mt-4 text-sm text-ink-soft">
        <span className="font-bold">{t("home.source")}:</span> {ruleSet.source}
      </p>
    </section>
  );
}
