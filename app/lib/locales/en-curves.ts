// Strings of the cooling-curve pictures in the records workbook; spread into en.ts.
export const curvesEn = {
  recordsCurves: {
    sheetName: "Curves",
    coverLabel: "Cooling curves",
    coverAll_one: "The Curves sheet has the cooling curve of the batch.",
    coverAll_other: "The Curves sheet has the cooling curve of each of the {{count}} batches.",
    coverSome:
      "The Curves sheet has the cooling curves of {{count}} of the {{total}} batches (at most {{max}} a file): the {{flagged}} flagged batches first (a stage missed, a discard, a corrective action or a late entry), then the others by start. Every batch's curve is on its batch page.",
    flags: "Flagged",
    batchPage: "Batch page",
    open: "open",
    ended: "ended",
    atExport: "at export",
    flagMissed: "stage missed",
    flagDiscarded: "discarded",
    flagAction: "corrective action",
    flagLate: "late entry",
    description: "Cooling curve of lot {{lot}}, {{product}}: probe readings against the stage limits and deadlines, with the model's estimate.",
  },
};
