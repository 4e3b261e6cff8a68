// Strings of the cooling-curve pictures in the records workbook; spread into es.ts.
import type { curvesEn } from "./en-curves";

export const curvesEs: typeof curvesEn = {
  recordsCurves: {
    sheetName: "Curvas",
    coverLabel: "Curvas de enfriamiento",
    coverAll_one: "La hoja Curvas tiene la curva de enfriamiento del lote.",
    coverAll_other: "La hoja Curvas tiene la curva de enfriamiento de cada uno de los {{count}} lotes.",
    coverSome:
      "La hoja Curvas tiene las curvas de enfriamiento de {{count}} de los {{total}} lotes (como mucho {{max}} por archivo): primero los {{flagged}} lotes señalados (una etapa incumplida, un descarte, una acción correctiva o una entrada tardía), luego los demás por inicio. La curva de cada lote está en su página.",
    flags: "Señalado",
    batchPage: "Página del lote",
    open: "abrir",
    ended: "terminado",
    atExport: "al exportar",
    flagMissed: "etapa incumplida",
    flagDiscarded: "descartado",
    flagAction: "acción correctiva",
    flagLate: "entrada tardía",
    description: "Curva de enfriamiento del lote {{lot}}, {{product}}: lecturas de sonda frente a los límites y plazos de cada etapa, con la estimación del modelo.",
  },
};
