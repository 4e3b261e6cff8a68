// The app's font for pictures rendered on the server (sharp → librsvg → pango → fontconfig).
// The font ships only as WOFF/WOFF2 web fonts (@fontsource/nunito-sans), and the pango inside sharp's
// libvips skips WOFF files even when fontconfig lists them, so text would fall back to DejaVu Sans.
// The WOFF tables are inflated back to a plain TrueType file in a folder of this process's own, and
// fontconfig is pointed at that folder (plus the system's configuration, for the ° and → fallbacks).
import { existsSync, mkdirSync, readFileSync, renameSync, writeFileSync } from "node:fs";
import { createRequire } from "node:module";
import { tmpdir } from "node:os";
import { join } from "node:path";
import { inflateSync } from "node:zlib";

/** The family the chart asks for first; the rest of its font list is generic. */
export const CHART_FONT = "Nunito Sans";
const WEIGHTS = [400, 700] as const;

/**
 * A WOFF 1.0 file as the SFNT (TrueType/OpenType) font it wraps: the table directory rebuilt with
 * each table inflated (zlib) and padded to four bytes. W3C WOFF File Format 1.0, §4–5.
 */
export function woffToSfnt(woff: Buffer): Buffer {
  if (woff.readUInt32BE(0) !== 0x774f4646) throw new Error("not a WOFF 1.0 file");
  const flavor = woff.readUInt32BE(4);
  const numTables = woff.readUInt16BE(12);
  let searchRange = 1;
  let entrySelector = 0;
  while (searchRange * 2 <= numTables) {
    searchRange *= 2;
    entrySelector++;
  }
  const head = Buffer.alloc(12 + 16 * numTables);
  head.writeUInt32BE(flavor, 0);
  head.writeUInt16BE(numTables, 4);
  head.writeUInt16BE(searchRange * 16, 6);
  head.writeUInt16BE(entrySelector, 8);
  head.writeUInt16BE(numTables * 16 - searchRange * 16, 10);
  const bodies: Buffer[] = [];
  let offset = head.length;
  for (let i = 0; i < numTables; i++) {
    const entry = 44 + i * 20;
    const tag = woff.readUInt32BE(entry);
    const at = woff.readUInt32BE(entry + 4);
    const compLength = woff.readUInt32BE(entry + 8);
    const origLength = woff.readUInt32BE(entry + 12);
    const checksum = woff.readUInt32BE(entry + 16);
    const stored = woff.subarray(at, at + compLength);
    const data = compLength < origLength ? inflateSync(stored) : stored;
    if (data.length !== origLength) throw new Error("a WOFF table does not inflate to its stated length");
    const dir = 12 + i * 16;
    head.writeUInt32BE(tag, dir);
    head.writeUInt32BE(checksum, dir + 4);
    head.writeUInt32BE(offset, dir + 8);
    head.writeUInt32BE(origLength, dir + 12);
    const padded = Buffer.alloc((data.length + 3) & ~3);
    data.copy(padded);
    bodies.push(padded);
    offset += padded.length;
  }
  return Buffer.concat([head, ...bodies]);
}

let configured: string | null = null;

/**
 * Writes the TrueType files and a fontconfig file once per process and points FONTCONFIG_FILE at it.
 * fontconfig reads the variable when it first starts, which is the first text sharp renders, so this
 * must run before that (the chart module calls it when it loads). Returns the folder, or null when
 * the font cannot be prepared (the chart then falls back to the generic sans-serif family).
 */
export function prepareChartFonts(): string | null {
  if (configured) return configured;
  try {
    const require = createRequire(import.meta.url);
    const dir = join(tmpdir(), `chillwright-fonts-${process.getuid?.() ?? "u"}`);
    mkdirSync(join(dir, "cache"), { recursive: true });
    for (const weight of WEIGHTS) {
      const target = join(dir, `nunito-sans-latin-${weight}.ttf`);
      if (existsSync(target)) continue;
      const woff = readFileSync(require.resolve(`@fontsource/nunito-sans/files/nunito-sans-latin-${weight}-normal.woff`));
      writeFileSync(`${target}.${process.pid}`, woffToSfnt(woff));
      // Written aside and renamed into place: a second process never reads half a font.
      renameSync(`${target}.${process.pid}`, target);
    }
    const base = process.env.FONTCONFIG_FILE && !process.env.FONTCONFIG_FILE.startsWith(dir) ? process.env.FONTCONFIG_FILE : "/etc/fonts/fonts.conf";
    const conf = join(dir, "fonts.conf");
    writeFileSync(
      conf,
      `<?xml version="1.0"?>\n<!DOCTYPE fontconfig SYSTEM "fonts.dtd">\n<fontconfig>\n  <include ignore_missing="yes">${base}</include>\n  <dir>${dir}</dir>\n  <cachedir>${join(dir, "cache")}</cachedir>\n</fontconfig>\n`,
    );
    process.env.FONTCONFIG_FILE = conf;
    configured = dir;
    return dir;
  } catch (e) {
    console.error("chart fonts:", e instanceof Error ? e.message : e);
    return null;
  }
}
