// A streaming .xlsx writer: each worksheet is an async source of rows, deflated into a zip entry as it
// comes, so a long export never holds more than one page of rows. Strings are written as inline
// strings (never as formulas); dates are numbers with a date format, as spreadsheets expect.
import { once } from "node:events";
import type { Writable } from "node:stream";
import { constants, crc32, createDeflateRaw } from "node:zlib";

export type Cell = string | number | boolean | Date | null | undefined | { url: string; text: string };
export type CellStyle = "text" | "number" | "temperature" | "datetime" | "date" | "wrap" | "title" | "label" | "header";

export type SheetColumn = { width: number; style?: CellStyle };
export type SheetSpec = {
  name: string;
  columns: SheetColumn[];
  /** Rows above the data that repeat on every printed page and stay in view (a note, the header). */
  headRows: { cells: Cell[]; style?: CellStyle }[];
  /** An autofilter on the last head row, and the frozen pane under it. */
  table: boolean;
  rows: AsyncIterable<Cell[]>;
};

// Style ids into cellXfs below; the order is the file's.
const STYLE_ID: Record<CellStyle, number> = { text: 0, header: 1, datetime: 2, date: 3, temperature: 4, wrap: 5, title: 6, label: 7, number: 8 };
const LINK_STYLE = 9;
/** Excel's day zero is 1899-12-30 (with its 1900 leap-year quirk absorbed there). */
const EXCEL_EPOCH_MS = Date.UTC(1899, 11, 30);
export const excelSerial = (d: Date) => (d.getTime() - EXCEL_EPOCH_MS) / 86_400_000;

