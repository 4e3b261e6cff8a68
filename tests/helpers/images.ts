import exifReader from "exif-reader";
import { randomBytes } from "node:crypto";
import { deflateSync } from "node:zlib";
import sharp from "sharp";

// Real images made with sharp, for the photo tests: nothing here is a fixture file or a mock.

/** Raw RGB: red grows to the right, green downwards, and the top-left 10 % is pure blue. */
function gradient(width: number, height: number, noise: boolean) {
  const px = Buffer.alloc(width * height * 3);
  const grain = noise ? randomBytes(width * height) : null;
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      const i = (y * width + x) * 3;
      const n = grain ? (grain[y * width + x] & 31) - 16 : 0;
      if (x < width / 10 && y < height / 10) {
        px[i + 2] = 255;
      } else {
        px[i] = Math.max(0, Math.min(255, Math.round((255 * x) / width) + n));
        px[i + 1] = Math.max(0, Math.min(255, Math.round((255 * y) / height) + n));
        px[i + 2] = 64;
      }
    }
  }
  return sharp(px, { raw: { width, height, channels: 3 } });
}

/** Where a probe photo was taken, as a phone writes it: degrees, minutes, seconds as rationals. */
export const KITCHEN_GPS = { GPSLatitudeRef: "N", GPSLatitude: "39/1 44/1 3012/100", GPSLongitudeRef: "W", GPSLongitude: "104/1 59/1 2208/100" };

/**
 * A JPEG as a phone camera makes it: camera make and model, time taken, GPS position and, when
 * given, an EXIF orientation (6 = the pixels must be turned 90° clockwise to stand upright).
 */
export async function cameraJpeg(opts: { width?: number; height?: number; orientation?: number; gps?: boolean; noise?: boolean; quality?: number } = {}) {
  const { width = 640, height = 480, gps = true } = opts;
  let image = gradient(width, height, opts.noise ?? false)
    .jpeg({ quality: opts.quality ?? 90 })
    .withExif({
      IFD0: { Make: "Chillwright Test Camera", Model: "Probe Cam 1", Software: "camera-firmware 2.1", DateTime: "2025:03:14 09:26:53" },
      IFD2: { DateTimeOriginal: "2025:03:14 09:26:53", UserComment: "walk-in 2" },
      ...(gps ? { IFD3: KITCHEN_GPS } : {}),
    });
  if (opts.orientation) image = image.withMetadata({ orientation: opts.orientation });
  return image.toBuffer();
}

/** The EXIF of an image as exif-reader reads it, or null when there is none. */
export async function readExif(image: Uint8Array) {
  const { exif } = await sharp(image).metadata();
  return exif ? exifReader(exif) : null;
}

/** The four-letter chunk names of a WebP file (RIFF): "EXIF", "XMP " or "ICCP" would be metadata. */
export function webpChunks(image: Uint8Array) {
  const b = Buffer.from(image);
  if (b.toString("ascii", 0, 4) !== "RIFF" || b.toString("ascii", 8, 12) !== "WEBP") throw new Error("not a WebP file");
  const names: string[] = [];
  for (let p = 12; p + 8 <= b.length; ) {
    const size = b.readUInt32LE(p + 4);
    names.push(b.toString("ascii", p, p + 4));
    p += 8 + size + (size & 1);
  }
  return names;
}

/** The colour at a point of an image, after any orientation it declares is applied. */
export async function pixelAt(image: Uint8Array, x: number, y: number) {
  const { data, info } = await sharp(image).rotate().raw().toBuffer({ resolveWithObject: true });
  const i = (y * info.width + x) * info.channels;
  return { r: data[i], g: data[i + 1], b: data[i + 2] };
}

const crcTable = Array.from({ length: 256 }, (_, n) => {
  let c = n;
  for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1;
  return c >>> 0;
});
function crc32(bytes: Buffer) {
  let c = 0xffffffff;
  for (const b of bytes) c = crcTable[(c ^ b) & 0xff] ^ (c >>> 8);
  return (c ^ 0xffffffff) >>> 0;
}
function pngChunk(type: string, body: Buffer) {
  const head = Buffer.alloc(4);
  head.writeUInt32BE(body.length);
  const typed = Buffer.concat([Buffer.from(type, "ascii"), body]);
  const crc = Buffer.alloc(4);
  crc.writeUInt32BE(crc32(typed));
  return Buffer.concat([head, typed, crc]);
}

/**
 * A decompression bomb: a tiny PNG (1-bit grey, all black) declaring `width` × `height` pixels.
 * With `complete`, every row is there and the file is a valid image (8000 × 8000 is about 8 kB);
 * without, only the first rows are, as in a file cut short (50000 × 50000 in about 100 bytes).
 */
export function pngBomb(width: number, height: number, complete: boolean) {
  const header = Buffer.alloc(13);
  header.writeUInt32BE(width, 0);
  header.writeUInt32BE(height, 4);
  header[8] = 1; // bit depth
  header[9] = 0; // greyscale
  const rowBytes = 1 + Math.ceil(width / 8); // filter byte + packed pixels
  const rows = Buffer.alloc(rowBytes * (complete ? height : 4));
  const signature = Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);
  return Buffer.concat([signature, pngChunk("IHDR", header), pngChunk("IDAT", deflateSync(rows, { level: 9 })), pngChunk("IEND", Buffer.alloc(0))]);
}

/** Plain text that only its name calls a JPEG. */
export const textPretendingToBeJpeg = () => new File([Buffer.from("Walk-in 2 at 41 °F, checked by the morning cook.\n")], "probe.jpg", { type: "image/jpeg" });
