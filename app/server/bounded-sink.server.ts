import { Writable } from "node:stream";

/**
 * A sink that keeps what is written up to `limit` bytes and only counts the rest, so a workbook too
 * large to attach never sits whole in memory. `result()` gives the bytes, or null past the limit.
 */
export function boundedSink(limit: number) {
  const chunks: Buffer[] = [];
  let size = 0;
  const sink = new Writable({
    write(chunk: Buffer, _encoding, done) {
      size += chunk.length;
      if (size <= limit) chunks.push(chunk);
      else chunks.length = 0;
      done();
    },
  });
  return { sink, size: () => size, result: () => (size <= limit ? Buffer.concat(chunks) : null) };
}