const xmlEscape = (s: string) =>
  s
    .replace(/&/g, "&amp;")
    .replace(/</g, "&lt;")
    .replace(/>/g, "&gt;")
    .replace(/"/g, "&quot;")
    // Control characters other than tab, LF and CR are not allowed in XML 1.0.
    .replace(/[\u0000-\u0008\u000B\u000C\u000E-\u001F\uFFFE\uFFFF]/g, "");

export function columnName(index: number) {
  let n = index + 1;
  let s = "";
  while (n > 0) {
    const r = (n - 1) % 26;
    s = String.fromCharCode(65 + r) + s;
    n = Math.floor((n - 1) / 26);
  }
  return s;
}

function cellXml(ref: string, value: Cell, style: CellStyle | undefined, links: { ref: string; url: string }[]) {
  if (value === null || value === undefined || value === "") return "";
  const s = (id: number) => (id ? ` s="${id}"` : "");
  if (typeof value === "number") {
    if (!Number.isFinite(value)) return "";
    return `<c r="${ref}"${s(STYLE_ID[style === "text" || !style ? "number" : style])}><v>${value}</v></c>`;
  }
  if (typeof value === "boolean") return `<c r="${ref}" t="b"><v>${value ? 1 : 0}</v></c>`;
  if (value instanceof Date) return `<c r="${ref}"${s(STYLE_ID[style === "date" ? "date" : "datetime"])}><v>${excelSerial(value)}</v></c>`;
  if (typeof value === "object") {
    links.push({ ref, url: value.url });
    return `<c r="${ref}" s="${LINK_STYLE}" t="inlineStr"><is><t>${xmlEscape(value.text)}</t></is></c>`;
  }
  const id = style === "header" || style === "title" || style === "label" || style === "wrap" ? STYLE_ID[style] : 0;
  return `<c r="${ref}"${s(id)} t="inlineStr"><is><t xml:space="preserve">${xmlEscape(value)}</t></is></c>`;
}

function rowXml(n: number, cells: Cell[], columns: SheetColumn[], rowStyle: CellStyle | undefined, links: { ref: string; url: string }[]) {
  let out = `<row r="${n}">`;
  cells.forEach((v, i) => {
    out += cellXml(`${columnName(i)}${n}`, v, rowStyle ?? columns[i]?.style, links);
  });
  return out + "</row>";
}

/** A minimal zip (deflate, data descriptors, no zip64: parts stay far below 4 GiB). */
class ZipStream {
  private offset = 0;
  private entries: { name: Buffer; crc: number; size: number; csize: number; offset: number }[] = [];
  private readonly time: number;
  private readonly date: number;

  constructor(private out: Writable) {
    const d = new Date();
    this.time = (d.getHours() << 11) | (d.getMinutes() << 5) | (d.getSeconds() >> 1);
    this.date = ((d.getFullYear() - 1980) << 9) | ((d.getMonth() + 1) << 5) | d.getDate();
  }

  private async write(buf: Buffer) {
    this.offset += buf.length;
    if (!this.out.write(buf)) await once(this.out, "drain");
  }

  async entry(name: string, source: AsyncIterable<string> | Iterable<string>) {
    const nameBuf = Buffer.from(name, "utf8");
    const start = this.offset;
    const header = Buffer.alloc(30);
    header.writeUInt32LE(0x04034b50, 0);
    header.writeUInt16LE(20, 4);
    header.writeUInt16LE(0x0808, 6); // data descriptor follows; UTF-8 name
    header.writeUInt16LE(8, 8);
    header.writeUInt16LE(this.time, 10);
    header.writeUInt16LE(this.date, 12);
    header.writeUInt16LE(nameBuf.length, 26);
    await this.write(Buffer.concat([header, nameBuf]));

    const deflate = createDeflateRaw({ level: constants.Z_DEFAULT_COMPRESSION });
    let crc = 0;
    let size = 0;
    let csize = 0;
    const pending: Promise<void>[] = [];
    deflate.on("data", (chunk: Buffer) => {
      csize += chunk.length;
      this.offset += chunk.length;
      if (!this.out.write(chunk)) {
        deflate.pause();
        pending.push(once(this.out, "drain").then(() => void deflate.resume()));
      }
    });
    const ended = once(deflate, "end");
    let buffered = "";
    const push = async (text: string) => {
      const buf = Buffer.from(text, "utf8");
      crc = crc32(buf, crc);
      size += buf.length;
      if (!deflate.write(buf)) await once(deflate, "drain");
    };
    for await (const piece of source) {
      buffered += piece;
      if (buffered.length >= 64 * 1024) {
        await push(buffered);
        buffered = "";
      }
    }
    if (buffered) await push(buffered);
    deflate.end();
    await ended;
    await Promise.all(pending);

    const descriptor = Buffer.alloc(16);
    descriptor.writeUInt32LE(0x08074b50, 0);
    descriptor.writeUInt32LE(crc >>> 0, 4);
    descriptor.writeUInt32LE(csize, 8);
    descriptor.writeUInt32LE(size, 12);
    await this.write(descriptor);
    this.entries.push({ name: nameBuf, crc: crc >>> 0, size, csize, offset: start });
  }

  async finish() {
    const cdStart = this.offset;
    for (const e of this.entries) {
      const h = Buffer.alloc(46);
      h.writeUInt32LE(0x02014b50, 0);
      h.writeUInt16LE(20, 4);
      h.writeUInt16LE(20, 6);
      h.writeUInt16LE(0x0808, 8);
      h.writeUInt16LE(8, 10);
      h.writeUInt16LE(this.time, 12);
      h.writeUInt16LE(this.date, 14);
      h.writeUInt32LE(e.crc, 16);
      h.writeUInt32LE(e.csize, 20);
      h.writeUInt32LE(e.size, 24);
      h.writeUInt16LE(e.name.length, 28);
      h.writeUInt32LE(e.offset, 42);
      await this.write(Buffer.concat([h, e.name]));
    }
    const end = Buffer.alloc(22);
    end.writeUInt32LE(0x06054b50, 0);
    end.writeUInt16LE(this.entries.length, 8);
    end.writeUInt16LE(this.entries.length, 10);
    end.writeUInt32LE(this.offset - cdStart, 12);
    end.writeUInt32LE(cdStart, 16);
    await this.write(end);
  }
}

const XML_HEAD = '<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n';
const MAIN_NS = 'xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main" xmlns:r="http://schemas.openxmlformats.org/officeDocument/2006/relationships"';
const REL_NS = "http://schemas.openxmlformats.org/officeDocument/2006/relationships";

const STYLES = `${XML_HEAD}<styleSheet xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main">
<numFmts count="3"><numFmt numFmtId="164" formatCode="yyyy-mm-dd hh:mm"/><numFmt numFmtId="165" formatCode="yyyy-mm-dd"/><numFmt numFmtId="166" formatCode="0.0"/></numFmts>
<fonts count="4"><font><sz val="11"/><name val="Calibri"/></font><font><b/><sz val="11"/><name val="Calibri"/></font><font><b/><sz val="14"/><name val="Calibri"/></font><font><u/><sz val="11"/><color rgb="FF1F5F99"/><name val="Calibri"/></font></fonts>
<fills count="3"><fill><patternFill patternType="none"/></fill><fill><patternFill patternType="gray125"/></fill><fill><patternFill patternType="solid"><fgColor rgb="FFDCEBF5"/><bgColor indexed="64"/></patternFill></fill></fills>
<borders count="1"><border><left/><right/><top/><bottom/><diagonal/></border></borders>
<cellStyleXfs count="1"><xf numFmtId="0" fontId="0" fillId="0" borderId="0"/></cellStyleXfs>
<cellXfs count="10">
<xf numFmtId="0" fontId="0" fillId="0" borderId="0" xfId="0"/>
<xf numFmtId="0" fontId="1" fillId="2" borderId="0" xfId="0" applyFont="1" applyFill="1" applyAlignment="1"><alignment wrapText="1" vertical="top"/></xf>
<xf numFmtId="164" fontId="0" fillId="0" borderId="0" xfId="0" applyNumberFormat="1"/>
<xf numFmtId="165" fontId="0" fillId="0" borderId="0" xfId="0" applyNumberFormat="1"/>
<xf numFmtId="166" fontId="0" fillId="0" borderId="0" xfId="0" applyNumberFormat="1"/>
<xf numFmtId="0" fontId="0" fillId="0" borderId="0" xfId="0" applyAlignment="1"><alignment wrapText="1" vertical="top"/></xf>
<xf numFmtId="0" fontId="2" fillId="0" borderId="0" xfId="0" applyFont="1"/>
<xf numFmtId="0" fontId="1" fillId="0" borderId="0" xfId="0" applyFont="1" applyAlignment="1"><alignment vertical="top"/></xf>
<xf numFmtId="0" fontId="0" fillId="0" borderId="0" xfId="0"/>
<xf numFmtId="0" fontId="3" fillId="0" borderId="0" xfId="0" applyFont="1"/>
</cellXfs>
<cellStyles count="1"><cellStyle name="Normal" xfId="0" builtinId="0"/></cellStyles>
</styleSheet>`;

const sheetRef = (name: string) => `'${name.replace(/'/g, "''")}'`;

/** Writes the workbook to `out`, one sheet after the other; resolves when the last byte is written (it does not end `out`). */
export async function writeWorkbook(out: Writable, sheets: SheetSpec[]) {
  const zip = new ZipStream(out);
  const n = sheets.length;
  await zip.entry("[Content_Types].xml", [
    `${XML_HEAD}<Types xmlns="http://schemas.openxmlformats.org/package/2006/content-types">`,
    '<Default Extension="rels" ContentType="application/vnd.openxmlformats-package.relationships+xml"/><Default Extension="xml" ContentType="application/xml"/>',
    '<Override PartName="/xl/workbook.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.sheet.main+xml"/>',
    '<Override PartName="/xl/styles.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.styles+xml"/>',
    ...sheets.map((_, i) => `<Override PartName="/xl/worksheets/sheet${i + 1}.xml" ContentType="application/vnd.openxmlformats-officedocument.spreadsheetml.worksheet+xml"/>`),
    "</Types>",
  ]);
  await zip.entry("_rels/.rels", [`${XML_HEAD}<Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships"><Relationship Id="rId1" Type="${REL_NS}/officeDocument" Target="xl/workbook.xml"/></Relationships>`]);
  await zip.entry("xl/styles.xml", [STYLES]);

  const names: string[] = [];
  for (const [i, sheet] of sheets.entries()) {
    const links: { ref: string; url: string }[] = [];
    const head = sheet.headRows.length;
    const lastCol = columnName(Math.max(sheet.columns.length, 1) - 1);
    let last = head;
    async function* xml() {
      yield `${XML_HEAD}<worksheet ${MAIN_NS}><sheetPr><pageSetUpPr fitToPage="1"/></sheetPr>`;
      yield sheet.table && head
        ? `<sheetViews><sheetView workbookViewId="0"${i === 0 ? ' tabSelected="1"' : ""}><pane ySplit="${head}" topLeftCell="A${head + 1}" activePane="bottomLeft" state="frozen"/></sheetView></sheetViews>`
        : `<sheetViews><sheetView workbookViewId="0"${i === 0 ? ' tabSelected="1"' : ""}/></sheetViews>`;
      yield `<sheetFormatPr defaultRowHeight="15"/><cols>${sheet.columns.map((c, j) => `<col min="${j + 1}" max="${j + 1}" width="${c.width}" customWidth="1"/>`).join("")}</cols><sheetData>`;
      for (const [j, r] of sheet.headRows.entries()) yield rowXml(j + 1, r.cells, sheet.columns, r.style, links);
      for await (const cells of sheet.rows) {
        last += 1;
        yield rowXml(last, cells, sheet.columns, undefined, links);
      }
      yield "</sheetData>";
      if (sheet.table && head) yield `<autoFilter ref="A${head}:${lastCol}${last}"/>`;
      if (links.length) yield `<hyperlinks>${links.map((l, k) => `<hyperlink ref="${l.ref}" r:id="rId${k + 1}"/>`).join("")}</hyperlinks>`;
      yield '<pageMargins left="0.4" right="0.4" top="0.6" bottom="0.6" header="0.3" footer="0.3"/>';
      yield '<pageSetup orientation="landscape" fitToWidth="1" fitToHeight="0"/><headerFooter><oddFooter>&amp;A · &amp;P / &amp;N</oddFooter></headerFooter></worksheet>';
    }
    await zip.entry(`xl/worksheets/sheet${i + 1}.xml`, xml());
    if (links.length) {
      await zip.entry(`xl/worksheets/_rels/sheet${i + 1}.xml.rels`, [
        `${XML_HEAD}<Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships">`,
        ...links.map((l, k) => `<Relationship Id="rId${k + 1}" Type="${REL_NS}/hyperlink" Target="${xmlEscape(l.url)}" TargetMode="External"/>`),
        "</Relationships>",
      ]);
    }
    names.push(
      (sheet.table && head ? `<definedName name="_xlnm._FilterDatabase" localSheetId="${i}" hidden="1">${sheetRef(sheet.name)}!$A$${head}:$${lastCol}$${last}</definedName>` : "") +
        (head ? `<definedName name="_xlnm.Print_Titles" localSheetId="${i}">${sheetRef(sheet.name)}!$1:$${head}</definedName>` : ""),
    );
  }

  await zip.entry("xl/workbook.xml", [
    `${XML_HEAD}<workbook ${MAIN_NS}><bookViews><workbookView activeTab="0"/></bookViews><sheets>`,
    ...sheets.map((s, i) => `<sheet name="${xmlEscape(s.name)}" sheetId="${i + 1}" r:id="rId${i + 1}"/>`),
    `</sheets>${names.join("") ? `<definedNames>${names.join("")}</definedNames>` : ""}</workbook>`,
  ]);
  await zip.entry("xl/_rels/workbook.xml.rels", [
    `${XML_HEAD}<Relationships xmlns="http://schemas.openxmlformats.org/package/2006/relationships">`,
    ...sheets.map((_, i) => `<Relationship Id="rId${i + 1}" Type="${REL_NS}/worksheet" Target="worksheets/sheet${i + 1}.xml"/>`),
    `<Relationship Id="rId${n + 1}" Type="${REL_NS}/styles" Target="styles.xml"/>`,
    "</Relationships>",
  ]);
  await zip.finish();
}
