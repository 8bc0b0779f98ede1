/**
 * Counts polygons of a Trenchant polygon CSV on the raw bytes as they stream in, so the upload check can stop at
 * the first polygon past the team's limit instead of after parsing the whole file (the CSV reader keeps every
 * polygon until the end). A polygon is a run of consecutive data rows with the same first three fields (layer,
 * datatype, polygon id), as the reader defines it; here the fields are compared as written up to the third comma,
 * which agrees with the reader for any file that writes a polygon's rows alike. Lines before the header, blank
 * lines and `#` comments are skipped. Anything malformed is left for the reader to name.
 */
const NL = 0x0a;
const CR = 0x0d;
const COMMA = 0x2c;
const HASH = 0x23;
const HEADER = 'layer,datatype,polygon,x,y';

export class CsvPolygonCounter {
  polygons = 0;
  /** 1-based line of the row that started the latest polygon. */
  line = 0;
  private lineNo = 0;
  private headerSeen = false;
  private partial: Uint8Array = new Uint8Array(0);
  private prev: Uint8Array = new Uint8Array(0);

  /** Feeds a chunk; returns the polygon count so far. */
  push(chunk: Uint8Array): number {
    let start = 0;
    if (this.partial.length > 0) {
      const nl = chunk.indexOf(NL);
      if (nl < 0) {
        // Still inside one line: keep at most what the prefix comparison needs (a bounded tail is enough to
        // find the line's end later; very long lines are the reader's problem).
        if (this.partial.length < 4096) this.partial = concat(this.partial, chunk.subarray(0, 4096));
        return this.polygons;
      }
      this.lineDone(concat(this.partial, chunk.subarray(0, nl)));
      this.partial = new Uint8Array(0);
      start = nl + 1;
    }
    for (;;) {
      const nl = chunk.indexOf(NL, start);
      if (nl < 0) break;
      this.lineDone(chunk.subarray(start, nl));
      start = nl + 1;
    }
    if (start < chunk.length) this.partial = chunk.slice(start, Math.min(chunk.length, start + 4096));
    return this.polygons;
  }

  /** End of input: counts a last line without a newline. */
  finish(): number {
    if (this.partial.length > 0) this.lineDone(this.partial);
    this.partial = new Uint8Array(0);
    return this.polygons;
  }

  private lineDone(raw: Uint8Array): void {
    this.lineNo++;
    let a = 0;
    let b = raw.length;
    while (a < b && (raw[a] === 0x20 || raw[a] === 0x09 || raw[a] === 0xef || raw[a] === 0xbb || raw[a] === 0xbf)) a++;
    while (b > a && (raw[b - 1] === CR || raw[b - 1] === 0x20 || raw[b - 1] === 0x09)) b--;
    if (a === b || raw[a] === HASH) return;
    if (!this.headerSeen) {
      const text = new TextDecoder('latin1').decode(raw.subarray(a, b)).toLowerCase().split(',').map((c) => c.trim()).join(',');
      if (text === HEADER) this.headerSeen = true;
      return;
    }
    let commas = 0;
    let end = a;
    while (end < b && commas < 3) if (raw[end++] === COMMA) commas++;
    const key = raw.subarray(a, end);
    if (!sameBytes(key, this.prev)) {
      this.polygons++;
      this.line = this.lineNo;
      this.prev = key.slice();
    }
  }
}

function concat(a: Uint8Array, b: Uint8Array): Uint8Array {
  const out = new Uint8Array(a.length + b.length);
  out.set(a);
  out.set(b, a.length);
  return out;
}

function sameBytes(a: Uint8Array, b: Uint8Array): boolean {
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) return false;
  return true;
}
