// Strings of the alerts screens; spread into en.ts. Keys here must not clash with en.ts.
export const alertsEn = {};
