// The invented demo scenario: a catering business with two kitchens, one in °F and one in °C.
// The README's sign-in table is this list.

export const DEMO_PASSWORD = "cool-down-demo";

export const demoOrganisation = { name: "Marlowe & Finch Catering", slug: "marlowe-finch" };

export const demoSites = [
  {
    key: "harbor",
    name: "Harbor Street Commissary",
    timeZone: "America/Chicago",
    temperatureUnit: "F" as const,
    ruleSetCode: "fda-3-501.14-a",
    readingIntervalMinutes: 30,
  },
  {
    key: "wattle",
    name: "Wattle Grove Kitchen",
    timeZone: "Australia/Melbourne",
    temperatureUnit: "C" as const,
    ruleSetCode: "fsanz-3.2.2-7",
    readingIntervalMinutes: 30,
  },
];

export const demoUsers = [
  { site: "harbor", role: "cook", name: "Tomás Reyes", email: "tomas@marlowe-finch.example", pin: "4821", language: "es" },
  { site: "harbor", role: "manager", name: "Dana Whitcombe", email: "dana@marlowe-finch.example", pin: "5930", language: "en" },
  { site: "harbor", role: "qa", name: "Priya Natarajan", email: "priya@marlowe-finch.example", pin: "6047", language: "en" },
  { site: "harbor", role: "admin", name: "Owen Castellano", email: "owen@marlowe-finch.example", pin: "7152", language: "en" },
  { site: "wattle", role: "cook", name: "Mei Lin Ho", email: "meilin@marlowe-finch.example", pin: "3816", language: "en" },
  { site: "wattle", role: "manager", name: "Callum Brody", email: "callum@marlowe-finch.example", pin: "2943", language: "en" },
  { site: "wattle", role: "qa", name: "Sofía Arce", email: "sofia@marlowe-finch.example", pin: "8065", language: "es" },
  { site: "wattle", role: "admin", name: "Harriet Vance", email: "harriet@marlowe-finch.example", pin: "9174", language: "en" },
] as const;
