// JSON text in pieces: the UTF-8 bytes of JSON.stringify(value, null, indent), handed out a
// piece (a byte buffer) at a time, so a document far larger than one string (V8 strings stop
// near 2^29 characters) is written in memory that does not grow with it. Each piece is a
// buffer of its own, never written again: a writer may keep it until the reader has taken it.
//
// The walk keeps its own stack (no recursion, no nested generators). Each property is read
// once, in the order JSON.stringify reads it, with its rules (ECMA-262 SerializeJSONProperty:
// toJSON, boxed primitives, undefined / functions / symbols left out of objects and written
// as null in arrays, TypeError on cycles and BigInts). Arrays of plain primitives, the bulk
// of a large document (CIDR lists), are written by JSON.stringify itself, block by block.
// A value can also write itself (OWN_JSON): the CLI writes the exposure's CIDR lists as
// bytes from the address ranges, without making a string per CIDR; bytes go into the pieces
// as they are, with no string in between.

import { Buffer } from "node:buffer";

export interface JsonPiecesOptions {
  /** Spaces per level, as JSON.stringify's third argument (0: compact). */
  readonly indent?: number;
  /** Bytes per piece: a piece is handed out when it is full (only the last is shorter). */
  readonly pieceSize?: number;
  /** Elements per native block of a primitive array: large enough to be fast, small enough to stay flat. */
  readonly blockSize?: number;
}

/** Key of the method by which a value writes its own JSON text. */
export const OWN_JSON: unique symbol = Symbol("sallyport.ownJson");

/** A value that writes its own JSON text. */
export interface OwnJson {
  /**
   * Exactly the text JSON.stringify(value, null, gap) would give the value it stands for,
   * its inner lines shifted by `at` (the indentation of the line it starts on), in pieces:
   * strings, or UTF-8 bytes. A byte piece is copied before the next piece is asked for, so
   * the writer may fill the same buffer again.
   */
  [OWN_JSON](at: string, gap: string): Iterable<string | Uint8Array>;
}

function writesOwnJson(value: object): value is OwnJson {
  return typeof (value as Partial<OwnJson>)[OWN_JSON] === "function";
}

/** A value writing its own text, a piece per step. */
interface OwnFrame {
  readonly kind: "own";
  readonly pieces: Iterator<string | Uint8Array, unknown, undefined>;
  readonly indent: string;
}

interface ArrayFrame {
  readonly kind: "array";
  readonly array: readonly unknown[];
  index: number;
  readonly indent: string;
}

/** A primitive array longer than one block, written a block per step. */
interface BlocksFrame {
  readonly kind: "blocks";
  readonly array: readonly unknown[];
  index: number;
  readonly indent: string;
}

interface ObjectFrame {
  readonly kind: "object";
  readonly object: Record<string, unknown>;
  readonly keys: readonly string[];
  index: number;
  /** Whether a property has been written: JSON.stringify writes "{}" when every one is left out. */
  wrote: boolean;
  readonly indent: string;
}

type Frame = ArrayFrame | BlocksFrame | ObjectFrame | OwnFrame;

/** The value JSON.stringify serialises for `value` under `key`: toJSON applied, boxed primitives unwrapped. */
function prepared(value: unknown, key: string): unknown {
  if ((typeof value === "object" && value !== null) || typeof value === "function" || typeof value === "bigint") {
    const toJSON: unknown = (value as { toJSON?: unknown }).toJSON;
    if (typeof toJSON === "function") value = toJSON.call(value, key);
  }
  if (typeof value === "object" && value !== null) {
    if (value instanceof Number) return Number(value);
    if (value instanceof String) return String(value);
    if (value instanceof Boolean || value instanceof BigInt) return value.valueOf();
  }
  return value;
}

