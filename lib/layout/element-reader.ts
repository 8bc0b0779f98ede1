/**
 * Reads single GDSII elements back by byte offset (positional reads through one reusable window, so neighbouring
 * elements cost one read) and decodes them with the whole-file reader's own parser into a scratch cell.
 */
import { readSync } from 'node:fs';
import { LayoutReadError } from './errors';
import { CellShapesSink, GdsiiParser } from './gdsii-parser';
import { Rec } from './gdsii-records';
import { newCell, type CellDef } from './library';

/** Bytes read ahead per element (most elements are shorter), and the largest gap read through rather than skipped. */
const TYPICAL = 1024;
const GAP = 8192;

export class ElementReader {
  private readonly win: Uint8Array;
  private ws = 0;
  private we = 0;
  /** Bytes read from disk and elements decoded, for benchmarks. */
  bytesRead = 0;
  elementsDecoded = 0;

  constructor(private readonly fd: number, private readonly fileSize: number, windowBytes = 1 << 18) {
    this.win = new Uint8Array(Math.max(1 << 17, windowBytes)); // ≥ 2 records of the 65 535-byte maximum
  }

  /** Decode the elements starting at `offsets` (ascending) into a new cell named `name`. */
  decode(name: string, offsets: ArrayLike<number>): CellDef {
    const cell = newCell(name);
    const parser = GdsiiParser.elementDecoder(cell, new CellShapesSink());
    for (let k = 0; k < offsets.length; k++) {
      const at = offsets[k] as number;
      if (at < this.ws || at + TYPICAL > this.we) {
        // Read only the run of wanted elements that follow closely, not a whole window per jump.
        let end = at + TYPICAL;
        for (let q = k + 1; q < offsets.length; q++) {
          const next = offsets[q] as number;
          if (next > end + GAP || next + TYPICAL - at > this.win.length) break;
          end = next + TYPICAL;
        }
        this.load(at, end - at);
      }
      this.element(parser, at);
    }
    this.elementsDecoded += offsets.length;
    return cell;
  }

  private load(at: number, len = this.win.length): void {
    const n = readSync(this.fd, this.win, 0, Math.max(0, Math.min(len, this.win.length, this.fileSize - at)), at);
    this.ws = at;
    this.we = at + n;
    this.bytesRead += n;
  }

  private cover(at: number, n: number): void {
    if (at >= this.ws && at + n <= this.we) return;
    this.load(at);
    if (at + n > this.we) throw new LayoutReadError('io', `the file changed after indexing: ${n} bytes at byte ${at} are past its end`, { offset: at });
  }

  /** Push the records of the element at `at` (up to and including ENDEL) into the parser. */
  private element(parser: GdsiiParser, at: number): void {
    this.cover(at, 4);
    for (let attempt = 0; attempt < 2; attempt++) {
      // Whole element inside the window: one push.
      let q = at;
      while (q + 4 <= this.we) {
        const i = q - this.ws;
        const len = ((this.win[i] as number) << 8) | (this.win[i + 1] as number);
        if (len < 4) throw new LayoutReadError('io', `the file changed after indexing: bad record at byte ${q}`, { offset: q });
        if (q + len > this.we) break;
        q += len;
        if (this.win[i + 2] === Rec.ENDEL) {
          parser.push(this.win.subarray(at - this.ws, q - this.ws));
          return;
        }
      }
      // Not complete: read a whole window from the element's start (the run read ahead only ~1 kB per element).
      if (attempt === 0 && (at !== this.ws || this.we - this.ws < this.win.length)) this.load(at);
      else break;
    }
    // Longer than the window: record by record.
    for (let q = at; ;) {
      this.cover(q, 4);
      const len = ((this.win[q - this.ws] as number) << 8) | (this.win[q - this.ws + 1] as number);
      if (len < 4) throw new LayoutReadError('io', `the file changed after indexing: bad record at byte ${q}`, { offset: q });
      this.cover(q, len);
      const type = this.win[q - this.ws + 2];
      parser.push(this.win.subarray(q - this.ws, q - this.ws + len));
      q += len;
      if (type === Rec.ENDEL) return;
    }
  }
}
