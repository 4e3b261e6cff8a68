// Strings of the review screens; spread into es.ts. Keys here must not clash with es.ts.
export const reviewEs = {};
