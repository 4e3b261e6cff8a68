import type { TFunction } from "i18next";
import { useMemo, useSyncExternalStore } from "react";
import { useTranslation } from "react-i18next";
import { useNavigate } from "react-router";
import type { CardData } from "~/server/station-entry.server";

export const verdictStyle = {
  ahead: "border-pine bg-pine-light text-pine",
  tight: "border-amber bg-amber-light text-amber",
  behind: "border-ember bg-ember-light text-ember",
} as const;

/** Minutes and seconds to go, or past, in a compact form for arm's length. */
export function countdown(ms: number) {
  const sign = ms < 0 ? "−" : "";
  const m = Math.floor(Math.abs(ms) / 60_000);
  return m >= 60 ? `${sign}${Math.floor(m / 60)} h ${String(m % 60).padStart(2, "0")} min` : `${sign}${m} min`;
}

// A formatter is costly to make and the live view formats a few times per card: one per language and zone.
const clocks = new Map<string, Intl.DateTimeFormat>();
export function clock(ms: number, timeZone: string, lang: string) {
  const key = `${lang}|${timeZone}`;
  let f = clocks.get(key);
  if (!f) clocks.set(key, (f = new Intl.DateTimeFormat(lang, { timeZone, hour: "2-digit", minute: "2-digit" })));
  return f.format(ms);
}

/** Cards the server renders into the page; the browser renders the rest once the page is live. */
export const FIRST_CARDS = 24;
const never = () => () => {};
/** False on the server and while the page hydrates, true in the browser from then on. */
export const useHydrated = () => useSyncExternalStore(never, () => true, () => false);

/**
 * The live view's cards: one translation hook for the list, and plain links whose taps the list
 * turns into client-side navigations (a site may have 200 batches cooling; a router link per card
 * costs its hooks 200 times on every render). The page arrives with the first FIRST_CARDS (two
 * screens of a tablet) and every card's data; the others follow as soon as it hydrates, so a busy
 * site's page is a fraction of the HTML to render, compress and send.
 */
export function BatchCards({
  cards,
  total = cards.length,
  now,
  timeZone,
  hrefOf,
  pendingOf,
}: {
  cards: CardData[];
  /** How many there are, when the page brought only the first ones' data (the station). */
  total?: number;
  now: number;
  timeZone: string;
  hrefOf: (id: string) => string;
  pendingOf: (id: string) => number;
}) {
  const { t, i18n } = useTranslation();
  const navigate = useNavigate();
  const onClick = (e: React.MouseEvent<HTMLUListElement>) => {
    if (e.defaultPrevented || e.button !== 0 || e.metaKey || e.ctrlKey || e.shiftKey || e.altKey) return;
    const a = (e.target as HTMLElement).closest("a[data-card-link]");
    if (!a) return;
    e.preventDefault();
    navigate(a.getAttribute("href")!);
  };
  // The words every card shares, translated once for the list.
  const labels = useMemo(() => cardLabels(t), [t, i18n.language]);
  const shown = useHydrated() ? cards : cards.slice(0, FIRST_CARDS);
  return (
    <ul className="grid gap-4 md:grid-cols-2" onClick={onClick} data-cards={total} data-shown={shown.length}>
      {shown.map((c) => (
        <BatchCard key={c.id} card={c} now={now} timeZone={timeZone} to={hrefOf(c.id)} pending={pendingOf(c.id)} t={t} labels={labels} lang={i18n.language} />
      ))}
    </ul>
  );
}

/**
 * A message with one value, translated once: the translation of the key with a marker for the value,
 * split around it (values are not escaped by the translations, React escapes the text).
 */
function template(t: TFunction, key: string, name: string): (value: string) => string {
  const marker = "\u0000";
  const parts = String(t(key, { [name]: marker })).split(marker);
  return parts.length === 2 ? (value) => parts[0] + value + parts[1] : (value) => String(t(key, { [name]: value }));
}

function cardLabels(t: TFunction) {
  return {
    lot: t("batch.lot"),
    lastReading: t("batch.lastReading"),
    late: t("batch.late"),
    allMet: t("batch.allMet"),
    verdict: { ahead: t("verdict.ahead"), tight: t("verdict.tight"), behind: t("verdict.behind") },
    age: template(t, "batch.age", "time"),
    nextLimit: template(t, "batch.nextLimit", "limit"),
    readingOverdue: template(t, "batch.readingOverdue", "time"),
    nextReading: template(t, "batch.nextReading", "time"),
  };
}
type CardLabels = ReturnType<typeof cardLabels>;

function BatchCard({ card, now, timeZone, to, pending, t, labels: l, lang }: { card: CardData; now: number; timeZone: string; to: string; pending: number; t: TFunction; labels: CardLabels; lang: string }) {
  const overdue = card.nextDueAt !== null && now > card.nextDueAt;
  return (
    <li>
      <a
        href={to}
        data-card-link=""
        className={`block rounded-2xl border-2 bg-white p-5 shadow-sm hover:border-glacier ${overdue ? "border-ember ring-4 ring-ember-light" : "border-line"}`}
        data-testid="batch-card"
      >
        <div className="flex items-start justify-between gap-3">
          <div>
            <p className="text-lg font-extrabold">{card.product}</p>
            <p className="text-sm text-ink-soft">
              {l.lot} {card.lotCode} · {l.age(countdown(now - card.startedAt).replace("−", ""))}
            </p>
          </div>
          <span className={`rounded-xl border-2 px-3 py-1 text-sm font-extrabold ${verdictStyle[card.verdict]}`} data-testid="verdict">
            {l.verdict[card.verdict]}
          </span>
        </div>
        <dl className="mt-4 grid grid-cols-2 gap-3 text-base">
          <div>
            <dt className="text-sm text-ink-soft">{l.lastReading}</dt>
            <dd className="text-xl font-extrabold">
              {card.lastReading ? `${card.lastReading.value} °${card.lastReading.unit}` : "—"}
              {card.lastReading?.late ? <span className="ml-2 rounded bg-amber-light px-1 text-sm text-amber">{l.late}</span> : null}
            </dd>
          </div>
          <div>
            <dt className="text-sm text-ink-soft">{card.nextStage ? l.nextLimit(`${card.nextStage.limit.value} °${card.nextStage.limit.unit}`) : l.allMet}</dt>
            <dd className="text-xl font-extrabold">
              {card.nextStage?.deadline ? (
                <>
                  {clock(card.nextStage.deadline, timeZone, lang)} <span className="text-base font-bold text-ink-soft">({countdown(card.nextStage.deadline - now)})</span>
                </>
              ) : (
                "—"
              )}
            </dd>
          </div>
        </dl>
        {pending > 0 ? (
          <p className="mt-3 rounded-lg bg-amber-light px-2 py-1 text-sm font-bold text-amber" data-testid="card-pending">
            {t("outbox.onCard", { count: pending })}
          </p>
        ) : null}
        <p className={`mt-3 text-sm font-bold ${overdue ? "text-ember" : "text-ink-soft"}`}>
          {card.nextDueAt === null ? null : overdue ? l.readingOverdue(countdown(now - card.nextDueAt).replace("−", "")) : l.nextReading(clock(card.nextDueAt, timeZone, lang))}
        </p>
      </a>
    </li>
  );
}