/** Text of a prepared non-container value, or undefined where JSON leaves the value out. */
function primitiveText(value: unknown): string | undefined {
  switch (typeof value) {
    case "string":
      return JSON.stringify(value);
    case "number":
      return Number.isFinite(value) ? String(value) : "null";
    case "boolean":
      return value ? "true" : "false";
    case "bigint":
      return JSON.stringify(value); // the TypeError JSON.stringify throws
    case "object":
      return "null"; // only null reaches here
    default:
      return undefined; // undefined, function, symbol
  }
}

/** Whether JSON.stringify would write every element without calling anything (no objects, functions or BigInts). */
function holdsPlainPrimitives(array: readonly unknown[]): boolean {
  for (let i = 0; i < array.length; i++) {
    const v = array[i];
    if (v !== null && (typeof v === "object" || typeof v === "function" || typeof v === "bigint")) return false;
  }
  return true;
}

/** Characters of text gathered before they are encoded into a piece (fewer, larger encodes). */
const TEXT_RUN = 4096;

/** Fills byte pieces of one size; each full piece waits in `ready` and is never written again. */
class PieceWriter {
  ready: Uint8Array[] = [];
  private piece: Buffer;
  private at = 0;

  constructor(private readonly size: number) {
    this.piece = Buffer.allocUnsafe(size);
  }

  /** Hands out the full pieces. */
  take(): Uint8Array[] {
    const ready = this.ready;
    this.ready = [];
    return ready;
  }

  text(text: string): void {
    if (text === "") return;
    const room = this.size - this.at;
    // At most three UTF-8 bytes per UTF-16 unit; measured only near the end of a piece.
    if (text.length * 3 <= room || (text.length <= room && Buffer.byteLength(text, "utf8") <= room)) {
      this.at += this.piece.write(text, this.at, "utf8");
      if (this.at === this.size) this.flush();
    } else {
      this.bytes(Buffer.from(text, "utf8"));
    }
  }

  /** Copies bytes in, across as many pieces as they need. */
  bytes(bytes: Uint8Array): void {
    for (let from = 0; from < bytes.length; ) {
      const n = Math.min(bytes.length - from, this.size - this.at);
      this.piece.set(from === 0 && n === bytes.length ? bytes : bytes.subarray(from, from + n), this.at);
      this.at += n;
      from += n;
      if (this.at === this.size) this.flush();
    }
  }

  /** Ends the current piece (if it holds anything) and starts a new one. */
  flush(): void {
    if (this.at === 0) return;
    this.ready.push(this.at === this.size ? this.piece : this.piece.subarray(0, this.at));
    this.piece = Buffer.allocUnsafe(this.size);
    this.at = 0;
  }
}

/**
 * JSON text of `value` as UTF-8 in pieces of `pieceSize` bytes (the last one shorter); joined
 * they are exactly the bytes of `JSON.stringify(value, null, indent)` — indent 0 is the
 * compact form. Yields nothing where JSON.stringify returns undefined.
 */
