/** A clock time with its day and zone, in the site's time zone: what every alert names a deadline by. */
export function siteTime(ms: number, timeZone: string, lang: string) {
  return new Intl.DateTimeFormat(lang, { timeZone, weekday: "short", day: "numeric", month: "short", hour: "2-digit", minute: "2-digit", timeZoneName: "short" }).format(ms);
}
