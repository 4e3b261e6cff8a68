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

// The demo kitchens' library: invented recipes with compositions in the range of their kind of dish
// (approximate, for the demo only), and the cooling equipment each kitchen has.
export const demoProducts = [
  { name: "Smoky black-bean chili", composition: { water: 76, protein: 8, fat: 5, carbohydrate: 9, fibre: 1, ash: 1 }, defaultPanSize: "gn-1/1", defaultPanDepthMm: 100, defaultFillDepthMm: 75, defaultMethod: "walk-in" },
  { name: "Coconut jasmine rice", composition: { water: 66, protein: 3, fat: 4, carbohydrate: 26, fibre: 0.5, ash: 0.5 }, defaultPanSize: "gn-1/1", defaultPanDepthMm: 65, defaultFillDepthMm: 50, defaultMethod: "blast-chiller" },
  { name: "Roasted tomato bisque", composition: { water: 86, protein: 2, fat: 4, carbohydrate: 6.5, fibre: 0.5, ash: 1 }, defaultPanSize: "gn-1/1", defaultPanDepthMm: 150, defaultFillDepthMm: 120, defaultMethod: "ice-bath-stirred" },
  { name: "Braised chicken thighs", composition: { water: 65, protein: 24, fat: 9, carbohydrate: 0.5, fibre: 0, ash: 1.5 }, defaultPanSize: "gn-1/2", defaultPanDepthMm: 65, defaultFillDepthMm: 50, defaultMethod: "walk-in" },
];

export const demoEquipment = [
  { name: "Walk-in cooler", method: "walk-in" },
  { name: "Blast chiller by the pass", method: "blast-chiller" },
  { name: "Ice-bath sink", method: "ice-bath-stirred" },
];
