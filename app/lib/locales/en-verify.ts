// Strings of the verify screens; spread into en.ts. Keys here must not clash with en.ts.
export const verifyEn = {};
