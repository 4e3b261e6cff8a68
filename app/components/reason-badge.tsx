import { useTranslation } from "react-i18next";
import { getReason, type ReasonCode, type ReasonShape } from "~/lib/review-reasons";

const toneStyle = {
  ember: "border-ember bg-ember-light text-ember",
  amber: "border-amber bg-amber-light text-amber",
  glacier: "border-glacier bg-glacier-light text-glacier-dark",
} as const;

/** Each reason has its own outline, so a badge reads without colour too. */
export function ReasonShapeIcon({ shape }: { shape: ReasonShape }) {
  const common = { fill: "none", stroke: "currentColor", strokeWidth: 2.5, strokeLinejoin: "round" as const, strokeLinecap: "round" as const };
  return (
    <svg viewBox="0 0 20 20" width="18" height="18" aria-hidden="true" className="shrink-0">
      {shape === "octagon" ? <polygon points="6,1.5 14,1.5 18.5,6 18.5,14 14,18.5 6,18.5 1.5,14 1.5,6" {...common} fill="currentColor" /> : null}
      {shape === "triangle-down" ? <polygon points="2,3 18,3 10,18" {...common} fill="currentColor" /> : null}
      {shape === "triangle" ? <polygon points="10,2 18.5,17.5 1.5,17.5" {...common} /> : null}
      {shape === "clock" ? (
        <>
          <circle cx="10" cy="10" r="8" {...common} />
          <path d="M10 5.5V10l3 2" {...common} />
        </>
      ) : null}
      {shape === "square" ? <rect x="3" y="3" width="14" height="14" rx="1.5" {...common} /> : null}
      {shape === "diamond" ? <polygon points="10,1.5 18.5,10 10,18.5 1.5,10" {...common} /> : null}
      {shape === "circle" ? <circle cx="10" cy="10" r="7.5" {...common} /> : null}
    </svg>
  );
}

export function ReasonBadge({ code }: { code: ReasonCode }) {
  const { t } = useTranslation();
  const reason = getReason(code);
  return (
    <span className={`inline-flex items-center gap-1.5 rounded-lg border-2 px-2 py-0.5 text-sm font-bold whitespace-nowrap ${toneStyle[reason.tone]}`} data-reason={code}>
      <ReasonShapeIcon shape={reason.shape} />
      {t(`reviewReason.${code}`)}
    </span>
  );
}
