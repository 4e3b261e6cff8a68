import { describe, expect, it } from "vitest";
import { navigationFor } from "~/lib/navigation";

describe("navigation by role", () => {
  const keys = (role: Parameters<typeof navigationFor>[0]) => navigationFor(role, "s1").map((i) => i.key);
  it("cooks see their site and their account; QA also the review queue and the records", () => {
    expect(keys("cook")).toEqual(["home", "account"]);
    expect(keys("qa")).toEqual(["home", "review", "records", "analytics", "account"]);
  });
  it("managers also review, get alerts, and run the team, the library, the settings and the stations", () => {
    expect(keys("manager")).toEqual(["home", "review", "records", "analytics", "alerts", "team", "library", "settings", "station", "account"]);
  });
  it("administrators also manage the organisation's sites", () => {
    expect(keys("admin")).toEqual(["home", "review", "records", "analytics", "alerts", "team", "library", "settings", "station", "sites", "account"]);
  });
  it("someone with no site sees only their account", () => {
    expect(navigationFor(null, null).map((i) => i.key)).toEqual(["account"]);
  });
});
