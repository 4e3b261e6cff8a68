export type Role = "cook" | "manager" | "qa" | "admin";

export type NavItem = { key: "home" | "review" | "sharing" | "alerts" | "team" | "library" | "settings" | "station" | "sites" | "account"; to: string };

/** The shell's navigation for a role at a site: each role sees what it works with. */
export function navigationFor(role: Role | null, siteId: string | null): NavItem[] {
  const items: NavItem[] = [];
  if (siteId && role) {
    items.push({ key: "home", to: `/sites/${siteId}` });
    if (role !== "cook") items.push({ key: "review", to: `/sites/${siteId}/review` });
    // Read-only links for inspectors: the same people who export the records (can.shareRecords).
    if (role !== "cook") items.push({ key: "sharing", to: `/sites/${siteId}/sharing` });
    if (role === "manager" || role === "admin") items.push({ key: "alerts", to: `/sites/${siteId}/alerts` });
    if (role === "manager" || role === "admin") {
      items.push({ key: "team", to: `/sites/${siteId}/team` });
      items.push({ key: "library", to: `/sites/${siteId}/library` });
      items.push({ key: "settings", to: `/sites/${siteId}/settings` });
      items.push({ key: "station", to: `/sites/${siteId}/station-setup` });
    }
    if (role === "admin") items.push({ key: "sites", to: "/sites" });
  }
  items.push({ key: "account", to: "/account" });
  return items;
}
