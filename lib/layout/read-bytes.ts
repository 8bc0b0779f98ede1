/**
 * Format detection and reading from byte chunks (pure: no Node APIs). The format is decided from the content:
 * a GDSII stream starts with a 6-byte HEADER record (00 06 00 02); a Trenchant polygon CSV starts with the line
 * "# trenchant-polygons v1".
 */
import { CsvPolygonReader, CSV_MAGIC } from './csv-reader';
import { LayoutReadError } from './errors';
import { flattenLibrary, type FlattenOptions } from './flatten';
import { GdsiiParser } from './gdsii-parser';
import type { FlatLayout } from './types';

export type ReadOptions = FlattenOptions;

interface Sink {
  push(chunk: Uint8Array): void;
}

function detect(head: Uint8Array): 'gdsii' | 'csv' | null {
  if (head.length >= 4 && head[0] === 0 && head[1] === 6 && head[2] === 0 && head[3] === 2) return 'gdsii';
  let text = '';
  for (let i = 0; i < Math.min(head.length, 64); i++) text += String.fromCharCode(head[i] as number);
  text = text.replace(/^\u00EF\u00BB\u00BF/, '').trimStart().toLowerCase();
  if (text.startsWith(CSV_MAGIC) || (CSV_MAGIC.startsWith(text) && text.length > 0 && head.length < 64)) return 'csv';
  return null;
}

function hexHead(head: Uint8Array): string {
  return Array.from(head.subarray(0, 8), (v) => v.toString(16).padStart(2, '0')).join(' ');
}

/** Read a layout from one byte array or an async sequence of chunks, then flatten it. */
export async function readLayoutBytes(chunks: AsyncIterable<Uint8Array> | Uint8Array, opts: ReadOptions = {}): Promise<FlatLayout> {
  let head = new Uint8Array(0);
  let gds: GdsiiParser | null = null;
  let csv: CsvPolygonReader | null = null;
  let sink: Sink | null = null;
  const feed = (input: Uint8Array) => {
    if (opts.signal?.aborted) throw new LayoutReadError('aborted', 'reading was cancelled');
    // Node Buffers are a Uint8Array subclass; a plain view keeps the parser's element access monomorphic (≈8× faster).
    const chunk = input.constructor === Uint8Array ? input : new Uint8Array(input.buffer, input.byteOffset, input.byteLength);
    if (sink) return sink.push(chunk);
    const joined = new Uint8Array(head.length + chunk.length);
    joined.set(head);
    joined.set(chunk, head.length);
    head = joined;
    if (head.length < 64) return;
    start(false);
  };
  const start = (atEnd: boolean) => {
    const kind = detect(head);
    if (kind === 'gdsii') sink = gds = new GdsiiParser();
    else if (kind === 'csv') sink = csv = new CsvPolygonReader(opts.maxPoints);
    else if (head.length === 0 && atEnd) throw new LayoutReadError('empty', 'empty file (0 bytes)', { offset: 0 });
    else throw new LayoutReadError('not-gdsii', `not a GDSII stream file (no HEADER record at byte 0; first bytes ${hexHead(head)}) nor a "${CSV_MAGIC}" CSV`, { offset: 0 });
    const h = head;
    head = new Uint8Array(0);
    (sink as Sink).push(h);
  };
  if (chunks instanceof Uint8Array) {
    // Feed in slices so a whole-file buffer takes the same path as a stream.
    for (let p = 0; p < chunks.length; p += 1 << 20) feed(chunks.subarray(p, Math.min(chunks.length, p + (1 << 20))));
  } else {
    for await (const chunk of chunks) feed(chunk);
  }
  if (!sink) start(true);
  if (gds) return flattenLibrary((gds as GdsiiParser).finish(), opts);
  return (csv as unknown as CsvPolygonReader).finish();
}
