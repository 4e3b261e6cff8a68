import { useTranslation } from "react-i18next";
import { limitIn, type Limit, type RuleSet } from "~/lib/rule-sets";
import type { TemperatureUnit } from "~/lib/temperature";

// The rule's own figure in the site's unit (26.7 °C, not a rounded 27 °C).
const formatLimit = (limit: Limit, unit: TemperatureUnit) => `${limitIn(limit, unit)} °${unit}`;
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
              {t("home.stageLine", { from: formatLimit(s.from, unit), to: formatLimit(s.to, unit), hours: hours(s.withinMinutes) })}
            </p>
            {s.clockFrom === "previous-stage" ? (
              <p className="text-sm text-ink-soft">{t("home.clockPrevious", { n: i })}</p>
            ) : ruleSet.clockStartsAt === "upper-limit" ? (
              <p className="text-sm text-ink-soft">{t("home.clockStart", { from: formatLimit(ruleSet.stages[0].from, unit) })}</p>
            ) : (
              <p className="text-sm text-ink-soft">{t("home.clockBatchStart")}</p>
            )}
          </li>
        ))}
      </ol>
      <p className="mt-4 text-sm text-ink-soft">
        <span className="font-bold">{t("home.source")}:</span> {ruleSet.source}
      </p>
    </section>
  );
}
