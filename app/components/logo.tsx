// Chillwright's mark: a core-temperature curve falling through the two stage limits of a cooling
// rule inside a rounded tile, ending on a cold dot.
export function LogoMark({ className = "h-10 w-10" }: { className?: string }) {
  return (
    <svg viewBox="0 0 48 48" className={className} role="img" aria-label="Chillwright">
      <rect x="1" y="1" width="46" height="46" rx="12" fill="#0a6781" />
      <path d="M9 19h30M9 31h30" stroke="#7fc8db" strokeWidth="2" strokeDasharray="3 3" />
      <path d="M10 9c4 0 6 6 10 13s8 14 18 15" fill="none" stroke="#fff" strokeWidth="4" strokeLinecap="round" />
      <circle cx="38" cy="37" r="4" fill="#fff" />
      <circle cx="38" cy="37" r="2" fill="#0a6781" />
    </svg>
  );
}

export function Wordmark() {
  return (
    <span className="flex items-center gap-3">
      <LogoMark />
      <span className="text-xl font-extrabold tracking-tight text-ink">Chillwright</span>
    </span>
  );
}
