/**
 * A feature file (feature-file.ts) written chunk by chunk, for analyses whose rows are never all in memory (the
 * streamed tiled analysis). The row count is known up front, so every column's offset is too: each chunk's rows are
 * written at their place in each column, the header and string tables when the last chunk is in. Same bytes as
 * encodeFeatureFile over the whole table (shape and warning indices are numbered by one TableRowEncoder in row
 * order); the gaps between columns are the file's zero fill.
 */
import { closeSync, ftruncateSync, openSync, writeSync } from 'node:fs';
import type { FeatureResultTable } from '@/lib/pipeline/feature-results';
import { featureFileHead, featureFileLayout, featureFileRowColumns, TableRowEncoder, type FeatureFileHeader } from './feature-file';

export class FeatureFileWriter {
  private readonly fd: number;
  private readonly header: FeatureFileHeader;
  private readonly end: number;
  private readonly rows = new TableRowEncoder();
  private at = 0;
  private closed = false;

  constructor(
    readonly path: string,
    readonly count: number,
  ) {
    const { header, end } = featureFileLayout(count);
    this.header = header;
    this.end = end;
    this.fd = openSync(path, 'w');
    ftruncateSync(this.fd, end);
  }

  /** The next t.count rows. */
  write(t: FeatureResultTable): void {
    if (this.at + t.count > this.count) throw new Error(`feature file ${this.path}: more rows than the ${this.count} announced`);
    const cols = featureFileRowColumns(t.count);
    this.rows.fill(t, cols);
    for (const c of this.header.columns) {
      const a = cols[c.name as keyof typeof cols];
      const bytes = new Uint8Array(a.buffer, a.byteOffset, a.byteLength);
      writeAll(this.fd, bytes, c.offset + this.at * a.BYTES_PER_ELEMENT);
    }
    this.at += t.count;
  }

  /** Header and string tables; returns the file's size in bytes. */
  finish(): number {
    if (this.at !== this.count) throw new Error(`feature file ${this.path}: ${this.at} rows written of ${this.count}`);
    const { head, tables } = featureFileHead(this.header, this.rows.tables());
    writeAll(this.fd, head, 0);
    writeAll(this.fd, tables, this.end);
    this.close();
    return this.end + tables.length;
  }

  close(): void {
    if (this.closed) return;
    this.closed = true;
    closeSync(this.fd);
  }
}

function writeAll(fd: number, bytes: Uint8Array, position: number): void {
  let done = 0;
  while (done < bytes.length) done += writeSync(fd, bytes, done, bytes.length - done, position + done);
}
