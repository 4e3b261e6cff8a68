export type Role = "cook" | "manager" | "qa" | "admin";

export type NavItem = { key: "home" | "review" | "records" | "analytics" | "alerts" | "team" | "library" | "settings" | "station" | "sites" | "account"; to: string };

/** The shell's navigation for a role at a site: each role sees what it works with. */
export function navigationFor(role: Role | null, siteId: string | null): NavItem[] {
  const items: NavItem[] = [];
  if (siteId && role) {
    items.push({ key: "home", to: `/sites/${siteId}` });
    if (role !== "cook") items.push({ key: "review", to: `/sites/${siteId}/review` });
    if (role !== "cook") items.push({ key: "records", to: `/sites/${siteId}/records` });
    if (role !== "cook") items.push({ key: "analytics", to: `/sites/${siteId}/analytics` });
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
