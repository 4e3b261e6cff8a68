// Reads an .xlsx back for the tests: the zip's central directory, each part inflated, and the cells of
// each sheet with their types (numbers with a date format come back as Dates, as a spreadsheet shows them).
import { inflateRawSync } from "node:zlib";

export type ReadCell = string | number | boolean | Date | null;
export type ReadSheet = { name: string; rows: ReadCell[][]; xml: string; rels: string };

export function unzip(buf: Buffer) {
  const files = new Map<string, Buffer>();
  let end = buf.length - 22;
  while (end >= 0 && buf.readUInt32LE(end) !== 0x06054b50) end--;
  if (end < 0) throw new Error("not a zip file");
  const count = buf.readUInt16LE(end + 10);
  let p = buf.readUInt32LE(end + 16);
  for (let i = 0; i < count; i++) {
    if (buf.readUInt32LE(p) !== 0x02014b50) throw new Error("bad central directory");
    const method = buf.readUInt16LE(p + 10);
    const csize = buf.readUInt32LE(p + 20);
    const nameLen = buf.readUInt16LE(p + 28);
    const extraLen = buf.readUInt16LE(p + 30);
    const commentLen = buf.readUInt16LE(p + 32);
    const offset = buf.readUInt32LE(p + 42);
    const name = buf.subarray(p + 46, p + 46 + nameLen).toString("utf8");
    const dataStart = offset + 30 + buf.readUInt16LE(offset + 26) + buf.readUInt16LE(offset + 28);
    const raw = buf.subarray(dataStart, dataStart + csize);
    files.set(name, method === 8 ? inflateRawSync(raw) : Buffer.from(raw));
    p += 46 + nameLen + extraLen + commentLen;
  }
  return files;
}

const unescape = (s: string) => s.replace(/&lt;/g, "<").replace(/&gt;/g, ">").replace(/&quot;/g, '"').replace(/&apos;/g, "'").replace(/&amp;/g, "&");
const EXCEL_EPOCH_MS = Date.UTC(1899, 11, 30);

function colIndex(ref: string) {
  const letters = /^[A-Z]+/.exec(ref)![0];
  let n = 0;
  for (const ch of letters) n = n * 26 + ch.charCodeAt(0) - 64;
  return n - 1;
}

export function readWorkbook(buf: Buffer) {
  const files = unzip(buf);
  const text = (name: string) => files.get(name)?.toString("utf8") ?? "";
  const styles = text("xl/styles.xml");
  const dateFormats = new Set([14, 15, 16, 17, 22]);
  for (const m of styles.matchAll(/<numFmt numFmtId="(\d+)" formatCode="([^"]+)"/g)) if (/[yd]/.test(m[2])) dateFormats.add(Number(m[1]));
  const xfs = [...(/<cellXfs[^>]*>([\s\S]*?)<\/cellXfs>/.exec(styles)?.[1] ?? "").matchAll(/<xf [^>]*numFmtId="(\d+)"/g)].map((m) => Number(m[1]));
  const workbook = text("xl/workbook.xml");
  const sheets: ReadSheet[] = [...workbook.matchAll(/<sheet name="([^"]+)" sheetId="\d+" r:id="rId(\d+)"\/>/g)].map((m) => {
    const xml = text(`xl/worksheets/sheet${m[2]}.xml`);
    const rows: ReadCell[][] = [];
    for (const r of xml.matchAll(/<row r="(\d+)"[^>]*>([\s\S]*?)<\/row>/g)) {
      const cells: ReadCell[] = [];
      for (const c of r[2].matchAll(/<c r="([A-Z]+)\d+"((?: [a-z]+="[^"]*")*)>([\s\S]*?)<\/c>/g)) {
        const attrs = Object.fromEntries([...c[2].matchAll(/ ([a-z]+)="([^"]*)"/g)].map((a) => [a[1], a[2]]));
        const body = c[3];
        let value: ReadCell;
        if (attrs.t === "inlineStr") value = unescape(/<t[^>]*>([\s\S]*?)<\/t>/.exec(body)?.[1] ?? "");
        else if (attrs.t === "b") value = /<v>1<\/v>/.test(body);
        else {
          const n = Number(/<v>([^<]*)<\/v>/.exec(body)?.[1]);
          const fmt = xfs[Number(attrs.s ?? 0)] ?? 0;
          value = dateFormats.has(fmt) ? new Date(Math.round(EXCEL_EPOCH_MS + n * 86_400_000)) : n;
        }
        cells[colIndex(c[1])] = value;
      }
      rows[Number(r[1]) - 1] = Array.from(cells, (v) => v ?? null);
    }
    return { name: unescape(m[1]), rows: Array.from(rows, (r) => r ?? []), xml, rels: text(`xl/worksheets/_rels/sheet${m[2]}.xml.rels`) };
  });
  return { files, workbook, sheets, sheet: (name: string) => sheets.find((s) => s.name === name)! };
}

/** RFC 4180 parsing, for checking what the export wrote. */
export function parseCsv(text: string) {
  const rows: string[][] = [];
  let row: string[] = [];
  let field = "";
  let quoted = false;
  for (let i = 0; i < text.length; i++) {
    const ch = text[i];
    if (quoted) {
      if (ch === '"' && text[i + 1] === '"') {
        field += '"';
        i++;
      } else if (ch === '"') quoted = false;
      else field += ch;
    } else if (ch === '"') quoted = true;
    else if (ch === ",") {
      row.push(field);
      field = "";
    } else if (ch === "\r" && text[i + 1] === "\n") {
      row.push(field);
      rows.push(row);
      row = [];
      field = "";
      i++;
    } else field += ch;
  }
  if (field || row.length) rows.push([...row, field]);
  return rows;
}