export function* jsonPieces(value: unknown, options: JsonPiecesOptions = {}): Generator<Uint8Array, void, undefined> {
  const { indent = 0, pieceSize = 1 << 16, blockSize: BLOCK = 2048 } = options;
  const gap = " ".repeat(Math.max(0, Math.min(10, Math.floor(indent))));
  const compact = gap === "";
  const comma = compact ? "," : ",\n";
  const colon = compact ? ":" : ": ";
  const stack: Frame[] = [];
  const open: object[] = [];

  /**
   * JSON.stringify of a primitive array whose line starts at `at`, elements one level in.
   * Indented, JSON.stringify is asked for the elements' whole indentation as its gap when that
   * fits its limit of 10; otherwise its lines are shifted (JSON text holds no raw line breaks).
   * `brackets: false` leaves out "[" and "]" and the line breaks next to them (a block).
   */
  const nativeArray = (array: readonly unknown[], at: string, brackets: boolean): string => {
    if (compact) {
      const text = JSON.stringify(array);
      return brackets ? text : text.slice(1, -1);
    }
    const deep = at + gap;
    if (deep.length <= 10) {
      const text = JSON.stringify(array, null, deep);
      return brackets ? `${text.slice(0, -1)}${at}]` : text.slice(2, -2);
    }
    const text = JSON.stringify(array, null, gap).replaceAll("\n", `\n${at}`);
    return brackets ? text : text.slice(2, -2 - at.length);
  };

  /** Text that opens a prepared value; containers that need more than that go on the stack. */
  const begin = (v: unknown, at: string): string | undefined => {
    if (typeof v !== "object" || v === null) return primitiveText(v);
    if (open.includes(v)) throw new TypeError("Converting circular structure to JSON");
    if (writesOwnJson(v)) {
      stack.push({ kind: "own", pieces: v[OWN_JSON](at, gap)[Symbol.iterator](), indent: at });
      return "";
    }
    if (Array.isArray(v)) {
      if (v.length === 0) return "[]";
      if (holdsPlainPrimitives(v)) {
        if (v.length <= BLOCK) return nativeArray(v, at, true);
        stack.push({ kind: "blocks", array: v, index: 0, indent: at });
      } else {
        stack.push({ kind: "array", array: v, index: 0, indent: at });
      }
      open.push(v);
      return compact ? "[" : "[\n";
    }
    const object = v as Record<string, unknown>;
    stack.push({ kind: "object", object, keys: Object.keys(object), index: 0, wrote: false, indent: at });
    open.push(v);
    return "";
  };

  const close = (frame: ArrayFrame | BlocksFrame | ObjectFrame): string => {
    stack.pop();
    open.pop();
    if (frame.kind === "object") return frame.wrote ? (compact ? "}" : `\n${frame.indent}}`) : "{}";
    return compact ? "]" : `\n${frame.indent}]`;
  };

  const top = begin(prepared(value, ""), "");
  if (top === undefined) return;
  const out = new PieceWriter(pieceSize);
  /** Text not yet in a piece: short texts are joined first and encoded together. */
  let buffer = top;

  while (stack.length > 0) {
    if (buffer.length >= TEXT_RUN) {
      out.text(buffer);
      buffer = "";
    }
    if (out.ready.length > 0) yield* out.take();
    const frame = stack[stack.length - 1];
    const inner = frame.indent + gap;
    switch (frame.kind) {
      case "own": {
        const next = frame.pieces.next();
        if (next.done === true) stack.pop();
        else if (typeof next.value === "string") buffer += next.value;
        else {
          out.text(buffer);
          buffer = "";
          out.bytes(next.value);
        }
        break;
      }
      case "blocks": {
        if (frame.index >= frame.array.length) {
          buffer += close(frame);
          break;
        }
        const start = frame.index;
        frame.index += BLOCK;
        buffer += (start > 0 ? comma : "") + nativeArray(frame.array.slice(start, start + BLOCK), frame.indent, false);
        break;
      }
      case "array": {
        if (frame.index >= frame.array.length) {
          buffer += close(frame);
          break;
        }
        const i = frame.index++;
        if (i > 0) buffer += comma;
        if (!compact) buffer += inner;
        buffer += begin(prepared(frame.array[i], String(i)), inner) ?? "null";
        break;
      }
      case "object": {
        if (frame.index >= frame.keys.length) {
          buffer += close(frame);
          break;
        }
        const key = frame.keys[frame.index++];
        const property = prepared(frame.object[key], key);
        if (property === undefined || typeof property === "function" || typeof property === "symbol") break;
        buffer += frame.wrote ? comma : compact ? "{" : "{\n";
        frame.wrote = true;
        buffer += `${compact ? "" : inner}${JSON.stringify(key)}${colon}${begin(property, inner) ?? ""}`;
        break;
      }
    }
  }
  out.text(buffer);
  out.flush();
  yield* out.take();
}
