/**
 * GDSII record types and data types (Calma GDSII Stream Format Manual 6.0). Record header = 2-byte big-endian total
 * length (header included), 1-byte record type, 1-byte data type.
 */

export const DataType = { none: 0, bits: 1, int16: 2, int32: 3, real4: 4, real8: 5, ascii: 6 } as const;

export const Rec = {
  HEADER: 0x00, BGNLIB: 0x01, LIBNAME: 0x02, UNITS: 0x03, ENDLIB: 0x04, BGNSTR: 0x05, STRNAME: 0x06, ENDSTR: 0x07,
  BOUNDARY: 0x08, PATH: 0x09, SREF: 0x0a, AREF: 0x0b, TEXT: 0x0c, LAYER: 0x0d, DATATYPE: 0x0e, WIDTH: 0x0f, XY: 0x10,
  ENDEL: 0x11, SNAME: 0x12, COLROW: 0x13, TEXTNODE: 0x14, NODE: 0x15, TEXTTYPE: 0x16, PRESENTATION: 0x17,
  SPACING: 0x18, STRING: 0x19, STRANS: 0x1a, MAG: 0x1b, ANGLE: 0x1c, UINTEGER: 0x1d, USTRING: 0x1e, REFLIBS: 0x1f,
  FONTS: 0x20, PATHTYPE: 0x21, GENERATIONS: 0x22, ATTRTABLE: 0x23, STYPTABLE: 0x24, STRTYPE: 0x25, ELFLAGS: 0x26,
  ELKEY: 0x27, LINKTYPE: 0x28, LINKKEYS: 0x29, NODETYPE: 0x2a, PROPATTR: 0x2b, PROPVALUE: 0x2c, BOX: 0x2d,
  BOXTYPE: 0x2e, PLEX: 0x2f, BGNEXTN: 0x30, ENDEXTN: 0x31, TAPENUM: 0x32, TAPECODE: 0x33, STRCLASS: 0x34,
  RESERVED: 0x35, FORMAT: 0x36, MASK: 0x37, ENDMASKS: 0x38, LIBDIRSIZE: 0x39, SRFNAME: 0x3a, LIBSECUR: 0x3b,
} as const;

/** Highest record type the manual defines; anything above is not GDSII. */
export const LAST_RECORD_TYPE = 0x3b;

const names: string[] = [];
for (const [name, code] of Object.entries(Rec)) names[code] = name;

/** Record name for messages, e.g. "XY" or "record 0x4A". */
export function recordName(type: number): string {
  return names[type] ?? `record 0x${type.toString(16).toUpperCase().padStart(2, '0')}`;
}
