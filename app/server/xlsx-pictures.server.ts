// Pictures in a sheet of exceljs's streaming writer. exceljs 4.4.0 streams rows but not pictures: its
// WorkbookWriter has addImage (the bytes are kept in `media` and zipped at commit), while its
// WorksheetWriter has only addBackgroundImage and no addImage (its README: "images are not supported
// in streaming mode"). This adds the missing part the way the format defines it (ECMA-376 Part 1,
// §20.5 DrawingML spreadsheet drawing): a drawing part with one anchored picture per image, the
// sheet's relationship to it and its <drawing r:id> element, and the drawing's content type.
// The picture bytes stay in memory until the workbook commits, so callers bound how many they add.
import type ExcelJS from "exceljs";

const EMU_PER_PX = 9525;
const DRAWING_REL = "http://schemas.openxmlformats.org/officeDocument/2006/relationships/drawing";
const IMAGE_REL = "http://schemas.openxmlformats.org/officeDocument/2006/relationships/image";
const DRAWING_TYPE = "application/vnd.openxmlformats-officedocument.drawing+xml";

/** One picture: its top-left cell (0-based), its shown size in pixels, and a name and description for screen readers. */
export type SheetPicture = { png: Buffer; row: number; col: number; widthPx: number; heightPx: number; name: string; description: string };

// The parts of exceljs's streaming writer this reaches into (present in 4.4.0; checked at run time).
type Zip = { append(source: string | Buffer, data: { name: string }): unknown };
type WorkbookInternals = { zip: Zip; media: unknown[]; addImage(image: { buffer: Buffer; extension: "png" }): number };
type SheetInternals = {
  id: number;
  stream: { write(text: string): unknown };
  _sheetRelsWriter: { addRelationship(rel: { Target: string; Type: string }): string };
  _writeLegacyData(): void;
};

const xmlText = (s: string) => s.replace(/[&<>"]/g, (c) => ({ "&": "&amp;", "<": "&lt;", ">": "&gt;", '"': "&quot;" })[c]!);

/**
 * Adds the pictures to a sheet that has not been committed yet. Call once per sheet, before
 * `sheet.commit()`; the workbook must be exceljs's streaming WorkbookWriter.
 */
export function addSheetPictures(workbook: ExcelJS.stream.xlsx.WorkbookWriter, sheet: ExcelJS.Worksheet, pictures: SheetPicture[]) {
  if (!pictures.length) return;
  const wb = workbook as unknown as WorkbookInternals;
  const ws = sheet as unknown as SheetInternals;
  if (typeof wb.addImage !== "function" || !wb.zip || typeof ws._sheetRelsWriter?.addRelationship !== "function" || typeof ws._writeLegacyData !== "function")
    throw new Error("this exceljs has no streaming writer internals for pictures (written for 4.4.0)");

  const drawing = `drawing${ws.id}`;
  const rels: string[] = [];
  const anchors = pictures.map((p, i) => {
    const imageId = wb.addImage({ buffer: p.png, extension: "png" });
    const rId = `rId${i + 1}`;
    rels.push(`<Relationship Id="${rId}" Type="${IMAGE_REL}" Target="../media/image${imageId}.png"/>`);
    const cx = Math.round(p.widthPx * EMU_PER_PX);
    const cy = Math.round(p.heightPx * EMU_PER_PX);
    // One cell anchor with a fixed size: the picture keeps its shape whatever the row heights.
    return (
      `<xdr:oneCellAnchor><xdr:from><xdr:col>${p.col}</xdr:col><xdr:colOff>0</xdr:colOff><xdr:row>${p.row}</xdr:row><xdr:rowOff>0</xdr:rowOff></xdr:from>` +
      `<xdr:ext cx="${cx}" cy="${cy}"/><xdr:pic><xdr:nvPicPr><xdr:cNvPr id="${i + 2}" name="${xmlText(p.name)}" descr="${xmlText(p.description)}"/>` +
      `<xdr:cNvPicPr><a:picLocks noChangeAspect="1"/></xdr:cNvPicPr></xdr:nvPicPr><xdr:blipFill><a:blip r:embed="${rId}"/><a:stretch><a:fillRect/></a:stretch></xdr:blipFill>` +
      `<xdr:spPr><a:xfrm><a:off x="0" y="0"/><a:ext cx="${cx}" cy="${cy}"/></a:xfrm><a:prstGeom prst="rect"><a:avLst/></a:prstGeom></xdr:spPr></xdr:pic><xdr:clientData/></xdr:oneCellAnchor>`
    );
  });
  const head = '<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n';
  wb.zip.append(
    `${head}<xdr:wsDr xmlns:xdr="http://schemas.openxmlformats.org/drawingml/2006/spreadsheetDrawing" xmlns:a="http://schemas.openxmlformats.org/drawingml/2006/main" xmlns:r="http://schemas.openxmlformats.org/officeDocument/2006/relationships">${anchors.join("")}</xdr:wsDr>`,
    { name: `xl/drawings/${drawing}.xml` },
  );
  wb.zip.append(`${head}<Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships">${rels.join("")}</Relationships>`, {
    name: `xl/drawings/_rels/${drawing}.xml.rels`,
  });

  // The sheet points at its drawing: a relationship, and <drawing> where the schema puts it (after
  // the page set-up and header/footer, before <legacyDrawing>, which exceljs writes last).
  const rId = ws._sheetRelsWriter.addRelationship({ Target: `../drawings/${drawing}.xml`, Type: DRAWING_REL });
  const writeLegacy = ws._writeLegacyData.bind(ws);
  ws._writeLegacyData = () => {
    ws.stream.write(`<drawing r:id="${rId}"/>`);
    writeLegacy();
  };

  // The content types exceljs writes at commit know pictures (from `media`) but not drawing parts.
  const zip = wb.zip;
  const append = zip.append.bind(zip);
  const override = `<Override PartName="/xl/drawings/${drawing}.xml" ContentType="${DRAWING_TYPE}"/>`;
  zip.append = (source, data) => append(data.name === "[Content_Types].xml" && typeof source === "string" ? source.replace("</Types>", `${override}</Types>`) : source, data);
}
